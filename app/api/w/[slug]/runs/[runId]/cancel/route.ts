import { jsonError, memberRoute } from "@/lib/auth/route";
import { idParam, runsError } from "@/lib/runs/http";
import { cancelRun } from "@/lib/runs/service";

export const POST = memberRoute({ capability: "runs.manage" }, async ({ member, params }) => {
  const runId = idParam(params.runId);
  if (runId === null) return jsonError(404, `There is no run ${String(params.runId)} in this workspace.`);
  try {
    await cancelRun({ workspaceId: member.workspace.id, userId: member.user.id, actorEmail: member.user.email, runId });
    return Response.json({ runId, state: "cancelled" });
  } catch (error) {
    return runsError(error);
  }
});

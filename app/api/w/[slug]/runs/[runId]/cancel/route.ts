import { errorResponse, memberRoute } from "@/lib/http/route";
import { parseIdParam } from "@/lib/http/params";
import { cancelRun } from "@/lib/runs/service";

export const POST = memberRoute({ capability: "runs.manage" }, async ({ member, params }) => {
  const parsed = parseIdParam(params, "runId");
  if (!parsed.ok) return parsed.response;
  const runId = parsed.value;
  try {
    await cancelRun({ workspaceId: member.workspace.id, userId: member.user.id, actorEmail: member.user.email, runId });
    return Response.json({ runId, state: "cancelled" });
  } catch (error) {
    return errorResponse(error);
  }
});

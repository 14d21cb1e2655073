import { errorResponse, memberRoute } from "@/lib/http/route";
import { listRuns } from "@/lib/runs/queries";
import { startRunSchema } from "@/lib/runs/schemas";
import { startRun } from "@/lib/runs/service";
import { limitAction } from "@/lib/security/rate-limits";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member }) => {
  return Response.json({ runs: await listRuns(member.workspace.id) });
});

export const POST = memberRoute({ capability: "runs.manage", body: startRunSchema }, async ({ member, body }) => {
  // Each completed run e-mails the members subscribed to after-run digests.
  const limited = await limitAction("run-start", member.user.id);
  if (limited) return limited;
  try {
    const { panelVersionId, ...choice } = body;
    const started = await startRun({ workspaceId: member.workspace.id, userId: member.user.id, actorEmail: member.user.email, panelVersionId, choice });
    return Response.json({ runId: started.runId, number: started.number, params: started.params }, { status: 201 });
  } catch (error) {
    return errorResponse(error);
  }
});

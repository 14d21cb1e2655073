import { errorResponse, memberRoute } from "@/lib/http/route";
import { parseIdParam } from "@/lib/http/params";
import { rerun } from "@/lib/runs/service";
import { limitAction } from "@/lib/security/rate-limits";

export const POST = memberRoute({ capability: "runs.manage" }, async ({ member, params }) => {
  const parsed = parseIdParam(params, "runId");
  if (!parsed.ok) return parsed.response;
  const runId = parsed.value;
  // Counted with starts: a rerun e-mails after-run subscribers as a new run does.
  const limited = await limitAction("run-start", member.user.id);
  if (limited) return limited;
  try {
    const started = await rerun({ workspaceId: member.workspace.id, userId: member.user.id, actorEmail: member.user.email, runId });
    return Response.json({ runId: started.runId, number: started.number, rerunOf: runId }, { status: 201 });
  } catch (error) {
    return errorResponse(error);
  }
});

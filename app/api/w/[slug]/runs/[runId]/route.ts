import { jsonError, memberRoute } from "@/lib/auth/route";
import { idParam } from "@/lib/runs/http";
import { getRun, runPieces } from "@/lib/runs/queries";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, params }) => {
  const runId = idParam(params.runId);
  const run = runId === null ? null : await getRun(member.workspace.id, runId);
  if (!run) return jsonError(404, `There is no run ${String(params.runId)} in this workspace.`);
  return Response.json({ run, pieces: await runPieces(run.id) });
});

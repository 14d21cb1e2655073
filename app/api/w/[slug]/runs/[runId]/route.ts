import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { parseIdParam } from "@/lib/http/params";
import { getRun, runPieces } from "@/lib/runs/queries";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, params }) => {
  const runId = parseIdParam(params, "runId");
  if (!runId.ok) return runId.response;
  const run = await getRun(member.workspace.id, runId.value);
  if (!run) return jsonError(404, `There is no run ${runId.value} in this workspace.`);
  return Response.json({ run, pieces: await runPieces(run.id) });
});

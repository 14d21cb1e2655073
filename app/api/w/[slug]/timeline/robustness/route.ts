import { jsonError, memberRoute } from "@/lib/auth/route";
import { parseSearch, runsError } from "@/lib/runs/http";
import { robustness } from "@/lib/runs/on-demand";
import { resolveRunForIndicator } from "@/lib/runs/queries";
import { periodQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, periodQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, period } = search.value;
  try {
    const run = await resolveRunForIndicator(member.workspace.id, indicator, runId);
    if (!run) return jsonError(404, `No completed run has analysed "${indicator}" yet.`);
    return Response.json({ runId: run.id, indicator, period, transform: run.params.transform, entries: await robustness(run, indicator, period) });
  } catch (error) {
    return runsError(error);
  }
});

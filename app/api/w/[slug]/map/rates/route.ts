import { memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { withIndicatorRun } from "@/lib/runs/http";
import { mapRates } from "@/lib/runs/on-demand";
import { periodQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

// The map's rate layers (raw, global and local empirical-Bayes rates) of a rate indicator in one period of a run.
export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, periodQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, period } = search.value;
  return withIndicatorRun(member.workspace.id, indicator, runId, async (run) =>
    Response.json({ runId: run.id, indicator, rates: await mapRates(run, member.workspace.id, indicator, period) }),
  );
});

import { memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { withIndicatorRun } from "@/lib/runs/http";
import { mapPeriod } from "@/lib/runs/on-demand";
import { indicatorOf } from "@/lib/runs/queries";
import { localReachability } from "@/lib/runs/reachability";
import { periodQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, periodQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, period } = search.value;
  return withIndicatorRun(member.workspace.id, indicator, runId, async (run) => {
    const map = await mapPeriod(run, indicator, period);
    // Said beside the clusters when this period's permutations cannot reach significance under the run's correction.
    const reachability = localReachability(run.params, map.local);
    return Response.json({ run, indicator: await indicatorOf(member.workspace.id, indicator), map, reachability });
  });
});

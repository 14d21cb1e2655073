import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { withIndicatorRun } from "@/lib/runs/http";
import { comparison } from "@/lib/runs/on-demand";
import { periodsInOrder } from "@/lib/runs/period-order";
import { compareQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, compareQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, a, b } = search.value;
  if (a === b) return jsonError(400, "Choose two different periods to compare.", { field: "b" });
  return withIndicatorRun(member.workspace.id, indicator, runId, async (run) => {
    // The answer reads earlier → later whatever order the query gave.
    const [earlier, later] = periodsInOrder(run.params.periods, a, b);
    return Response.json({ runId: run.id, comparison: await comparison(run, indicator, earlier, later) });
  });
});

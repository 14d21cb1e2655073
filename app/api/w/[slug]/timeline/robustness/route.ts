import { memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { withIndicatorRun } from "@/lib/runs/http";
import { robustness } from "@/lib/runs/on-demand";
import { periodQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, periodQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, period } = search.value;
  return withIndicatorRun(member.workspace.id, indicator, runId, async (run) =>
    Response.json({ runId: run.id, indicator, period, transform: run.params.transform, entries: await robustness(run, indicator, period) }),
  );
});

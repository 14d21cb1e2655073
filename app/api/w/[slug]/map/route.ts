import { jsonError, memberRoute } from "@/lib/auth/route";
import { parseSearch, runsError } from "@/lib/runs/http";
import { mapPeriod } from "@/lib/runs/on-demand";
import { indicatorOf, resolveRunForIndicator } from "@/lib/runs/queries";
import { periodQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, periodQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, period } = search.value;
  try {
    const run = await resolveRunForIndicator(member.workspace.id, indicator, runId);
    if (!run) return jsonError(404, `No completed run has analysed "${indicator}" yet.`);
    return Response.json({ run, indicator: await indicatorOf(member.workspace.id, indicator), map: await mapPeriod(run, indicator, period) });
  } catch (error) {
    return runsError(error);
  }
});

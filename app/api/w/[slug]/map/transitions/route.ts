import { memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { withIndicatorRun } from "@/lib/runs/http";
import { loadPanelTransitions } from "@/lib/runs/on-demand";
import { panelTransitionsQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, panelTransitionsQuerySchema);
  if (!search.ok) return search.response;
  const { indicator, run: runId, classes } = search.value;
  return withIndicatorRun(member.workspace.id, indicator, runId, async (run) =>
    Response.json({ runId: run.id, transitions: await loadPanelTransitions(run, indicator, classes) }),
  );
});

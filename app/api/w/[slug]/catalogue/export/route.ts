import { errorResponse, memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { toCsv } from "@/lib/runs/csv";
import { catalogueRows } from "@/lib/runs/queries";
import { catalogueQuerySchema } from "@/lib/runs/schemas";
import { MODEL_SUGGESTION_LABELS, SIGNIFICANCE_LABELS } from "@/lib/runs/types";

export const dynamic = "force-dynamic";

// Export is an economist's capability (the roles table in docs/guarantees.md); subscribers only view.
export const GET = memberRoute({ capability: "runs.manage" }, async ({ member, request }) => {
  const search = parseSearch(request, catalogueQuerySchema);
  if (!search.ok) return search.response;
  const f = search.value;
  try {
    const rows = await catalogueRows(member.workspace.id, { runId: f.run, classes: f.class, suggestions: f.suggestion, periodFrom: f.from, periodTo: f.to, text: f.q });
    const csv = toCsv(
      ["run", "indicator", "indicator_label", "period", "n", "moran_i", "expected_i", "z_randomisation", "p_randomisation", "pseudo_p", "adjusted_p", "significance", "delta_i", "geary_c", "general_g", "residual_moran_i", "residual_p", "suggested_model", "note"],
      rows.map((r) => [
        r.runId,
        r.indicator,
        r.indicatorLabel,
        r.period,
        r.n,
        r.I,
        r.expectedI,
        r.z,
        r.p,
        r.pseudoP,
        r.adjustedP,
        r.significance ? SIGNIFICANCE_LABELS[r.significance] : null,
        r.deltaI,
        r.gearyC,
        r.generalG,
        r.residualI,
        r.residualP,
        r.modelSuggestion ? MODEL_SUGGESTION_LABELS[r.modelSuggestion] : null,
        r.note,
      ]),
    );
    const name = `tessera-${member.workspace.slug}-catalogue${f.run !== null ? `-run-${f.run}` : ""}.csv`;
    return new Response(csv, { headers: { "content-type": "text/csv; charset=utf-8", "content-disposition": `attachment; filename="${name}"` } });
  } catch (error) {
    return errorResponse(error);
  }
});

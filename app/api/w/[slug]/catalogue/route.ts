import { errorResponse, memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { catalogueText } from "@/lib/runs/queries";
import { catalogueQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, catalogueQuerySchema);
  if (!search.ok) return search.response;
  const f = search.value;
  try {
    // JSON text assembled from PostgreSQL's own tuple text (lib/runs/catalogue-wire), never parsed here.
    const text = await catalogueText(member.workspace.id, { runId: f.run, classes: f.class, suggestions: f.suggestion, periodFrom: f.from, periodTo: f.to, text: f.q });
    return new Response(text, { headers: { "content-type": "application/json" } });
  } catch (error) {
    return errorResponse(error);
  }
});

import { jsonError } from "@/lib/http/errors";
import { errorResponse, memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
import { mapGeometry } from "@/lib/runs/on-demand";
import { getRun } from "@/lib/runs/queries";
import { geometryQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, geometryQuerySchema);
  if (!search.ok) return search.response;
  try {
    const run = await getRun(member.workspace.id, search.value.run);
    if (!run) return jsonError(404, `There is no run ${search.value.run} in this workspace.`);
    // Not cached by the browser, though boundary versions never change: like every signed-in answer it is no-store (memberRoute).
    return Response.json(await mapGeometry(run));
  } catch (error) {
    return errorResponse(error);
  }
});

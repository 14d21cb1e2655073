import { jsonError, memberRoute } from "@/lib/auth/route";
import { parseSearch, runsError } from "@/lib/runs/http";
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
    // Boundary versions never change, so the browser may keep this for a day.
    return Response.json(await mapGeometry(run), { headers: { "cache-control": "private, max-age=86400" } });
  } catch (error) {
    return runsError(error);
  }
});

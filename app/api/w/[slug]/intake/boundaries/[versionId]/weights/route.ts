import { can } from "@/lib/auth/roles";
import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { parseIdParam, parseSearch } from "@/lib/http/params";
import { boundaryVersionInWorkspace } from "@/lib/geometry/boundary-topology";
import { boundaryWeightsPreview, weightsPreviewQuerySchema } from "@/lib/geometry/weights-preview";

// Neighbours under a weights rule: centroids, links, neighbour-count histogram, islands.
export const GET = memberRoute({ capability: "results.view" }, async ({ member, params, request }) => {
  const parsed = parseIdParam(params, "versionId");
  if (!parsed.ok) return parsed.response;
  const versionId = parsed.value;
  if (!(await boundaryVersionInWorkspace(member.workspace.id, versionId, !can(member.role, "data.view-unpublished")))) return jsonError(404, "There are no such boundaries in this workspace.");
  const query = parseSearch(request, weightsPreviewQuerySchema);
  if (!query.ok) return query.response;
  // A rule the engine refuses for these boundaries is a 422 naming `rule` (InputError).
  return Response.json(await boundaryWeightsPreview(versionId, query.value.rule));
});

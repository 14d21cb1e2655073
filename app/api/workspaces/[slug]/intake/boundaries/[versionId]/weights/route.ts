import { can } from "@/lib/auth/roles";
import { invalidBody, jsonError, memberRoute } from "@/lib/auth/route";
import { parseIdParam } from "@/lib/http/params";
import { boundaryVersionInWorkspace } from "@/lib/geometry/boundary-topology";
import { boundaryWeightsPreview, weightsPreviewQuerySchema } from "@/lib/geometry/weights-preview";

// Neighbours under a weights rule: centroids, links, neighbour-count histogram, islands.
export const GET = memberRoute({ capability: "results.view" }, async ({ member, params, request }) => {
  const parsed = parseIdParam(params, "versionId");
  if (!parsed.ok) return parsed.response;
  const versionId = parsed.value;
  if (!(await boundaryVersionInWorkspace(member.workspace.id, versionId, !can(member.role, "data.view-unpublished")))) return jsonError(404, "There are no such boundaries in this workspace.");
  const query = weightsPreviewQuerySchema.safeParse(Object.fromEntries(new URL(request.url).searchParams));
  if (!query.success) return invalidBody(query.error);
  try {
    return Response.json(await boundaryWeightsPreview(versionId, query.data.rule));
  } catch (err) {
    // The engine names the problem (k too large for the number of regions, …).
    return jsonError(422, err instanceof Error ? err.message : String(err), { field: "rule" });
  }
});

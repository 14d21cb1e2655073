import { can } from "@/lib/auth/roles";
import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { parseIdParam } from "@/lib/http/params";
import { boundaryVersionInWorkspace, loadBoundaryTopology } from "@/lib/geometry/boundary-topology";

// The stored TopoJSON of a validated boundary version, with the object and properties that hold the regions.
export const GET = memberRoute({ capability: "results.view" }, async ({ member, params }) => {
  const parsed = parseIdParam(params, "versionId");
  if (!parsed.ok) return parsed.response;
  const versionId = parsed.value;
  if (!(await boundaryVersionInWorkspace(member.workspace.id, versionId, !can(member.role, "data.view-unpublished")))) return jsonError(404, "There are no such boundaries in this workspace.");
  const b = await loadBoundaryTopology(versionId);
  if (b.state === "uploaded" || b.state === "rejected") return jsonError(409, "These boundaries have not passed validation, so there is nothing to draw.");
  return Response.json({
    topology: b.topology,
    objectName: b.objectName,
    idProperty: b.idProperty,
    nameProperty: b.nameProperty,
    coordinates: b.coordinates,
    regionNames: Object.fromEntries(b.regionNames),
  });
});

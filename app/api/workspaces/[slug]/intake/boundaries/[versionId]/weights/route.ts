import { z } from "zod";
import { can } from "@/lib/auth/roles";
import { invalidBody, jsonError, memberRoute } from "@/lib/auth/route";
import { idParam } from "@/lib/intake/actions";
import { PREVIEW_RULES, boundaryVersionInWorkspace, boundaryWeightsPreview } from "@/lib/intake/queries";

const querySchema = z.object({
  rule: z.string().regex(PREVIEW_RULES, "use queen, rook, knn:K (K from 1 to 99), band or band:D").default("queen"),
});

// Neighbours under a weights rule: centroids, links, neighbour-count histogram, islands.
export const GET = memberRoute({ capability: "results.view" }, async ({ member, params, request }) => {
  const versionId = idParam(params.versionId);
  const visible = versionId !== null && (await boundaryVersionInWorkspace(member.workspace.id, versionId, !can(member.role, "data.view-unpublished")));
  if (!visible || versionId === null) return jsonError(404, "There are no such boundaries in this workspace.");
  const query = querySchema.safeParse(Object.fromEntries(new URL(request.url).searchParams));
  if (!query.success) return invalidBody(query.error);
  try {
    return Response.json(await boundaryWeightsPreview(versionId, query.data.rule));
  } catch (err) {
    // The engine names the problem (k too large for the number of regions, …).
    return jsonError(422, err instanceof Error ? err.message : String(err), { field: "rule" });
  }
});

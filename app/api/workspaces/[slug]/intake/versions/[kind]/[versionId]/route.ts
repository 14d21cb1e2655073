import { can } from "@/lib/auth/roles";
import { jsonError, memberRoute } from "@/lib/auth/route";
import { idParam, versionKindSchema } from "@/lib/intake/actions";
import { versionDetail } from "@/lib/intake/queries";

// One version with its validation report and diff. An unpublished version does not exist for economists and subscribers (404).
export const GET = memberRoute({ capability: "results.view" }, async ({ member, params }) => {
  const kind = versionKindSchema.safeParse(params.kind);
  const versionId = idParam(params.versionId);
  if (!kind.success || versionId === null) return jsonError(404, "There is no such version in this workspace.");
  const detail = await versionDetail(member.workspace.id, kind.data, versionId, can(member.role, "data.view-unpublished"));
  if (!detail) return jsonError(404, "There is no such version in this workspace.");
  return Response.json(detail);
});

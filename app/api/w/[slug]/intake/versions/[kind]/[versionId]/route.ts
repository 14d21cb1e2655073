import { can } from "@/lib/auth/roles";
import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { parseParams } from "@/lib/http/params";
import { versionParamsSchema } from "@/lib/intake/service";
import { versionDetail } from "@/lib/intake/queries";

// One version with its validation report and diff. An unpublished version does not exist for economists and subscribers (404).
export const GET = memberRoute({ capability: "results.view" }, async ({ member, params }) => {
  const version = parseParams(params, versionParamsSchema);
  if (!version.ok) return version.response;
  const { kind, versionId } = version.value;
  const detail = await versionDetail(member.workspace.id, kind, versionId, can(member.role, "data.view-unpublished"));
  if (!detail) return jsonError(404, "There is no such version in this workspace.");
  return Response.json(detail);
});

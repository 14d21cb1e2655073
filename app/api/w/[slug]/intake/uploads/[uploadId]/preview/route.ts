import { memberRoute } from "@/lib/http/route";
import { parseParams } from "@/lib/http/params";
import { previewBoundaryUpload, previewPanelUpload, uploadParamsSchema } from "@/lib/intake/service";
import { models } from "@/lib/models";

// What the mapping step needs: a panel's header, delimiter and suggested (or remembered) mapping, or a boundary file's objects and id candidates.
export const GET = memberRoute({ capability: "data.curate" }, async ({ member, params }) => {
  const { Upload } = models();
  const parsed = parseParams(params, uploadParamsSchema);
  if (!parsed.ok) return parsed.response;
  const id = parsed.value.uploadId;
  const upload = await Upload.findOne({ where: { id, workspaceId: member.workspace.id }, attributes: ["kind"] });
  if (!upload) return Response.json({ error: "There is no such upload in this workspace." }, { status: 404 });
  const preview = upload.kind === "panel" ? await previewPanelUpload(member, id) : await previewBoundaryUpload(member, id);
  return Response.json({ kind: upload.kind, preview });
});

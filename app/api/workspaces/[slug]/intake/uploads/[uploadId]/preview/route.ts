import { memberRoute } from "@/lib/auth/route";
import { previewBoundaryUpload, previewPanelUpload, withIntakeErrors } from "@/lib/intake/actions";
import { models } from "@/models";

// What the mapping step needs: a panel's header, delimiter and suggested (or remembered) mapping, or a boundary file's objects and id candidates.
export const GET = memberRoute({ capability: "data.curate" }, async ({ member, params }) =>
  withIntakeErrors(async () => {
    const { Upload } = models();
    const id = String(params.uploadId);
    const upload = /^[0-9a-f-]{36}$/i.test(id) ? await Upload.findOne({ where: { id, workspaceId: member.workspace.id }, attributes: ["kind"] }) : null;
    if (!upload) return Response.json({ error: "There is no such upload in this workspace." }, { status: 404 });
    const preview = upload.kind === "panel" ? await previewPanelUpload(member, id) : await previewBoundaryUpload(member, id);
    return Response.json({ kind: upload.kind, preview });
  }),
);

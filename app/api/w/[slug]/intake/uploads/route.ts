import { memberRoute } from "@/lib/http/route";
import { createUpload, createUploadSchema } from "@/lib/intake/service";

// Step 1 of an upload: a pending record and a presigned PUT URL (files over 200 MB are refused here, before any byte moves).
export const POST = memberRoute({ capability: "data.curate", body: createUploadSchema }, async ({ member, body }) =>
  Response.json(await createUpload(member, body), { status: 201 }),
);

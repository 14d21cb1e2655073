import { memberRoute } from "@/lib/http/route";
import { parseParams } from "@/lib/http/params";
import { completeUpload, uploadParamsSchema } from "@/lib/intake/service";

// Step 2, after the browser's PUT: size and SHA-256 of the stored object are checked; a mismatch fails the upload.
export const POST = memberRoute({ capability: "data.curate" }, async ({ member, params }) => {
  const parsed = parseParams(params, uploadParamsSchema);
  if (!parsed.ok) return parsed.response;
  const upload = await completeUpload(member, parsed.value.uploadId);
  return Response.json(upload, { status: upload.state === "received" ? 200 : 422 });
});

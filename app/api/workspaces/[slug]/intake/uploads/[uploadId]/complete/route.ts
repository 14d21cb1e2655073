import { memberRoute } from "@/lib/auth/route";
import { completeUpload, withIntakeErrors } from "@/lib/intake/actions";

// Step 2, after the browser's PUT: size and SHA-256 of the stored object are checked; a mismatch fails the upload.
export const POST = memberRoute({ capability: "data.curate" }, async ({ member, params }) =>
  withIntakeErrors(async () => {
    const upload = await completeUpload(member, String(params.uploadId));
    return Response.json(upload, { status: upload.state === "received" ? 200 : 422 });
  }),
);

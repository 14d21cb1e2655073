import { memberRoute } from "@/lib/http/route";
import { createPanelVersion, createPanelVersionSchema } from "@/lib/intake/service";

// A new panel version from a received upload with its column mapping; validation and ingest run as a job.
export const POST = memberRoute({ capability: "data.curate", body: createPanelVersionSchema }, async ({ member, body }) =>
  Response.json(await createPanelVersion(member, body), { status: 202 }),
);

import { memberRoute } from "@/lib/auth/route";
import { createPanelVersion, createPanelVersionSchema, withIntakeErrors } from "@/lib/intake/service";

// A new panel version from a received upload with its column mapping; validation and ingest run as a job.
export const POST = memberRoute({ capability: "data.curate", body: createPanelVersionSchema }, async ({ member, body }) =>
  withIntakeErrors(async () => Response.json(await createPanelVersion(member, body), { status: 202 })),
);

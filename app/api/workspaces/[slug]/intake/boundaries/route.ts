import { memberRoute } from "@/lib/auth/route";
import { createBoundaryVersion, createBoundaryVersionSchema, withIntakeErrors } from "@/lib/intake/service";

// A new boundary version from a received upload; validation runs as a job (poll the version).
export const POST = memberRoute({ capability: "data.curate", body: createBoundaryVersionSchema }, async ({ member, body }) =>
  withIntakeErrors(async () => Response.json(await createBoundaryVersion(member, body), { status: 202 })),
);

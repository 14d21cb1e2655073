import { memberRoute } from "@/lib/http/route";
import { createBoundaryVersion, createBoundaryVersionSchema } from "@/lib/intake/service";

// A new boundary version from a received upload; validation runs as a job (poll the version).
export const POST = memberRoute({ capability: "data.curate", body: createBoundaryVersionSchema }, async ({ member, body }) =>
  Response.json(await createBoundaryVersion(member, body), { status: 202 }),
);

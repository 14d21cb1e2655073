import { memberRoute } from "@/lib/http/route";
import { harmonisePanel, harmoniseSchema } from "@/lib/reforms/service";

// Harmonises a panel version through a crosswalk into a new panel version on the target boundaries; validation runs as a job.
export const POST = memberRoute({ capability: "data.curate", body: harmoniseSchema }, async ({ member, body }) =>
  Response.json(await harmonisePanel(member, body), { status: 202 }),
);

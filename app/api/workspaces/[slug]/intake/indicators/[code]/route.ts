import { memberRoute } from "@/lib/auth/route";
import { indicatorPatchSchema, saveIndicator, withIntakeErrors } from "@/lib/intake/actions";

// Indicator metadata (label, unit, description, source, direction) is curated by stewards.
export const PUT = memberRoute({ capability: "data.curate", body: indicatorPatchSchema }, async ({ member, body, params }) =>
  withIntakeErrors(async () => Response.json(await saveIndicator(member, String(params.code), body))),
);

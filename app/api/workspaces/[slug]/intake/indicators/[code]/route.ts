import { memberRoute } from "@/lib/auth/route";
import { parseParams } from "@/lib/http/params";
import { indicatorParamsSchema, indicatorPatchSchema, saveIndicator, withIntakeErrors } from "@/lib/intake/service";

// Indicator metadata (label, unit, description, source, direction) is curated by stewards.
export const PUT = memberRoute({ capability: "data.curate", body: indicatorPatchSchema }, async ({ member, body, params }) =>
  withIntakeErrors(async () => {
    const parsed = parseParams(params, indicatorParamsSchema);
    if (!parsed.ok) return parsed.response;
    return Response.json(await saveIndicator(member, parsed.value.code, body));
  }),
);

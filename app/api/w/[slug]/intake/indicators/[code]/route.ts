import { memberRoute } from "@/lib/http/route";
import { parseParams } from "@/lib/http/params";
import { indicatorParamsSchema, indicatorPatchSchema, saveIndicator } from "@/lib/intake/service";

// Indicator metadata (label, unit, description, source, direction) is curated by stewards.
export const PUT = memberRoute({ capability: "data.curate", body: indicatorPatchSchema }, async ({ member, body, params }) => {
  const parsed = parseParams(params, indicatorParamsSchema);
  if (!parsed.ok) return parsed.response;
  return Response.json(await saveIndicator(member, parsed.value.code, body));
});

import { memberRoute } from "@/lib/http/route";
import { harmoniseDefaults, harmoniseDefaultsQuerySchema } from "@/lib/reforms/service";
import { parseSearch } from "@/lib/http/params";

// The indicators of a panel version with their default harmonisation methods (the harmonise form's start).
export const GET = memberRoute({ capability: "data.view-unpublished" }, async ({ member, request }) => {
  const query = parseSearch(request, harmoniseDefaultsQuerySchema);
  if (!query.ok) return query.response;
  return Response.json(await harmoniseDefaults(member, query.value.panelVersionId));
});

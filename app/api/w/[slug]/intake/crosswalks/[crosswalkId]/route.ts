import { memberRoute } from "@/lib/http/route";
import { parseIdParam } from "@/lib/http/params";
import { getCrosswalk } from "@/lib/reforms/service";

// One crosswalk with its report, its pairs and the panel versions harmonised through it.
export const GET = memberRoute({ capability: "data.view-unpublished" }, async ({ member, params }) => {
  const parsed = parseIdParam(params, "crosswalkId");
  if (!parsed.ok) return parsed.response;
  return Response.json(await getCrosswalk(member, parsed.value));
});

import { memberRoute } from "@/lib/http/route";
import { harmoniseDefaults } from "@/lib/reforms/service";
import { idText, parseSearch } from "@/lib/http/params";
import { z } from "zod";

const defaultsQuery = z.object({ panelVersionId: idText() });

// The indicators of a panel version with their default harmonisation methods (the harmonise form's start).
export const GET = memberRoute({ capability: "data.view-unpublished" }, async ({ member, request }) => {
  const query = parseSearch(request, defaultsQuery);
  if (!query.ok) return query.response;
  return Response.json(await harmoniseDefaults(member, query.value.panelVersionId));
});

import { jsonError, memberRoute } from "@/lib/auth/route";
import { parseSearch, runsError } from "@/lib/runs/http";
import { timeline } from "@/lib/runs/queries";
import { timelineQuerySchema } from "@/lib/runs/schemas";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member, request }) => {
  const search = parseSearch(request, timelineQuerySchema);
  if (!search.ok) return search.response;
  try {
    const result = await timeline(member.workspace.id, search.value.indicator, search.value.run);
    if (!result) return jsonError(404, `No completed run has analysed "${search.value.indicator}" yet.`);
    return Response.json(result);
  } catch (error) {
    return runsError(error);
  }
});

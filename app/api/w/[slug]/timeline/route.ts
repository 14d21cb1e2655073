import { jsonError } from "@/lib/http/errors";
import { errorResponse, memberRoute } from "@/lib/http/route";
import { parseSearch } from "@/lib/http/params";
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
    return errorResponse(error);
  }
});

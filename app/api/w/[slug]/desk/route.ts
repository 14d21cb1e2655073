import { memberRoute } from "@/lib/http/route";
import { deskSummary } from "@/lib/runs/queries";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "results.view" }, async ({ member }) => {
  return Response.json(await deskSummary(member.workspace.id));
});

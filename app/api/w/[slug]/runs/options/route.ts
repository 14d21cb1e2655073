import { memberRoute } from "@/lib/http/route";
import { runOptions } from "@/lib/runs/queries";

export const dynamic = "force-dynamic";

export const GET = memberRoute({ capability: "runs.manage" }, async ({ member }) => {
  return Response.json({ options: await runOptions(member.workspace.id) });
});

import { memberRoute } from "@/lib/http/route";
import { workspaceSubscribers } from "@/lib/digests/queries";

/** Managers: who subscribes to what in this workspace. */
export const GET = memberRoute({ capability: "team.manage" }, async ({ member }) => {
  return Response.json({ subscribers: await workspaceSubscribers(member.workspace.id) });
});

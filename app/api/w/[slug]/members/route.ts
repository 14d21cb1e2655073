import { memberRoute } from "@/lib/http/route";
import { listMembers } from "@/lib/team/members";

export const GET = memberRoute({ capability: "team.manage" }, async ({ member }) =>
  Response.json({ members: await listMembers(member.workspace.id) }),
);

import { memberRoute } from "@/lib/http/route";
import { listAudit } from "@/lib/team/audit";

export const GET = memberRoute({ capability: "team.manage" }, async ({ member }) =>
  Response.json({ events: await listAudit(member.workspace.id) }),
);

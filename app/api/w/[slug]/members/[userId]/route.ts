import { memberRoute } from "@/lib/http/route";
import { changeRoleSchema } from "@/lib/team/schemas";
import { parseIdParam } from "@/lib/http/params";
import { changeRole, removeMember } from "@/lib/team/members";

export const PATCH = memberRoute({ capability: "team.manage", body: changeRoleSchema }, async ({ member, body, params }) => {
  const userId = parseIdParam(params, "userId");
  if (!userId.ok) return userId.response;
  return Response.json({ members: await changeRole(member, userId.value, body.role) });
});

export const DELETE = memberRoute({ capability: "team.manage" }, async ({ member, params }) => {
  const userId = parseIdParam(params, "userId");
  if (!userId.ok) return userId.response;
  return Response.json({ members: await removeMember(member, userId.value) });
});

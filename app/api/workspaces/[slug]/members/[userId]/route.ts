import { memberRoute, jsonError } from "@/lib/auth/route";
import { changeRoleSchema, idParamSchema } from "@/lib/auth/schemas";
import { changeRole, removeMember } from "@/lib/auth/team";

export const PATCH = memberRoute({ capability: "team.manage", body: changeRoleSchema }, async ({ member, body, params }) => {
  const userId = idParamSchema.safeParse(params.userId);
  if (!userId.success) return jsonError(404, "That person is not a member of this workspace.");
  return Response.json({ members: await changeRole(member, userId.data, body.role) });
});

export const DELETE = memberRoute({ capability: "team.manage" }, async ({ member, params }) => {
  const userId = idParamSchema.safeParse(params.userId);
  if (!userId.success) return jsonError(404, "That person is not a member of this workspace.");
  return Response.json({ members: await removeMember(member, userId.data) });
});

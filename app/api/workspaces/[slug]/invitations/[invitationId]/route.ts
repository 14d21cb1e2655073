import { memberRoute, jsonError } from "@/lib/auth/route";
import { idParamSchema } from "@/lib/auth/schemas";
import { revokeInvitation } from "@/lib/auth/team";

export const DELETE = memberRoute({ capability: "team.manage" }, async ({ member, params }) => {
  const id = idParamSchema.safeParse(params.invitationId);
  if (!id.success) return jsonError(404, "That invitation is not pending in this workspace.");
  await revokeInvitation(member, id.data);
  return new Response(null, { status: 204 });
});

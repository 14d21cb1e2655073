import { memberRoute } from "@/lib/http/route";
import { parseIdParam } from "@/lib/http/params";
import { revokeInvitation } from "@/lib/team/invitations";

export const DELETE = memberRoute({ capability: "team.manage" }, async ({ member, params }) => {
  const id = parseIdParam(params, "invitationId");
  if (!id.ok) return id.response;
  await revokeInvitation(member, id.value);
  return new Response(null, { status: 204 });
});

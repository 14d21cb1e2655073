import { memberRoute } from "@/lib/http/route";
import { inviteSchema } from "@/lib/team/schemas";
import { createInvitation, listPendingInvitations } from "@/lib/team/invitations";
import { limitAction } from "@/lib/security/rate-limits";

export const GET = memberRoute({ capability: "team.manage" }, async ({ member }) =>
  Response.json({ invitations: await listPendingInvitations(member.workspace.id) }),
);

export const POST = memberRoute({ capability: "team.manage", body: inviteSchema }, async ({ member, body }) => {
  // Counted before the invitation is stored or its e-mail queued (re-sending is inviting again).
  const limited = await limitAction("invitation", member.user.id);
  if (limited) return limited;
  // The token goes only into the e-mail; the response carries the row without it.
  const { invitation } = await createInvitation(member, body.email, body.role);
  return Response.json({ invitation }, { status: 201 });
});

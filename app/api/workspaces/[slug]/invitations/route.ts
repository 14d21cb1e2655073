import { memberRoute } from "@/lib/auth/route";
import { inviteSchema } from "@/lib/auth/schemas";
import { createInvitation, listPendingInvitations } from "@/lib/auth/team";

export const GET = memberRoute({ capability: "team.manage" }, async ({ member }) =>
  Response.json({ invitations: await listPendingInvitations(member.workspace.id) }),
);

export const POST = memberRoute({ capability: "team.manage", body: inviteSchema }, async ({ member, body }) => {
  // The token goes only into the e-mail; the response carries the row without it.
  const { invitation } = await createInvitation(member, body.email, body.role);
  return Response.json({ invitation }, { status: 201 });
});

import type { Metadata } from "next";
import { AcceptInvitation } from "@/components/auth/accept-invitation";
import { SignInForm } from "@/components/auth/sign-in-form";
import { SignOutButton } from "@/components/shell/sign-out-button";
import { getSessionUser } from "@/lib/auth/session";
import { ROLE_LABELS, ROLE_SUMMARIES } from "@/lib/auth/roles";
import { INVITATION_MESSAGES, viewInvitation } from "@/lib/team/invitations";

export const metadata: Metadata = { title: "Invitation" };
export const dynamic = "force-dynamic";

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const invitation = await viewInvitation(token);

  if (invitation.state !== "pending" || !invitation.role || !invitation.email) {
    const message = INVITATION_MESSAGES[invitation.state === "pending" ? "unknown" : invitation.state];
    return (
      <div role="alert" data-testid="invitation-problem">
        <p className="text-xs font-semibold uppercase tracking-wider text-ochre-700">Invitation</p>
        <h1 className="mt-1 text-2xl font-semibold text-ink">This link cannot be used</h1>
        <p className="mt-3 text-sm text-ink-600">{message}</p>
      </div>
    );
  }

  const session = await getSessionUser();
  const signedInAsInvitee = session?.email?.toLowerCase() === invitation.email;
  return (
    <div>
      <p className="text-xs font-semibold uppercase tracking-wider text-ochre-700">Invitation</p>
      <h1 className="mt-1 text-2xl font-semibold text-ink" data-testid="invitation-workspace">
        {invitation.workspaceName}
      </h1>
      <div className="mt-4 rounded-lg border border-ink-100 bg-white p-4 text-sm">
        <p className="text-ink-600">
          For <span className="font-medium text-ink">{invitation.email}</span>, as{" "}
          <span className="font-semibold text-ink" data-testid="invitation-role">
            {ROLE_LABELS[invitation.role]}
          </span>
        </p>
        <p className="mt-1 text-ink-400">{ROLE_SUMMARIES[invitation.role]}</p>
      </div>

      {signedInAsInvitee ? (
        <AcceptInvitation token={token} email={invitation.email} mode="accept" />
      ) : session ? (
        // Signed in as someone else: never offer to join or to create the invitee's account from this session.
        <div className="mt-6 space-y-4 text-sm text-ink-600">
          <p role="alert">
            This invitation is for {invitation.email}, but you are signed in as {session.email}. Sign out, then open the link
            again.
          </p>
          <div className="inline-block rounded-md bg-ink p-2">
            <SignOutButton />
          </div>
        </div>
      ) : !invitation.accountExists ? (
        <AcceptInvitation token={token} email={invitation.email} mode="create" />
      ) : (
        <div className="mt-6">
          <p className="text-sm text-ink-600">You already have a Tessera account. Sign in to accept.</p>
          <SignInForm callbackUrl={`/invite/${token}`} email={invitation.email} />
        </div>
      )}
    </div>
  );
}

import type { Metadata } from "next";
import { AuditTrail } from "@/components/team/audit-trail";
import { InvitationsPanel } from "@/components/team/invitations-panel";
import { MembersTable } from "@/components/team/members-table";
import { TeamTokensPanel } from "@/components/team/team-tokens-panel";
import { PageHeader } from "@/components/ui/page-header";
import { guardPage } from "@/lib/auth/page";
import { getTeam } from "@/lib/team/queries";

export const metadata: Metadata = { title: "Team" };

export default async function TeamPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const team = await guardPage(`/w/${slug}/team`, () => getTeam(slug));
  const { workspace, me, members, invitations, auditTrail, apiTokens } = team;
  return (
    <div>
      <PageHeader title="Team" eyebrow={workspace.name}>
        Who belongs to this workspace and what each person may do. A workspace always keeps at least one manager.
      </PageHeader>
      <div className="grid gap-6 lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <MembersTable slug={workspace.slug} meId={me.id} initial={members} />
        <InvitationsPanel slug={workspace.slug} initial={invitations} />
      </div>
      <div className="mt-6">
        <TeamTokensPanel slug={workspace.slug} initial={apiTokens} />
      </div>
      <div className="mt-6">
        <AuditTrail slug={workspace.slug} initial={auditTrail} />
      </div>
    </div>
  );
}

import type { Metadata } from "next";
import Link from "next/link";
import { DeskPanel } from "@/components/runs/desk-panel";
import { Cautions } from "@/components/ui/cautions";
import { PageHeader } from "@/components/ui/page-header";
import { guardPage } from "@/lib/auth/page";
import { getDesk } from "@/lib/team/queries";
import { ROLE_LABELS, ROLE_SUMMARIES, can } from "@/lib/auth/roles";

export const metadata: Metadata = { title: "Desk" };

export default async function DeskPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const desk = await guardPage(`/w/${slug}/desk`, () => getDesk(slug));
  const { workspace, role, user, memberCount } = desk;
  const firstName = user.name.split(" ")[0] || user.name;

  return (
    <div>
      <PageHeader title={workspace.name} eyebrow="Desk">
        Welcome, {firstName}. This is your team&apos;s home in Tessera: the latest movements in spatial clustering of your
        regional indicators.
      </PageHeader>

      <div className="grid gap-8 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <div className="space-y-8">
          <dl className="grid gap-4 sm:grid-cols-3">
            <div className="rounded-lg border border-ink-100 bg-white p-5 shadow-sm">
              <dt className="text-xs font-semibold uppercase tracking-wider text-ink-400">Your role</dt>
              <dd className="mt-2 text-lg font-semibold text-ink" data-testid="desk-role">
                {ROLE_LABELS[role]}
              </dd>
              <dd className="mt-1 text-sm text-ink-500">{ROLE_SUMMARIES[role]}</dd>
            </div>
            <div className="rounded-lg border border-ink-100 bg-white p-5 shadow-sm">
              <dt className="text-xs font-semibold uppercase tracking-wider text-ink-400">Members</dt>
              <dd className="mt-2 text-3xl font-semibold tabular-nums text-ink" data-testid="desk-members">
                {memberCount}
              </dd>
              <dd className="mt-1 text-sm text-ink-500">
                {can(role, "team.manage") ? (
                  <Link href={`/w/${workspace.slug}/team`} className="font-medium text-ochre-700 hover:underline">
                    Manage the team
                  </Link>
                ) : (
                  "people in this workspace"
                )}
              </dd>
            </div>
            <div className="rounded-lg border border-ink-100 bg-white p-5 shadow-sm">
              <dt className="text-xs font-semibold uppercase tracking-wider text-ink-400">Workspace</dt>
              <dd className="mt-2 font-mono text-sm text-ink">/w/{workspace.slug}</dd>
              <dd className="mt-1 text-sm text-ink-500">Share links to screens with colleagues in this workspace.</dd>
            </div>
          </dl>

          <DeskPanel slug={workspace.slug} />

          <section className="rounded-lg border border-ink-100 bg-white p-6 shadow-sm">
            <h2 className="text-base font-semibold text-ink">What Tessera does</h2>
            <div className="mt-3 space-y-3 text-sm leading-relaxed text-ink-600">
              <p>
                Tessera keeps your team&apos;s regional indicator panels and boundaries in one curated, versioned place.
                For every indicator and period it measures how strongly values cluster in space — global Moran&apos;s I
                with analytical and permutation inference, and local clusters that name the regions — and follows how that
                clustering strengthens or fades over the years.
              </p>
              <p>
                Stewards upload and publish the data, economists run and compare analyses, managers decide who may do what,
                and subscribers receive e-mail digests when something significant moves.
              </p>
            </div>
          </section>

        </div>

        <Cautions className="h-fit" />
      </div>
    </div>
  );
}

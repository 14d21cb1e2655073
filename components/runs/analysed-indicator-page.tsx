import type { ComponentType, ReactNode } from "react";
import { Suspense } from "react";
import { Cautions } from "@/components/ui/cautions";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { analysedIndicators } from "@/lib/runs/queries";

type IndicatorScreen = ComponentType<{ slug: string; indicators: { code: string; label: string }[] }>;

/**
 * The shell of the per-indicator analysis pages (timeline, region map,
 * comparison): guard, the indicators that have results, the header, an empty
 * state, and the screen beside the cautions.
 */
export async function AnalysedIndicatorPage({
  slug,
  segment,
  title,
  intro,
  Screen,
}: {
  slug: string;
  segment: string;
  title: string;
  intro: ReactNode;
  Screen: IndicatorScreen;
}) {
  const access = await guardPage(`/w/${slug}/${segment}`, async () => {
    const member = await requireMember(slug, "results.view");
    return { member, indicators: await analysedIndicators(member.workspace.id) };
  });
  const { member, indicators } = access;
  return (
    <div>
      <PageHeader title={title} eyebrow="Analyses">
        {intro}
      </PageHeader>
      {indicators.length === 0 ? (
        <p className="rounded-md border border-dashed border-ink-200 p-6 text-sm text-ink-500">No completed analysis yet. Results appear here once a run has finished.</p>
      ) : (
        <div className="grid gap-8 xl:grid-cols-[minmax(0,1fr)_260px]">
          <Suspense fallback={<p className="text-sm text-ink-500">Loading…</p>}>
            <Screen slug={member.workspace.slug} indicators={indicators} />
          </Suspense>
          <Cautions className="h-fit xl:sticky xl:top-6" />
        </div>
      )}
    </div>
  );
}

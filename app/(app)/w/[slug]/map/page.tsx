import type { Metadata } from "next";
import { Suspense } from "react";
import { MapScreen } from "@/components/maps/map-screen";
import { Cautions } from "@/components/ui/cautions";
import { Forbidden } from "@/components/ui/forbidden";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { analysedIndicators } from "@/lib/runs/queries";

export const metadata: Metadata = { title: "Region map" };

export default async function Page({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/map`, async () => {
    const member = await requireMember(slug, "results.view");
    return { member, indicators: await analysedIndicators(member.workspace.id) };
  });
  if (!access.ok) return <Forbidden message={access.message} backHref={`/w/${slug}/desk`} />;
  const { member, indicators } = access.value;
  return (
    <div>
      <PageHeader title="Region map" eyebrow="Analyses">
        Values and local clusters for two periods side by side, the moves between cluster classes and the Moran scatter plots.
      </PageHeader>
      {indicators.length === 0 ? (
        <p className="rounded-md border border-dashed border-ink-200 p-6 text-sm text-ink-500">No completed analysis yet. Results appear here once a run has finished.</p>
      ) : (
        <div className="grid gap-8 xl:grid-cols-[minmax(0,1fr)_260px]">
          <Suspense fallback={<p className="text-sm text-ink-500">Loading…</p>}>
            <MapScreen slug={member.workspace.slug} indicators={indicators} />
          </Suspense>
          <Cautions className="h-fit xl:sticky xl:top-6" />
        </div>
      )}
    </div>
  );
}

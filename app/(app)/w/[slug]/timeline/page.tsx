import type { Metadata } from "next";
import { TimelineScreen } from "@/components/charts/timeline-screen";
import { AnalysedIndicatorPage } from "@/components/runs/analysed-indicator-page";

export const metadata: Metadata = { title: "Indicator timeline" };

export default async function Page({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  return (
    <AnalysedIndicatorPage
      slug={slug}
      segment="timeline"
      title="Indicator timeline"
      intro={<>Moran&apos;s I of one indicator over the periods of a run, with its band under the null, z-values and a robustness strip across weights.</>}
      Screen={TimelineScreen}
    />
  );
}

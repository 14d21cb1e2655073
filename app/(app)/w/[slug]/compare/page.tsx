import type { Metadata } from "next";
import { CompareScreen } from "@/components/maps/compare-screen";
import { AnalysedIndicatorPage } from "@/components/runs/analysed-indicator-page";

export const metadata: Metadata = { title: "Two periods compared" };

export default async function Page({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  return (
    <AnalysedIndicatorPage
      slug={slug}
      segment="compare"
      title="Two periods compared"
      intro={<>Moran&apos;s I in each period, the I of the change and the later period against the neighbours&apos; earlier values.</>}
      Screen={CompareScreen}
    />
  );
}

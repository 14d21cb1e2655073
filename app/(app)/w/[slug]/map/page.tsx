import type { Metadata } from "next";
import { MapScreen } from "@/components/maps/map-screen";
import { AnalysedIndicatorPage } from "@/components/runs/analysed-indicator-page";

export const metadata: Metadata = { title: "Region map" };

export default async function Page({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  return (
    <AnalysedIndicatorPage
      slug={slug}
      segment="map"
      title="Region map"
      intro={<>Values and local clusters for two periods side by side, the moves between cluster classes and the Moran scatter plots.</>}
      Screen={MapScreen}
    />
  );
}

import type { Metadata } from "next";
import { Forbidden } from "@/components/ui/forbidden";
import { LaterRelease } from "@/components/ui/later-release";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Catalogue" };

export default async function CataloguePage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/catalogue`, () => requireMember(slug, "results.view"));
  if (!access.ok) return <Forbidden message={access.message} backHref={`/w/${slug}/desk`} />;
  return (
    <LaterRelease
      title="Catalogue"
      purpose="Every published indicator and period in one grid, with the clustering statistic, its inference and a link to the indicator's timeline and region map."
      features={[
          "One row per indicator and period: Moran's I, its expectation, z and p under normality, randomisation and permutation.",
          "Filters and sorting kept in the address bar, so a view can be shared with a colleague.",
          "Indicator timelines: I over the years with the permutation band under the null, and a robustness strip across weights.",
          "Region maps: choropleth and local cluster map for two periods side by side, with the transition table between them.",
      ]}
    />
  );
}

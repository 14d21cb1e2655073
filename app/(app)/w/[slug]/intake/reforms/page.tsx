import type { Metadata } from "next";
import { ReformsScreen } from "@/components/reforms/reforms-screen";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Reforms" };

export default async function ReformsPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  await guardPage(`/w/${slug}/intake/reforms`, () => requireMember(slug, "data.view-unpublished"));
  return (
    <>
      <PageHeader title="Reforms" eyebrow="Intake">
        Regions change: districts merge, municipalities split, regions are redrawn. A crosswalk says how much of each old region lies in each new one, so a panel
        on the old boundaries can be carried onto the new ones as a new panel version.
      </PageHeader>
      <ReformsScreen slug={slug} />
    </>
  );
}

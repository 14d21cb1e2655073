import type { Metadata } from "next";
import { DigestsScreen } from "@/components/digests/digests-screen";
import { Cautions } from "@/components/ui/cautions";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Digests" };

export default async function DigestsPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/digests`, () => requireMember(slug, "digests.subscribe"));
  return (
    <div>
      <PageHeader title="Digests" eyebrow="Subscriptions">
        An e-mail when the clustering of indicators you follow becomes significant, flips, or moves a lot — with a small chart per
        indicator and links back here.
      </PageHeader>
      <DigestsScreen slug={access.workspace.slug} />
      <Cautions className="mt-8" items={["causation", "multiple", "maup"]} />
    </div>
  );
}

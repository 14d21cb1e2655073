import type { Metadata } from "next";
import { RunsScreen } from "@/components/runs/runs-screen";
import { Cautions } from "@/components/ui/cautions";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { can } from "@/lib/auth/roles";

export const metadata: Metadata = { title: "Runs" };

export default async function RunsPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/runs`, () => requireMember(slug, "runs.manage"));
  // Subscribers never reach this screen (the roles table in docs/guarantees.md: runs are an economist's capability).
  const canManage = can(access.role, "runs.manage");
  return (
    <div>
      <PageHeader title="Runs" eyebrow="Analyses">
        Measure spatial clustering for every indicator and period of a published panel: global Moran&apos;s I with analytical and
        permutation inference, Geary&apos;s C, General G and local clusters per region.
      </PageHeader>
      <RunsScreen slug={access.workspace.slug} canManage={canManage} />
      <Cautions className="mt-8" items={["multiple", "small-n", "maup"]} />
    </div>
  );
}

import type { Metadata } from "next";
import { Suspense } from "react";
import { CatalogueScreen } from "@/components/catalogue/catalogue-screen";
import { Cautions } from "@/components/ui/cautions";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { can } from "@/lib/auth/roles";

export const metadata: Metadata = { title: "Catalogue" };

export default async function CataloguePage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/catalogue`, () => requireMember(slug, "results.view"));
  return (
    <div>
      <PageHeader title="Catalogue" eyebrow="Analyses">
        Every analysed indicator and period in one grid. Open an indicator for its timeline, or a period for its region map.
      </PageHeader>
      <Suspense fallback={<p className="text-sm text-ink-500">Loading the catalogue…</p>}>
        <CatalogueScreen slug={access.workspace.slug} canExport={can(access.role, "runs.manage")} />
      </Suspense>
      <Cautions className="mt-8" />
    </div>
  );
}

import type { Metadata } from "next";
import { IntakeScreen } from "@/components/intake/intake-screen";
import { Forbidden } from "@/components/ui/forbidden";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { can } from "@/lib/auth/roles";

export const metadata: Metadata = { title: "Intake" };

export default async function IntakePage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/intake`, () => requireMember(slug, "results.view"));
  if (!access.ok) return <Forbidden message={access.message} backHref={`/w/${slug}/desk`} />;
  const curator = can(access.value.role, "data.curate");
  return (
    <>
      <PageHeader title="Intake" eyebrow="Boundaries and panels">
        {curator
          ? "Upload boundaries and indicator panels, read the validation report, and publish the versions analyses may use. Every upload becomes an immutable version."
          : "The published boundaries and panels that analyses use. Uploads and validation are done by stewards and managers."}
      </PageHeader>
      <IntakeScreen slug={slug} />
    </>
  );
}

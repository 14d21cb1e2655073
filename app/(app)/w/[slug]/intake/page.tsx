import type { Metadata } from "next";
import Link from "next/link";
import { IntakeScreen } from "@/components/intake/intake-screen";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Intake" };

export default async function IntakePage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  await guardPage(`/w/${slug}/intake`, () => requireMember(slug, "data.view-unpublished"));
  // The screen belongs to stewards and managers (the roles table in docs/guarantees.md); the published
  // data it curates reaches everyone else through the analyses screens.
  return (
    <>
      <PageHeader title="Intake" eyebrow="Boundaries and panels">
        Upload boundaries and indicator panels, read the validation report, and publish the versions analyses may use. Every upload becomes an immutable
        version.{" "}
        <Link className="underline" href={`/w/${slug}/intake/reforms`} data-testid="reforms-link">
          Reforms
        </Link>{" "}
        carries a panel across changed boundaries.
      </PageHeader>
      <IntakeScreen slug={slug} />
    </>
  );
}

import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { CrosswalkScreen } from "@/components/reforms/crosswalk-screen";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { idFromText } from "@/lib/http/params";

export const metadata: Metadata = { title: "Crosswalk" };

export default async function CrosswalkPage({ params }: { params: Promise<{ slug: string; crosswalkId: string }> }) {
  const { slug, crosswalkId } = await params;
  await guardPage(`/w/${slug}/intake/reforms/${crosswalkId}`, () => requireMember(slug, "data.view-unpublished"));
  const id = idFromText(crosswalkId);
  if (id === null) notFound();
  return (
    <>
      <PageHeader title={`Crosswalk ${id}`} eyebrow="Reforms">
        The reform on a map, the shares that carry each old region onto the new ones, what the check found, and a panel harmonised through it.
      </PageHeader>
      <CrosswalkScreen slug={slug} crosswalkId={id} />
    </>
  );
}

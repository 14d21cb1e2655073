import type { Metadata } from "next";
import { Forbidden } from "@/components/ui/forbidden";
import { LaterRelease } from "@/components/ui/later-release";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Intake" };

export default async function IntakePage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/intake`, () => requireMember(slug, "data.view-unpublished"));
  if (!access.ok) return <Forbidden message={access.message} backHref={`/w/${slug}/desk`} />;
  return (
    <LaterRelease
      title="Intake"
      purpose="Upload boundaries and indicator panels, read the validation report, keep versions and publish the curated data set."
      features={[
          "Boundary uploads (TopoJSON) and panel uploads (CSV), streamed and validated.",
          "A validation report naming missing values, region codes that do not match the boundaries and other problems.",
          "Versions of each data set, with publish and archive.",
      ]}
    />
  );
}

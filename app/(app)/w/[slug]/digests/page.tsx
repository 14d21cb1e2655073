import type { Metadata } from "next";
import { Forbidden } from "@/components/ui/forbidden";
import { LaterRelease } from "@/components/ui/later-release";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Digests" };

export default async function DigestsPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/digests`, () => requireMember(slug, "digests.subscribe"));
  if (!access.ok) return <Forbidden message={access.message} backHref={`/w/${slug}/desk`} />;
  return (
    <LaterRelease
      title="Digests"
      purpose="Choose which indicators you follow and receive an e-mail digest when their clustering moves significantly."
      features={[
          "Your subscriptions, per indicator.",
          "A preview of the next digest before it is sent.",
      ]}
    />
  );
}

import type { Metadata } from "next";
import { Forbidden } from "@/components/ui/forbidden";
import { LaterRelease } from "@/components/ui/later-release";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Runs" };

export default async function RunsPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const access = await guardPage(`/w/${slug}/runs`, () => requireMember(slug, "runs.manage"));
  if (!access.ok) return <Forbidden message={access.message} backHref={`/w/${slug}/desk`} />;
  return (
    <LaterRelease
      title="Runs"
      purpose="Start, follow, cancel and rerun analyses over the published panels."
      features={[
          "The queue with progress for each run.",
          "The parameters of every run: weights, transform, permutations, seed, island policy and correction.",
          "Reruns with changed parameters and exports of results.",
      ]}
    />
  );
}

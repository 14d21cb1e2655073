import type { Metadata } from "next";
import Link from "next/link";
import { Wordmark } from "@/components/ui/logo";
import { NewWorkspaceForm } from "@/components/workspaces/new-workspace-form";
import { requireUser } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { firstWorkspaceSlug } from "@/lib/team/queries";

export const metadata: Metadata = { title: "New workspace" };
export const dynamic = "force-dynamic";

export default async function NewWorkspacePage() {
  const back = await guardPage("/workspaces/new", async () => {
    await requireUser();
    return firstWorkspaceSlug();
  });
  return (
    <main id="main-content" tabIndex={-1} className="mx-auto mt-16 max-w-lg rounded-lg border border-ink-100 bg-white p-8 shadow-sm">
      <Wordmark className="text-ink" />
      <h1 className="mt-6 text-xl font-semibold text-ink">New workspace</h1>
      <p className="mt-2 mb-6 text-sm text-ink-500">
        A workspace keeps one team&apos;s panels, boundaries, analyses and members apart from every other. You become its
        first manager and can invite the others from its Team screen.
      </p>
      <NewWorkspaceForm />
      {back ? (
        <p className="mt-6 text-sm">
          <Link href={`/w/${back}/desk`} className="font-medium text-ochre-700 hover:underline">
            ← Back to your workspace
          </Link>
        </p>
      ) : null}
    </main>
  );
}

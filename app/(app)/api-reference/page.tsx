import type { Metadata } from "next";
import Link from "next/link";
import { ApiReference, type ReferenceDocument } from "@/components/api-docs/api-reference";
import { PageHeader } from "@/components/ui/page-header";
import { Wordmark } from "@/components/ui/logo";
import { openApiDocument } from "@/lib/api-docs/document";
import { guardPage } from "@/lib/auth/page";
import { firstWorkspaceSlug } from "@/lib/team/queries";

export const metadata: Metadata = { title: "API reference" };
export const dynamic = "force-dynamic";

// The API reference: the OpenAPI document served at /api/openapi.json, rendered
// for people. It belongs to no workspace; any signed-in user may read it.
export default async function ApiReferencePage() {
  const back = await guardPage("/api-reference", () => firstWorkspaceSlug());
  const document = openApiDocument() as unknown as ReferenceDocument;
  return (
    <div className="min-h-screen bg-ink-50">
      <header className="bg-ink text-white">
        <div className="h-1 bg-ochre-500" aria-hidden="true" />
        <div className="mx-auto flex max-w-7xl items-center gap-6 px-6 py-3">
          <Link href={back ? `/w/${back}/desk` : "/"} className="text-white">
            <Wordmark className="text-lg" />
          </Link>
          <Link href="/account" className="ml-auto text-sm text-ink-200 hover:text-white hover:underline">
            Account
          </Link>
        </div>
      </header>
      <main className="mx-auto max-w-7xl px-6 py-8">
        <PageHeader title="API reference" eyebrow="Programmatic access">
          Every route behind Tessera&apos;s screens, with who may call it, what it takes and what it answers. Programs sign in with a personal API
          token of one workspace and act with its owner&apos;s role.
        </PageHeader>
        <ApiReference document={document} />
      </main>
    </div>
  );
}

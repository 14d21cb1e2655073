import { TopBar } from "@/components/shell/top-bar";
import { guardPage } from "@/lib/auth/page";
import { getShell } from "@/lib/team/queries";

export const dynamic = "force-dynamic";

// The shell. Its guard call only decides what the bar shows (and 404 for
// non-members); each page still calls the guard itself, because layouts do
// not re-run on client navigation.
export default async function WorkspaceLayout({ children, params }: { children: React.ReactNode; params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const shell = await guardPage(`/w/${slug}/desk`, () => getShell(slug));
  const value = shell;
  return (
    <div className="flex min-h-screen flex-col">
      <TopBar slug={value.workspace.slug} nav={value.nav} role={value.role} userName={value.user.name} workspaces={value.workspaces} />
      <main id="main-content" tabIndex={-1} className="mx-auto w-full max-w-7xl flex-1 px-6 py-8">{children}</main>
      <footer className="border-t border-ink-100 py-4 text-center text-xs text-ink-500">Tessera · {value.workspace.name}</footer>
    </div>
  );
}

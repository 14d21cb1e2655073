import Link from "next/link";
import { redirect } from "next/navigation";
import { getSessionUser } from "@/lib/auth/session";
import { firstWorkspaceSlug } from "@/lib/team/queries";
import { Wordmark } from "@/components/ui/logo";
import { SignOutButton } from "@/components/shell/sign-out-button";

export const dynamic = "force-dynamic";

export default async function Home() {
  if (!(await getSessionUser())) redirect("/sign-in");
  const slug = await firstWorkspaceSlug();
  if (slug) redirect(`/w/${slug}/desk`);
  return (
    <main id="main-content" tabIndex={-1} className="mx-auto mt-24 max-w-lg rounded-lg border border-ink-100 bg-white p-8 shadow-sm">
      <Wordmark className="text-ink" />
      <h1 className="mt-6 text-xl font-semibold text-ink">You are not in a workspace yet</h1>
      <p className="mt-2 text-sm text-ink-500">
        Workspaces are joined by invitation. Ask a manager of your team to invite this e-mail address, then open the link in
        the e-mail. Or start one of your own:
      </p>
      <p className="mt-4">
        <Link href="/workspaces/new" className="font-medium text-ochre-700 hover:underline">
          Create a workspace
        </Link>
      </p>
      <div className="mt-6 bg-ink p-2 inline-block rounded-md">
        <SignOutButton />
      </div>
    </main>
  );
}

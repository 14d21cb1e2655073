import Link from "next/link";
import { Wordmark } from "@/components/ui/logo";

// Rendered with HTTP 403 when a signed-in member's role does not include a
// screen (lib/auth/page.ts). It cannot know which workspace was asked for, so it
// points home, which opens the member's own workspace.
export default function Forbidden() {
  return (
    <main id="main-content" tabIndex={-1} role="alert" className="mx-auto mt-24 max-w-lg rounded-lg border border-ink-100 bg-white p-8 text-center shadow-sm">
      <div className="text-ink">
        <Wordmark />
      </div>
      <p className="mt-6 text-xs font-semibold uppercase tracking-wider text-ochre-700">Not available to your role</p>
      <h1 className="mt-2 text-xl font-semibold text-ink">You do not have access to this screen</h1>
      <p className="mt-3 text-sm text-ink-500">
        Your role in this workspace does not include this screen. If you need it, ask a manager of the workspace to change your role.
      </p>
      <Link href="/" className="mt-6 inline-block rounded-md bg-ink px-4 py-2 text-sm font-semibold text-white hover:bg-ink-700">
        Back to your workspace
      </Link>
    </main>
  );
}

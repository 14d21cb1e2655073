import type { Metadata } from "next";
import Link from "next/link";
import { ChangePasswordForm } from "@/components/account/change-password-form";
import { AccountTokensPanel } from "@/components/tokens/account-tokens-panel";
import { Wordmark } from "@/components/ui/logo";
import { requireUser } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { accountTokens } from "@/lib/tokens/queries";

export const metadata: Metadata = { title: "Account" };
export const dynamic = "force-dynamic";

// The signed-in user's own account; it belongs to no workspace.
export default async function AccountPage() {
  const user = await guardPage("/account", () => requireUser());
  const tokens = await accountTokens(user.id);
  return (
    <main id="main-content" tabIndex={-1} className="mx-auto mt-16 max-w-3xl rounded-lg border border-ink-100 bg-white p-8 shadow-sm">
      <Link href="/" className="text-ink">
        <Wordmark className="text-ink" />
      </Link>
      <h1 className="mt-6 text-xl font-semibold text-ink">Account</h1>
      <p className="mt-2 text-sm text-ink-500">
        Signed in as <span className="font-medium text-ink" data-testid="account-name">{user.name}</span> (
        <span data-testid="account-email">{user.email}</span>).
      </p>
      <h2 className="mt-8 text-base font-semibold text-ink">Change password</h2>
      <p className="mt-1 text-sm text-ink-500">Changing it signs you out in every other browser.</p>
      <ChangePasswordForm email={user.email} />
      <h2 className="mt-10 text-base font-semibold text-ink">Access tokens</h2>
      <p className="mt-1 text-sm text-ink-500">
        Personal API tokens let your scripts (R, Python, curl) call Tessera as you, in one workspace, until they expire or you revoke them.
        Send one as <code>Authorization: Bearer …</code>.
      </p>
      <AccountTokensPanel initial={tokens} />
      <h2 className="mt-8 text-base font-semibold text-ink">Programmatic access</h2>
      <p className="mt-1 text-sm text-ink-500">
        The{" "}
        <Link href="/api-reference" className="text-ochre-700 underline" data-testid="account-api-reference">
          API reference
        </Link>{" "}
        lists every route, who may call it and what it answers; the machine-readable OpenAPI document is at{" "}
        <code className="text-xs">/api/openapi.json</code>.
      </p>
      <p className="mt-8 text-sm">
        <Link href="/" className="text-ochre-700 underline">
          Back to your workspace
        </Link>
      </p>
    </main>
  );
}

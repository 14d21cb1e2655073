import type { Metadata } from "next";
import { redirect } from "next/navigation";
import { SignInForm } from "@/components/auth/sign-in-form";
import { getSessionUser } from "@/lib/auth/session";
import { safeCallbackPath } from "@/lib/auth/callback";
import { signInMessage } from "@/lib/auth/messages";
import { env } from "@/lib/config/env";

export const metadata: Metadata = { title: "Sign in" };

export default async function SignInPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  // Only paths on this site are followed after sign-in, never another origin.
  const callbackUrl = safeCallbackPath(params.callbackUrl, env().NEXTAUTH_URL);
  if (await getSessionUser()) redirect(callbackUrl);
  const error = typeof params.error === "string" ? signInMessage(params.error) : null;
  return (
    <>
      <h1 className="text-2xl font-semibold text-ink">Sign in</h1>
      <p className="mt-2 text-sm text-ink-500">Use the e-mail address your workspace manager invited.</p>
      {params.signedOut ? (
        <p role="status" className="mt-6 rounded-md border border-ink-100 bg-ink-50 px-3 py-2 text-sm text-ink-600">
          You have signed out.
        </p>
      ) : null}
      <SignInForm callbackUrl={callbackUrl} initialError={error} />
    </>
  );
}

"use client";

import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { inputClass, labelClass, primaryButton } from "@/components/ui/button-styles";
import { safeCallbackPath } from "@/lib/auth/callback";
import { signInMessage } from "@/lib/auth/messages";
import { signInSchema } from "@/lib/auth/schemas";

export function SignInForm({ callbackUrl, initialError, email: presetEmail }: { callbackUrl: string; initialError?: string | null; email?: string }) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(initialError ?? null);
  const [fieldErrors, setFieldErrors] = useState<Partial<Record<"email" | "password", string>>>({});
  const [busy, setBusy] = useState(false);

  async function onSubmit(event: React.FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const parsed = signInSchema.safeParse({ email: form.get("email"), password: form.get("password") });
    if (!parsed.success) {
      const next: Partial<Record<"email" | "password", string>> = {};
      for (const issue of parsed.error.issues) {
        const key = issue.path[0];
        if ((key === "email" || key === "password") && !next[key]) next[key] = issue.message;
      }
      setFieldErrors(next);
      return;
    }
    setFieldErrors({});
    setError(null);
    setBusy(true);
    // Checked again here, against the origin the browser is really on: the prop
    // comes from the server, but this is the line that navigates.
    const destination = safeCallbackPath(callbackUrl, window.location.origin);
    const result = await signIn("credentials", { ...parsed.data, redirect: false, callbackUrl: destination });
    if (!result || result.error) {
      setBusy(false);
      setError(signInMessage(result?.error ?? "unknown"));
      return;
    }
    router.replace(destination);
    router.refresh();
  }

  return (
    <form onSubmit={onSubmit} noValidate className="mt-8 space-y-5">
      {error ? (
        <p role="alert" className="rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
          {error}
        </p>
      ) : null}
      <div>
        <label htmlFor="email" className={labelClass}>
          E-mail address
        </label>
        <input
          id="email"
          name="email"
          type="email"
          autoComplete="username"
          defaultValue={presetEmail}
          readOnly={Boolean(presetEmail)}
          className={`${inputClass} mt-1`}
          aria-invalid={Boolean(fieldErrors.email)}
          aria-describedby={fieldErrors.email ? "email-error" : undefined}
        />
        {fieldErrors.email ? (
          <p id="email-error" className="mt-1 text-sm text-red-700">
            {fieldErrors.email}
          </p>
        ) : null}
      </div>
      <div>
        <label htmlFor="password" className={labelClass}>
          Password
        </label>
        <input
          id="password"
          name="password"
          type="password"
          autoComplete="current-password"
          className={`${inputClass} mt-1`}
          aria-invalid={Boolean(fieldErrors.password)}
          aria-describedby={fieldErrors.password ? "password-error" : undefined}
        />
        {fieldErrors.password ? (
          <p id="password-error" className="mt-1 text-sm text-red-700">
            {fieldErrors.password}
          </p>
        ) : null}
      </div>
      <button type="submit" disabled={busy} className={`${primaryButton} w-full py-2.5`}>
        {busy ? "Signing in…" : "Sign in"}
      </button>
    </form>
  );
}

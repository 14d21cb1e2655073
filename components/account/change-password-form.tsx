"use client";

import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { inputClass, labelClass, primaryButton } from "@/components/ui/button-styles";
import { changePasswordSchema, passwordSchema } from "@/lib/auth/schemas";

type Field = "currentPassword" | "newPassword" | "confirm";

/**
 * Changing the password ends every session of the account, this browser's
 * too; the form then signs this browser in again with the new password, so
 * the person who changed it carries on while every other browser must sign in.
 */
export function ChangePasswordForm({ email }: { email: string }) {
  const router = useRouter();
  const [error, setError] = useState<{ field: Field | null; message: string } | null>(null);
  const [done, setDone] = useState(false);
  const [busy, setBusy] = useState(false);

  async function onSubmit(event: React.FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const formElement = event.currentTarget;
    const form = new FormData(formElement);
    const input = { currentPassword: String(form.get("currentPassword") ?? ""), newPassword: String(form.get("newPassword") ?? "") };
    const strength = passwordSchema.safeParse(input.newPassword);
    if (!strength.success) return setError({ field: "newPassword", message: strength.error.issues[0]?.message ?? "Choose a password." });
    if (input.newPassword !== String(form.get("confirm") ?? "")) {
      return setError({ field: "confirm", message: "The two new passwords are not the same." });
    }
    const parsed = changePasswordSchema.safeParse(input);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      const field = issue?.path[0] === "currentPassword" ? "currentPassword" : "newPassword";
      return setError({ field, message: issue?.message ?? "Check the passwords." });
    }
    setBusy(true);
    setError(null);
    setDone(false);
    const response = await fetch("/api/account/password", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(parsed.data),
    });
    if (!response.ok) {
      const data = (await response.json().catch(() => ({}))) as { error?: string; field?: string | null };
      setBusy(false);
      const field = data.field === "currentPassword" || data.field === "newPassword" ? data.field : null;
      const message = (data.error ?? "Changing the password did not work. Try again.").replace(/^(currentPassword|newPassword): /, "");
      setError({ field, message });
      return;
    }
    const again = await signIn("credentials", { email, password: parsed.data.newPassword, redirect: false });
    if (!again || again.error) {
      router.replace(`/sign-in?callbackUrl=${encodeURIComponent("/account")}`);
      return;
    }
    formElement.reset();
    setBusy(false);
    setDone(true);
    router.refresh();
  }

  const fieldMessage = (field: Field) =>
    error?.field === field ? (
      <p id={`${field}-error`} className="mt-1 text-sm text-red-700">
        {error.message}
      </p>
    ) : null;

  return (
    <form onSubmit={onSubmit} noValidate className="mt-6 max-w-md space-y-4">
      {error && error.field === null ? (
        <p role="alert" className="rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
          {error.message}
        </p>
      ) : null}
      {done ? (
        <p role="status" data-testid="password-changed" className="rounded-md border border-ink-100 bg-ink-50 px-3 py-2 text-sm text-ink-600">
          Your password has been changed. You were signed out everywhere else; this browser is signed in with the new password.
        </p>
      ) : null}
      <div>
        <label htmlFor="currentPassword" className={labelClass}>
          Current password
        </label>
        <input id="currentPassword" name="currentPassword" type="password" autoComplete="current-password" className={`${inputClass} mt-1`} aria-invalid={error?.field === "currentPassword"} aria-describedby={error?.field === "currentPassword" ? "currentPassword-error" : undefined} />
        {fieldMessage("currentPassword")}
      </div>
      <div>
        <label htmlFor="newPassword" className={labelClass}>
          New password
        </label>
        <input id="newPassword" name="newPassword" type="password" autoComplete="new-password" className={`${inputClass} mt-1`} aria-invalid={error?.field === "newPassword"} aria-describedby={error?.field === "newPassword" ? "newPassword-help newPassword-error" : "newPassword-help"} />
        <p id="newPassword-help" className="mt-1 text-xs text-ink-500">At least 10 characters.</p>
        {fieldMessage("newPassword")}
      </div>
      <div>
        <label htmlFor="confirm" className={labelClass}>
          New password again
        </label>
        <input id="confirm" name="confirm" type="password" autoComplete="new-password" className={`${inputClass} mt-1`} aria-invalid={error?.field === "confirm"} aria-describedby={error?.field === "confirm" ? "confirm-error" : undefined} />
        {fieldMessage("confirm")}
      </div>
      <button type="submit" disabled={busy} className={primaryButton}>
        {busy ? "Changing…" : "Change password"}
      </button>
    </form>
  );
}

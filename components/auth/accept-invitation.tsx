"use client";

import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { inputClass, labelClass, primaryButton } from "@/components/ui/button-styles";
import { passwordSchema } from "@/lib/auth/schemas";

type Result = { workspaceSlug: string; email: string; createdAccount: boolean };

export function AcceptInvitation({ token, email, mode }: { token: string; email: string; mode: "create" | "accept" }) {
  const router = useRouter();
  const [error, setError] = useState<{ field: string | null; message: string } | null>(null);
  const [busy, setBusy] = useState(false);

  async function onSubmit(event: React.FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const body: Record<string, string> = { token };
    if (mode === "create") {
      const name = String(form.get("name") ?? "").trim();
      const password = String(form.get("password") ?? "");
      if (!name) return setError({ field: "name", message: "Enter your name." });
      const pw = passwordSchema.safeParse(password);
      if (!pw.success) return setError({ field: "password", message: pw.error.issues[0]?.message ?? "Choose a password." });
      if (password !== String(form.get("confirm") ?? "")) {
        return setError({ field: "confirm", message: "The two passwords are not the same." });
      }
      body.name = name;
      body.password = password;
    }
    setBusy(true);
    setError(null);
    const response = await fetch("/api/invitations/accept", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(body),
    });
    const data: unknown = await response.json().catch(() => ({}));
    if (!response.ok) {
      const d = data as { error?: string; field?: string | null };
      setBusy(false);
      setError({ field: d.field ?? null, message: d.error ?? "Accepting did not work. Try again." });
      return;
    }
    const result = data as Result;
    const desk = `/w/${result.workspaceSlug}/desk`;
    if (mode === "create") {
      const signedIn = await signIn("credentials", { email, password: body.password, redirect: false, callbackUrl: desk });
      if (!signedIn || signedIn.error) {
        router.replace(`/sign-in?callbackUrl=${encodeURIComponent(desk)}`);
        return;
      }
    }
    router.replace(desk);
    router.refresh();
  }

  const fieldMessage = (field: string) =>
    error?.field === field ? (
      <p id={`${field}-error`} className="mt-1 text-sm text-red-700">
        {error.message}
      </p>
    ) : null;
  const fieldProps = (field: string, help?: string) => {
    const ids = [help, error?.field === field ? `${field}-error` : undefined].filter(Boolean).join(" ");
    return { "aria-invalid": error?.field === field, "aria-describedby": ids || undefined };
  };

  return (
    <form onSubmit={onSubmit} noValidate className="mt-6 space-y-4">
      {error && !["name", "password", "confirm"].includes(error.field ?? "") ? (
        <p role="alert" className="rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
          {error.message}
        </p>
      ) : null}
      {mode === "create" ? (
        <>
          <p className="text-sm text-ink-600">Create your account to join.</p>
          <div>
            <label htmlFor="name" className={labelClass}>
              Your name
            </label>
            <input id="name" name="name" autoComplete="name" className={`${inputClass} mt-1`} {...fieldProps("name")} />
            {fieldMessage("name")}
          </div>
          <div>
            <label htmlFor="password" className={labelClass}>
              Password
            </label>
            <input id="password" name="password" type="password" autoComplete="new-password" className={`${inputClass} mt-1`} {...fieldProps("password", "password-help")} />
            <p id="password-help" className="mt-1 text-xs text-ink-500">At least 10 characters.</p>
            {fieldMessage("password")}
          </div>
          <div>
            <label htmlFor="confirm" className={labelClass}>
              Password again
            </label>
            <input id="confirm" name="confirm" type="password" autoComplete="new-password" className={`${inputClass} mt-1`} {...fieldProps("confirm")} />
            {fieldMessage("confirm")}
          </div>
        </>
      ) : (
        <p className="text-sm text-ink-600">You are signed in as {email}.</p>
      )}
      <button type="submit" disabled={busy} className={`${primaryButton} w-full py-2.5`}>
        {busy ? "Joining…" : mode === "create" ? "Create account and join" : "Accept and join"}
      </button>
    </form>
  );
}

"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import { ROLES, ROLE_LABELS, type Role } from "@/lib/auth/roles";
import { inviteSchema } from "@/lib/team/schemas";
import type { InvitationRow } from "@/lib/team/invitations";
import { ApiError, apiFetch } from "@/lib/client/api-fetch";
import { invitationsQuery, teamKeys } from "./query-options";

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" });

export function InvitationsPanel({ slug, initial }: { slug: string; initial: InvitationRow[] }) {
  const client = useQueryClient();
  const invitations = useQuery({ ...invitationsQuery(slug), initialData: initial });
  const [fieldError, setFieldError] = useState<{ field: string | null; message: string } | null>(null);
  const [sentTo, setSentTo] = useState<string | null>(null);

  const invite = useMutation({
    mutationFn: (input: { email: string; role: Role }) =>
      apiFetch<{ invitation: InvitationRow }>(`/api/w/${slug}/invitations`, {
        method: "POST",
        body: JSON.stringify(input),
      }),
    onSuccess: ({ invitation }) => {
      setFieldError(null);
      setSentTo(invitation.email);
      void client.invalidateQueries({ queryKey: teamKeys.invitations(slug) });
      void client.invalidateQueries({ queryKey: teamKeys.audit(slug) });
    },
    onError: (e: Error) => setFieldError({ field: e instanceof ApiError ? e.field : null, message: e.message }),
  });
  const revoke = useMutation({
    mutationFn: (id: number) => apiFetch<void>(`/api/w/${slug}/invitations/${id}`, { method: "DELETE" }),
    onSettled: () => void client.invalidateQueries({ queryKey: teamKeys.invitations(slug) }),
  });

  function onSubmit(event: React.FormEvent<HTMLFormElement>) {
    event.preventDefault();
    if (invite.isPending) return;
    const form = new FormData(event.currentTarget);
    const parsed = inviteSchema.safeParse({ email: form.get("email"), role: form.get("role") });
    setSentTo(null);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      setFieldError({ field: String(issue?.path[0] ?? ""), message: issue?.message ?? "Check the form." });
      return;
    }
    invite.mutate(parsed.data, { onSuccess: () => (event.target as HTMLFormElement).reset() });
  }

  return (
    <section aria-labelledby="invite-heading" className="rounded-lg border border-ink-100 bg-white p-5 shadow-sm">
      <h2 id="invite-heading" className="text-base font-semibold text-ink">
        Invite someone
      </h2>
      <p className="mt-1 text-sm text-ink-500">They receive an e-mail with a link that works once and expires after 7 days.</p>
      <form onSubmit={onSubmit} noValidate className="mt-4 space-y-4">
        <div>
          <label htmlFor="invite-email" className={labelClass}>
            E-mail address
          </label>
          <input
            id="invite-email"
            name="email"
            type="email"
            autoComplete="off"
            className={`${inputClass} mt-1`}
            placeholder="name@example.org"
            aria-invalid={fieldError?.field === "email"}
            aria-describedby={fieldError?.field === "email" ? "invite-email-error" : undefined}
          />
          {fieldError?.field === "email" ? (
            <p id="invite-email-error" className="mt-1 text-sm text-red-700">
              {fieldError.message}
            </p>
          ) : null}
        </div>
        <div>
          <label htmlFor="invite-role" className={labelClass}>
            Role
          </label>
          <select
            id="invite-role"
            name="role"
            defaultValue="economist"
            className={`${inputClass} mt-1`}
            aria-invalid={fieldError?.field === "role"}
            aria-describedby={fieldError?.field === "role" ? "invite-role-error" : undefined}
          >
            {ROLES.map((r) => (
              <option key={r} value={r}>
                {ROLE_LABELS[r]}
              </option>
            ))}
          </select>
          {fieldError?.field === "role" ? (
            <p id="invite-role-error" className="mt-1 text-sm text-red-700">
              {fieldError.message}
            </p>
          ) : null}
        </div>
        {fieldError && fieldError.field !== "email" && fieldError.field !== "role" ? (
          <p role="alert" className="rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
            {fieldError.message}
          </p>
        ) : null}
        {sentTo ? (
          <p role="status" className="rounded-md border border-teal-200 bg-teal-50 px-3 py-2 text-sm text-teal-900">
            Invitation queued for {sentTo}. The e-mail goes out in a moment.
          </p>
        ) : null}
        <button type="submit" aria-disabled={invite.isPending} className={primaryButton}>
          {invite.isPending ? "Sending…" : "Send invitation"}
        </button>
      </form>

      <h3 className="mt-8 text-sm font-semibold text-ink">Pending invitations</h3>
      {invitations.data.length === 0 ? (
        <p className="mt-2 text-sm text-ink-400">None waiting.</p>
      ) : (
        <ul className="mt-2 divide-y divide-ink-50 text-sm" data-testid="pending-invitations">
          {invitations.data.map((inv) => (
            <li key={inv.id} className="flex items-center justify-between gap-3 py-2.5">
              <div className="min-w-0">
                <p className="truncate font-medium text-ink">{inv.email}</p>
                <p className="text-ink-400">
                  {ROLE_LABELS[inv.role]} · expires {dateFormat.format(new Date(inv.expiresAt))}
                </p>
              </div>
              <button type="button" className={secondaryButton} disabled={revoke.isPending} onClick={() => revoke.mutate(inv.id)}>
                Withdraw
              </button>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}

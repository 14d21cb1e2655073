"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import { API_TOKEN_EXPIRY_DAYS, grantableRoles } from "@/lib/auth/api-token-format";
import { ROLE_LABELS, type Role } from "@/lib/auth/roles";
import { ApiError, apiFetch } from "@/lib/client/api-fetch";
import { createTokenSchema, type ApiTokenView, type CreatedToken, type CreateTokenInput } from "@/lib/tokens/schemas";
import { ownTokensQuery, tokenKeys } from "./query-options";
import { TokenTable } from "./token-table";

type WorkspaceTokens = { workspace: { slug: string; name: string }; role: Role; tokens: ApiTokenView[] };

/**
 * Personal API tokens on the Account screen: one workspace at a time, a form
 * to create a token (its secret shown once, with a Copy button), and the
 * member's own tokens there with their last use.
 */
export function AccountTokensPanel({ initial }: { initial: WorkspaceTokens[] }) {
  const [slug, setSlug] = useState(initial[0]?.workspace.slug ?? "");
  const current = initial.find((w) => w.workspace.slug === slug);
  if (!current) return <p className="mt-2 text-sm text-ink-500">You belong to no workspace yet, so there is nothing a token could reach.</p>;
  return (
    <div className="mt-3 space-y-4">
      <div>
        <label htmlFor="token-workspace" className={labelClass}>
          Workspace
        </label>
        <select id="token-workspace" value={slug} onChange={(e) => setSlug(e.target.value)} className={`${inputClass} mt-1`}>
          {initial.map((w) => (
            <option key={w.workspace.slug} value={w.workspace.slug}>
              {w.workspace.name} ({ROLE_LABELS[w.role]})
            </option>
          ))}
        </select>
      </div>
      <WorkspaceTokensForm key={current.workspace.slug} entry={current} />
    </div>
  );
}

function WorkspaceTokensForm({ entry }: { entry: WorkspaceTokens }) {
  const slug = entry.workspace.slug;
  const client = useQueryClient();
  const tokens = useQuery({ ...ownTokensQuery(slug), initialData: entry.tokens });
  const [fieldError, setFieldError] = useState<{ field: string | null; message: string } | null>(null);
  const [created, setCreated] = useState<CreatedToken | null>(null);
  const [copied, setCopied] = useState(false);
  const roles = grantableRoles(entry.role);

  const create = useMutation({
    mutationFn: (input: CreateTokenInput) => apiFetch<CreatedToken>(`/api/w/${slug}/tokens`, { method: "POST", body: JSON.stringify(input) }),
    onSuccess: (answer) => {
      setFieldError(null);
      setCopied(false);
      setCreated(answer);
      void client.invalidateQueries({ queryKey: tokenKeys.own(slug) });
    },
    onError: (e: Error) => setFieldError({ field: e instanceof ApiError ? e.field : null, message: e.message }),
  });
  const revoke = useMutation({
    mutationFn: (token: ApiTokenView) => apiFetch<void>(`/api/w/${slug}/tokens/${token.id}`, { method: "DELETE" }),
    onSettled: () => void client.invalidateQueries({ queryKey: tokenKeys.own(slug) }),
  });

  function onSubmit(event: React.FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const parsed = createTokenSchema.safeParse({ name: form.get("name"), role: form.get("role"), expiresInDays: Number(form.get("expiresInDays")) });
    setCreated(null);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      setFieldError({ field: String(issue?.path[0] ?? ""), message: issue?.message ?? "Check the form." });
      return;
    }
    create.mutate(parsed.data, { onSuccess: () => (event.target as HTMLFormElement).reset() });
  }

  async function copy(token: string) {
    try {
      await navigator.clipboard.writeText(token);
      setCopied(true);
    } catch {
      setCopied(false);
    }
  }

  return (
    <div>
      <form onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Create an API token">
        <div>
          <label htmlFor="token-name" className={labelClass}>
            Name
          </label>
          <input id="token-name" name="name" className={`${inputClass} mt-1`} placeholder="e.g. nightly R script" maxLength={100} />
          {fieldError?.field === "name" ? <p className="mt-1 text-sm text-red-700">{fieldError.message}</p> : null}
        </div>
        <div className="grid gap-4 sm:grid-cols-2">
          <div>
            <label htmlFor="token-role" className={labelClass}>
              Role
            </label>
            <select id="token-role" name="role" defaultValue={roles.at(-1) === "subscriber" && roles.includes("economist") ? "economist" : roles[0]} className={`${inputClass} mt-1`}>
              {roles.map((r) => (
                <option key={r} value={r}>
                  {ROLE_LABELS[r]}
                </option>
              ))}
            </select>
            {fieldError?.field === "role" ? <p className="mt-1 text-sm text-red-700">{fieldError.message}</p> : null}
          </div>
          <div>
            <label htmlFor="token-expiry" className={labelClass}>
              Expires after
            </label>
            <select id="token-expiry" name="expiresInDays" defaultValue="30" className={`${inputClass} mt-1`}>
              {API_TOKEN_EXPIRY_DAYS.map((days) => (
                <option key={days} value={days}>
                  {days} days
                </option>
              ))}
            </select>
          </div>
        </div>
        <p className="text-sm text-ink-500">A token can do at most what your role allows; if your role changes, the token is limited to the new one.</p>
        {fieldError && fieldError.field !== "name" && fieldError.field !== "role" ? (
          <p role="alert" className="rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
            {fieldError.message}
          </p>
        ) : null}
        <button type="submit" disabled={create.isPending} className={primaryButton}>
          {create.isPending ? "Creating…" : "Create token"}
        </button>
      </form>

      {created ? (
        <div role="status" className="mt-4 rounded-md border border-teal-200 bg-teal-50 p-3 text-sm text-teal-900" data-testid="new-token">
          <p className="font-medium">Token “{created.apiToken.name}” created. Copy it now: it is shown only this once.</p>
          <div className="mt-2 flex items-center gap-2">
            <code className="min-w-0 flex-1 break-all rounded bg-white px-2 py-1 font-mono text-xs text-ink" data-testid="new-token-secret">
              {created.token}
            </code>
            <button type="button" className={secondaryButton} onClick={() => void copy(created.token)}>
              {copied ? "Copied" : "Copy"}
            </button>
          </div>
        </div>
      ) : null}

      <h3 className="mt-6 text-sm font-semibold text-ink">Your tokens in this workspace</h3>
      <TokenTable tokens={tokens.data} showOwner={false} onRevoke={(t) => revoke.mutate(t)} revoking={revoke.isPending} caption="Your API tokens in this workspace" />
    </div>
  );
}

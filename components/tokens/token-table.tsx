"use client";

import { secondaryButton } from "@/components/ui/button-styles";
import { ROLE_LABELS } from "@/lib/auth/roles";
import type { ApiTokenView } from "@/lib/tokens/schemas";

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" });
const timeFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });

const STATE_LABELS: Record<ApiTokenView["state"], string> = { active: "Active", expired: "Expired", revoked: "Revoked" };

/** A list of API tokens with their dates and last use; a Revoke button on each active one. */
export function TokenTable({
  tokens,
  showOwner,
  onRevoke,
  revoking,
  caption,
}: {
  tokens: ApiTokenView[];
  showOwner: boolean;
  onRevoke: (token: ApiTokenView) => void;
  revoking: boolean;
  caption: string;
}) {
  if (tokens.length === 0) return <p className="mt-2 text-sm text-ink-400">No tokens.</p>;
  return (
    <div className="mt-2 overflow-x-auto">
      <table className="w-full text-left text-sm" data-testid="token-table">
        <caption className="sr-only">{caption}</caption>
        <thead className="text-xs uppercase tracking-wide text-ink-500">
          <tr>
            <th scope="col" className="py-2 pr-3">Name</th>
            {showOwner ? <th scope="col" className="py-2 pr-3">Owner</th> : null}
            <th scope="col" className="py-2 pr-3">Role</th>
            <th scope="col" className="py-2 pr-3">Created</th>
            <th scope="col" className="py-2 pr-3">Expires</th>
            <th scope="col" className="py-2 pr-3">Last use</th>
            <th scope="col" className="py-2 pr-3">State</th>
            <th scope="col" className="py-2"><span className="sr-only">Action</span></th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-50">
          {tokens.map((token) => (
            <tr key={token.id} data-token-id={token.id}>
              <td className="py-2 pr-3 font-medium text-ink">{token.name}</td>
              {showOwner ? <td className="py-2 pr-3 text-ink-700">{token.owner.name} ({token.owner.email})</td> : null}
              <td className="py-2 pr-3 text-ink-700">{ROLE_LABELS[token.role]}</td>
              <td className="py-2 pr-3 text-ink-700">{dateFormat.format(new Date(token.createdAt))}</td>
              <td className="py-2 pr-3 text-ink-700">{dateFormat.format(new Date(token.expiresAt))}</td>
              <td className="py-2 pr-3 text-ink-700">
                {token.lastUsedAt ? `${timeFormat.format(new Date(token.lastUsedAt))} from ${token.lastAddress ?? "an unknown address"}` : "Never used"}
              </td>
              <td className="py-2 pr-3 text-ink-700">{STATE_LABELS[token.state]}</td>
              <td className="py-2 text-right">
                {token.state === "active" ? (
                  <button type="button" className={secondaryButton} disabled={revoking} onClick={() => onRevoke(token)} aria-label={`Revoke token ${token.name}`}>
                    Revoke
                  </button>
                ) : null}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { teamTokensQuery, tokenKeys } from "@/components/tokens/query-options";
import { TokenTable } from "@/components/tokens/token-table";
import { apiFetch } from "@/lib/client/api-fetch";
import type { ApiTokenView } from "@/lib/tokens/schemas";
import { teamKeys } from "./query-options";

/** The Team screen's "API tokens" panel: every member's tokens in the workspace; a manager may revoke any. */
export function TeamTokensPanel({ slug, initial }: { slug: string; initial: ApiTokenView[] }) {
  const client = useQueryClient();
  const tokens = useQuery({ ...teamTokensQuery(slug), initialData: initial });
  const revoke = useMutation({
    mutationFn: (token: ApiTokenView) => apiFetch<void>(`/api/w/${slug}/tokens/${token.id}`, { method: "DELETE" }),
    onSettled: () => {
      void client.invalidateQueries({ queryKey: tokenKeys.team(slug) });
      void client.invalidateQueries({ queryKey: teamKeys.audit(slug) });
    },
  });
  return (
    <section aria-labelledby="team-tokens-heading" className="rounded-lg border border-ink-100 bg-white p-5 shadow-sm">
      <h2 id="team-tokens-heading" className="text-base font-semibold text-ink">
        API tokens
      </h2>
      <p className="mt-1 text-sm text-ink-500">Personal tokens members made for scripts, each limited to its owner&apos;s role. Revoke one that should no longer work.</p>
      <TokenTable tokens={tokens.data} showOwner onRevoke={(t) => revoke.mutate(t)} revoking={revoke.isPending} caption="API tokens of this workspace's members" />
    </section>
  );
}

import { queryOptions } from "@tanstack/react-query";
import { apiFetch } from "@/lib/client/api-fetch";
import type { ApiTokenView, TokenList } from "@/lib/tokens/schemas";

// One options factory per resource; mutations invalidate these keys.

export const tokenKeys = {
  own: (slug: string) => ["tokens", slug, "own"] as const,
  team: (slug: string) => ["tokens", slug, "team"] as const,
};

export function ownTokensQuery(slug: string) {
  return queryOptions({
    queryKey: tokenKeys.own(slug),
    queryFn: () => apiFetch<TokenList>(`/api/w/${slug}/tokens`).then((r): ApiTokenView[] => r.tokens),
  });
}

export function teamTokensQuery(slug: string) {
  return queryOptions({
    queryKey: tokenKeys.team(slug),
    queryFn: () => apiFetch<TokenList>(`/api/w/${slug}/team-tokens`).then((r): ApiTokenView[] => r.tokens),
  });
}

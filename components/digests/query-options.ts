import { queryOptions } from "@tanstack/react-query";
import { apiFetch } from "@/lib/client/api-fetch";
import type { DigestPreviewAnswer, SendNowAnswer } from "@/lib/digests/answers";
import type { DeliveryView, SubscriberListing, SubscriptionView } from "@/lib/digests/queries";

export const digestKeys = {
  all: (slug: string) => ["digests", slug] as const,
  own: (slug: string) => ["digests", slug, "own"] as const,
  preview: (slug: string) => ["digests", slug, "preview"] as const,
  subscribers: (slug: string) => ["digests", slug, "subscribers"] as const,
};

const base = (slug: string) => `/api/w/${encodeURIComponent(slug)}/digests`;

export type OwnDigest = {
  subscription: SubscriptionView | null;
  indicators: { code: string; label: string }[];
  deliveries: DeliveryView[];
  canSeeSubscribers: boolean;
};
export type DigestPreview = DigestPreviewAnswer;

export function ownDigestQuery(slug: string) {
  return queryOptions({
    queryKey: digestKeys.own(slug),
    queryFn: () => apiFetch<OwnDigest>(base(slug)),
    // Poll while a delivery is still on its way.
    refetchInterval: (query) => (query.state.data?.deliveries.some((d) => d.status === "queued" || d.status === "sending") ? 2000 : false),
  });
}

export function previewQuery(slug: string, enabled: boolean) {
  return queryOptions({ queryKey: digestKeys.preview(slug), queryFn: () => apiFetch<DigestPreview>(`${base(slug)}/preview`), enabled });
}

export function subscribersQuery(slug: string, enabled: boolean) {
  return queryOptions({
    queryKey: digestKeys.subscribers(slug),
    queryFn: () => apiFetch<{ subscribers: SubscriberListing[] }>(`${base(slug)}/subscribers`).then((r) => r.subscribers),
    enabled,
  });
}

export function saveSubscription(slug: string, body: unknown) {
  return apiFetch<{ subscription: SubscriptionView }>(base(slug), { method: "PUT", body: JSON.stringify(body) });
}

export function sendNow(slug: string) {
  return apiFetch<SendNowAnswer>(`${base(slug)}/send-now`, { method: "POST" });
}

import { queryOptions } from "@tanstack/react-query";
import { apiFetch } from "@/lib/client/api-fetch";
import type { BoundaryUploadPreview, CreatedVersion, PanelUploadPreview, UploadTicket, UploadView } from "@/lib/intake/service";
import type { IndicatorMeta } from "@/lib/intake/published-panel";
import type { IntakeOverview, VersionDetail } from "@/lib/intake/queries";
import type { WeightsPreview } from "@/lib/geometry/weights-preview";
import type { Topology } from "topojson-specification";

// One options factory per intake resource; every mutation invalidates intakeKeys.all(slug).

export const intakeKeys = {
  all: (slug: string) => ["intake", slug] as const,
  overview: (slug: string) => ["intake", slug, "overview"] as const,
  version: (slug: string, kind: string, id: number) => ["intake", slug, "version", kind, id] as const,
  topology: (slug: string, id: number) => ["intake", slug, "topology", id] as const,
  weights: (slug: string, id: number, rule: string) => ["intake", slug, "weights", id, rule] as const,
  preview: (slug: string, uploadId: string) => ["intake", slug, "preview", uploadId] as const,
};

export const intakeBase = (slug: string) => `/api/w/${encodeURIComponent(slug)}/intake`;

export type OverviewResponse = IntakeOverview & { role: string; canCurate: boolean };

export function overviewQuery(slug: string) {
  return queryOptions({
    queryKey: intakeKeys.overview(slug),
    queryFn: () => apiFetch<OverviewResponse>(intakeBase(slug)),
    // Poll while a version waits for its validation job.
    refetchInterval: (query) => {
      const data = query.state.data;
      const waiting = data && [...data.boundarySets, ...data.panels].some((p) => p.versions.some((v) => v.state === "uploaded"));
      return waiting ? 1000 : false;
    },
  });
}

export function versionQuery(slug: string, kind: "boundaries" | "panel", id: number) {
  return queryOptions({
    queryKey: intakeKeys.version(slug, kind, id),
    queryFn: () => apiFetch<VersionDetail>(`${intakeBase(slug)}/versions/${kind}/${id}`),
    refetchInterval: (query) => (query.state.data?.state === "uploaded" ? 1000 : false),
  });
}

export interface TopologyResponse {
  topology: Topology;
  objectName: string;
  idProperty: string;
  nameProperty: string | null;
  coordinates: "planar" | "lonlat";
  regionNames: Record<string, string | null>;
}

export function topologyQuery(slug: string, id: number) {
  return queryOptions({
    queryKey: intakeKeys.topology(slug, id),
    queryFn: () => apiFetch<TopologyResponse>(`${intakeBase(slug)}/boundaries/${id}/topology`),
    staleTime: Infinity,
  });
}

export function weightsQuery(slug: string, id: number, rule: string) {
  return queryOptions({
    queryKey: intakeKeys.weights(slug, id, rule),
    queryFn: () => apiFetch<WeightsPreview>(`${intakeBase(slug)}/boundaries/${id}/weights?rule=${encodeURIComponent(rule)}`),
    staleTime: Infinity,
  });
}

export type PreviewResponse = { kind: "panel"; preview: PanelUploadPreview } | { kind: "boundaries"; preview: BoundaryUploadPreview };

export function previewQuery(slug: string, uploadId: string) {
  return queryOptions({
    queryKey: intakeKeys.preview(slug, uploadId),
    queryFn: () => apiFetch<PreviewResponse>(`${intakeBase(slug)}/uploads/${uploadId}/preview`),
    staleTime: Infinity,
  });
}

const post = <T>(url: string, body?: unknown) => apiFetch<T>(url, { method: "POST", body: body === undefined ? undefined : JSON.stringify(body) });

export const intakeApi = {
  createUpload: (slug: string, body: { kind: "boundaries" | "panel"; fileName: string; size: number; sha256: string }) =>
    post<UploadTicket>(`${intakeBase(slug)}/uploads`, body),
  completeUpload: async (slug: string, uploadId: string): Promise<UploadView> => {
    // 422 carries the failed upload with its reason; report it as data, not as an exception.
    const response = await fetch(`${intakeBase(slug)}/uploads/${uploadId}/complete`, { method: "POST", credentials: "same-origin" });
    const body = (await response.json().catch(() => ({}))) as UploadView & { error?: string };
    if (response.ok || response.status === 422) return body;
    throw new Error(typeof body.error === "string" ? body.error : "The upload could not be checked. Try again.");
  },
  createBoundaryVersion: (slug: string, body: unknown) => post<CreatedVersion>(`${intakeBase(slug)}/boundaries`, body),
  createPanelVersion: (slug: string, body: unknown) => post<CreatedVersion>(`${intakeBase(slug)}/panels`, body),
  publish: (slug: string, kind: "boundaries" | "panel", id: number) => post<{ state: string }>(`${intakeBase(slug)}/versions/${kind}/${id}/publish`),
  archive: (slug: string, kind: "boundaries" | "panel", id: number) => post<{ state: string }>(`${intakeBase(slug)}/versions/${kind}/${id}/archive`),
  saveIndicator: (slug: string, code: string, body: Omit<IndicatorMeta, "code">) =>
    apiFetch<IndicatorMeta>(`${intakeBase(slug)}/indicators/${encodeURIComponent(code)}`, { method: "PUT", body: JSON.stringify(body) }),
};

import { queryOptions } from "@tanstack/react-query";
import { apiFetch } from "@/lib/client/api-fetch";
import type { DeskSummary, RunOption, RunPieceRow, RunSummary, Timeline } from "@/lib/runs/queries";
import type { Comparison, MapGeometry, MapPeriod, MapRates } from "@/lib/runs/on-demand";
import type { RobustnessEntry } from "@/lib/runs/compare";
import type { PanelTransitions } from "@/lib/runs/panel-transitions";
import type { IndicatorMeta } from "@/lib/intake/published-panel";
import { catalogueRowsOf, type CatalogueAnswer } from "@/lib/runs/catalogue-wire";
import type { ReachabilityWarning } from "@/lib/runs/reachability";

// One options factory per resource of the analyses screens; mutations
// invalidate runsKeys.all(slug), which covers every key below.

export const runsKeys = {
  all: (slug: string) => ["analyses", slug] as const,
  runs: (slug: string) => ["analyses", slug, "runs"] as const,
  run: (slug: string, runId: number) => ["analyses", slug, "run", runId] as const,
  options: (slug: string) => ["analyses", slug, "run-options"] as const,
  catalogue: (slug: string, search: string) => ["analyses", slug, "catalogue", search] as const,
  timeline: (slug: string, indicator: string, run: number | null) => ["analyses", slug, "timeline", indicator, run] as const,
  robustness: (slug: string, indicator: string, run: number | null, period: string) => ["analyses", slug, "robustness", indicator, run, period] as const,
  map: (slug: string, indicator: string, run: number | null, period: string) => ["analyses", slug, "map", indicator, run, period] as const,
  mapRates: (slug: string, indicator: string, run: number | null, period: string) => ["analyses", slug, "map-rates", indicator, run, period] as const,
  geometry: (slug: string, run: number) => ["analyses", slug, "geometry", run] as const,
  compare: (slug: string, indicator: string, run: number | null, a: string, b: string) => ["analyses", slug, "compare", indicator, run, a, b] as const,
  panelTransitions: (slug: string, indicator: string, run: number | null, classes: number) => ["analyses", slug, "panel-transitions", indicator, run, classes] as const,
  desk: (slug: string) => ["analyses", slug, "desk"] as const,
};

const base = (slug: string) => `/api/w/${encodeURIComponent(slug)}`;
const qs = (params: Record<string, string | number | null | undefined>) => {
  const search = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== null && v !== undefined && v !== "") search.set(k, String(v));
  return search.toString();
};

const ACTIVE = new Set(["queued", "running"]);

export function runsQuery(slug: string) {
  return queryOptions({
    queryKey: runsKeys.runs(slug),
    queryFn: () => apiFetch<{ runs: RunSummary[] }>(`${base(slug)}/runs`).then((r) => r.runs),
    // Poll while anything is queued or running.
    refetchInterval: (query) => (query.state.data?.some((r) => ACTIVE.has(r.state)) ? 1000 : false),
  });
}

export function runQuery(slug: string, runId: number) {
  return queryOptions({
    queryKey: runsKeys.run(slug, runId),
    queryFn: () => apiFetch<{ run: RunSummary; pieces: RunPieceRow[] }>(`${base(slug)}/runs/${runId}`),
    refetchInterval: (query) => (query.state.data && ACTIVE.has(query.state.data.run.state) ? 1000 : false),
  });
}

export function runOptionsQuery(slug: string) {
  return queryOptions({
    queryKey: runsKeys.options(slug),
    queryFn: () => apiFetch<{ options: RunOption[] }>(`${base(slug)}/runs/options`).then((r) => r.options),
  });
}

/** `search` is the catalogue's own URL query (run, class, from, to, q). */
export function catalogueQuery(slug: string, search: string) {
  return queryOptions({
    queryKey: runsKeys.catalogue(slug, search),
    queryFn: () => apiFetch<CatalogueAnswer>(`${base(slug)}/catalogue?${search}`).then(catalogueRowsOf),
  });
}

export function catalogueExportUrl(slug: string, search: string): string {
  return `${base(slug)}/catalogue/export?${search}`;
}

export function timelineQuery(slug: string, indicator: string, run: number | null) {
  return queryOptions({
    queryKey: runsKeys.timeline(slug, indicator, run),
    queryFn: () => apiFetch<Timeline>(`${base(slug)}/timeline?${qs({ indicator, run })}`),
    enabled: indicator !== "",
  });
}

export function robustnessQuery(slug: string, indicator: string, run: number | null, period: string) {
  return queryOptions({
    queryKey: runsKeys.robustness(slug, indicator, run, period),
    queryFn: () =>
      apiFetch<{ runId: number; indicator: string; period: string; transform: string; entries: RobustnessEntry[] }>(
        `${base(slug)}/timeline/robustness?${qs({ indicator, run, period })}`,
      ),
    enabled: indicator !== "" && period !== "",
    staleTime: Infinity,
  });
}

export function mapQuery(slug: string, indicator: string, run: number | null, period: string) {
  return queryOptions({
    queryKey: runsKeys.map(slug, indicator, run, period),
    queryFn: () =>
      apiFetch<{ run: RunSummary; indicator: IndicatorMeta; map: MapPeriod; reachability: ReachabilityWarning | null }>(`${base(slug)}/map?${qs({ indicator, run, period })}`),
    enabled: indicator !== "" && period !== "",
    staleTime: 5 * 60_000,
  });
}

/** The rate layers of a rate indicator's map (raw, global and local empirical-Bayes rates); only asked for rate indicators. */
export function mapRatesQuery(slug: string, indicator: string, run: number | null, period: string, enabled: boolean) {
  return queryOptions({
    queryKey: runsKeys.mapRates(slug, indicator, run, period),
    queryFn: () => apiFetch<{ runId: number; indicator: string; rates: MapRates }>(`${base(slug)}/map/rates?${qs({ indicator, run, period })}`).then((r) => r.rates),
    enabled: enabled && indicator !== "" && period !== "",
    staleTime: 5 * 60_000,
  });
}

export function geometryQuery(slug: string, run: number | null) {
  return queryOptions({
    queryKey: runsKeys.geometry(slug, run ?? 0),
    queryFn: () => apiFetch<MapGeometry>(`${base(slug)}/map/geometry?${qs({ run })}`),
    enabled: run !== null,
    staleTime: Infinity,
  });
}

export function compareQuery(slug: string, indicator: string, run: number | null, a: string, b: string) {
  return queryOptions({
    queryKey: runsKeys.compare(slug, indicator, run, a, b),
    queryFn: () => apiFetch<{ runId: number; comparison: Comparison }>(`${base(slug)}/compare?${qs({ indicator, run, a, b })}`),
    enabled: indicator !== "" && a !== "" && b !== "" && a !== b,
    staleTime: Infinity,
  });
}

export function panelTransitionsQuery(slug: string, indicator: string, run: number | null, classes: number) {
  return queryOptions({
    queryKey: runsKeys.panelTransitions(slug, indicator, run, classes),
    queryFn: () => apiFetch<{ runId: number; transitions: PanelTransitions }>(`${base(slug)}/map/transitions?${qs({ indicator, run, classes })}`),
    enabled: indicator !== "",
    staleTime: Infinity,
  });
}

export function deskQuery(slug: string) {
  return queryOptions({
    queryKey: runsKeys.desk(slug),
    queryFn: () => apiFetch<DeskSummary>(`${base(slug)}/desk`),
    refetchInterval: (query) => (query.state.data?.runs.some((r) => ACTIVE.has(r.state)) ? 2000 : false),
  });
}

export async function postJson<T>(url: string, body: unknown): Promise<T> {
  return apiFetch<T>(url, { method: "POST", body: JSON.stringify(body) });
}

export const runsApi = {
  start: (slug: string, body: unknown) => postJson<{ runId: number; number: number }>(`${base(slug)}/runs`, body),
  cancel: (slug: string, runId: number) => postJson<{ runId: number }>(`${base(slug)}/runs/${runId}/cancel`, {}),
  rerun: (slug: string, runId: number) => postJson<{ runId: number; number: number }>(`${base(slug)}/runs/${runId}/rerun`, {}),
};

/** A run's export (docs/exports.md): global results, local results or weights, as CSV or JSON. */
export function runExportUrl(slug: string, runId: number, kind: "global" | "local" | "weights", format: "csv" | "json"): string {
  return `${base(slug)}/runs/${runId}/export/${kind}?format=${format}`;
}

"use client";

import "@/components/catalogue/ag-grid-setup";
import Link from "next/link";
import { FigureTable } from "@/components/ui/figure-table";
import { useMutation, useQuery } from "@tanstack/react-query";
import { AgGridReact } from "ag-grid-react";
import type { ColDef } from "ag-grid-community";
import { geoIdentity, geoMercator, geoPath, type GeoProjection, type GeoStreamWrapper } from "d3-geo";
import type { Feature, FeatureCollection, Geometry, GeoJsonProperties } from "geojson";
import { useMemo, useState } from "react";
import { feature } from "topojson-client";
import { apiFetch } from "@/lib/client/api-fetch";
import { inputClass, labelClass, primaryButton } from "@/components/ui/button-styles";
import { tesseraGridTheme } from "@/components/catalogue/ag-grid-setup";
import { Notice, Panel } from "@/components/intake/format";
import { intakeBase, overviewQuery, topologyQuery, type TopologyResponse } from "@/components/intake/query-options";
import type { CrosswalkDetail, HarmonisedVersion } from "@/lib/reforms/service";
import type { ChosenMethod, IndicatorMethod } from "@/lib/reforms/methods";
import { AREAL_WEIGHTING_CAUTION } from "./caution";
import { FigureDownloads, panelMapBody } from "@/components/figures/figure-downloads";
import { reformMapFigure } from "@/components/figures/figure-specs";

const WIDTH = 720;
const HEIGHT = 520;
// tailwind.config.ts: ink and ochre.
const INK = "#1e2a44";
const INK_100 = "#e3e7ef";
const OCHRE = "#c98a1b";
const OCHRE_200 = "#f0d48e";

type PairRow = CrosswalkDetail["pairs"][number];

export function CrosswalkScreen({ slug, crosswalkId }: { slug: string; crosswalkId: number }) {
  const detail = useQuery({ queryKey: ["reforms", slug, "crosswalk", crosswalkId], queryFn: () => apiFetch<CrosswalkDetail>(`${intakeBase(slug)}/crosswalks/${crosswalkId}`) });
  if (detail.error) return <Notice tone="error">{detail.error.message}</Notice>;
  if (!detail.data) return <p className="text-sm text-ink-500">Loading the crosswalk…</p>;
  const c = detail.data;
  return (
    <div className="space-y-6">
      <p className="text-sm text-ink-600" data-testid="crosswalk-heading">
        {c.from.setName} v{c.from.version} → {c.to.setName} v{c.to.version} · {c.origin === "derived" ? "derived from the overlap of areas" : `uploaded as ${c.fileName ?? "a CSV"}`} ·{" "}
        <strong data-testid="crosswalk-status">{c.status}</strong>
      </p>
      {c.status === "ready" ? <ReformMap slug={slug} detail={c} /> : null}
      <ReportPanel detail={c} />
      {c.status === "ready" ? <PairsTable pairs={c.pairs} /> : null}
      {c.status === "ready" ? <HarmoniseForm slug={slug} detail={c} /> : null}
      <Link className="text-sm text-ink underline" href={`/w/${slug}/intake/reforms`}>
        All crosswalks
      </Link>
    </div>
  );
}

function featuresOf(t: TopologyResponse): Feature<Geometry, GeoJsonProperties>[] {
  const collection = feature(t.topology, t.topology.objects[t.objectName]) as FeatureCollection<Geometry, GeoJsonProperties> | Feature<Geometry, GeoJsonProperties>;
  return collection.type === "FeatureCollection" ? collection.features : [collection];
}

function ReformMap({ slug, detail }: { slug: string; detail: CrosswalkDetail }) {
  const from = useQuery(topologyQuery(slug, detail.from.id));
  const to = useQuery(topologyQuery(slug, detail.to.id));
  const summary = detail.report?.summary;
  const drawn = useMemo(() => {
    if (!from.data || !to.data) return null;
    const target = featuresOf(to.data);
    const source = featuresOf(from.data);
    const fc: FeatureCollection = { type: "FeatureCollection", features: target };
    const projection: GeoProjection | GeoStreamWrapper =
      to.data.coordinates === "planar" ? geoIdentity().reflectY(true).fitSize([WIDTH, HEIGHT], fc) : geoMercator().fitSize([WIDTH, HEIGHT], fc);
    const path = geoPath(projection);
    return {
      target: target.map((f) => ({ code: String(f.properties?.[to.data.idProperty] ?? ""), d: path(f) ?? "" })),
      source: source.map((f) => ({ code: String(f.properties?.[from.data.idProperty] ?? ""), d: path(f) ?? "" })),
    };
  }, [from.data, to.data]);
  const merged = new Set(summary?.merged.map((m) => m.to) ?? []);
  const splitTargets = new Set(summary?.split.flatMap((s) => s.to) ?? []);
  const splitSources = new Set(summary?.split.map((s) => s.from) ?? []);
  return (
    <Panel
      title="The reform on a map"
      caption="New regions filled lightly; old regions outlined over them. Merged regions are ochre, the parts of a split region hatched."
      actions={drawn ? <FigureDownloads spec={reformMapFigure(detail)} body={(g) => panelMapBody(g)} testId="figure-reform-map" /> : null}
    >
      {from.error || to.error ? <Notice tone="error">{(from.error ?? to.error)?.message}</Notice> : null}
      {drawn ? (
        <figure>
          <svg viewBox={`0 0 ${WIDTH} ${HEIGHT}`} className="h-auto w-full rounded-md border border-ink-100 bg-ink-50/40" role="img" aria-label="Map of the reform" data-testid="reform-map">
            <defs>
              <pattern id="tessera-split-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
                <rect width="6" height="6" fill={INK_100} />
                <line x1="0" y1="0" x2="0" y2="6" stroke={OCHRE} strokeWidth="2" />
              </pattern>
            </defs>
            <g>
              {drawn.target.map((s) => (
                <path key={`t-${s.code}`} d={s.d} fill={merged.has(s.code) ? OCHRE_200 : splitTargets.has(s.code) ? "url(#tessera-split-hatch)" : INK_100} stroke="none" data-kind={merged.has(s.code) ? "merged" : splitTargets.has(s.code) ? "split" : undefined}>
                  <title>{`${s.code}${merged.has(s.code) ? " · merged" : splitTargets.has(s.code) ? " · part of a split region" : ""}`}</title>
                </path>
              ))}
            </g>
            <g fill="none">
              {drawn.source.map((s) => (
                <path key={`s-${s.code}`} d={s.d} stroke={splitSources.has(s.code) ? OCHRE : INK} strokeOpacity={0.6} strokeWidth={splitSources.has(s.code) ? 1.6 : 0.6} />
              ))}
            </g>
          </svg>
          <figcaption className="mt-2 flex flex-wrap gap-4 text-xs text-ink-600" data-testid="reform-legend">
            <span>
              <span className="mr-1 inline-block h-3 w-3 align-middle" style={{ background: OCHRE_200 }} /> merged ({summary?.merged.length ?? 0})
            </span>
            <span>
              <span className="mr-1 inline-block h-3 w-3 border align-middle" style={{ borderColor: OCHRE }} /> split ({summary?.split.length ?? 0})
            </span>
            <span>
              <span className="mr-1 inline-block h-3 w-3 align-middle" style={{ background: INK_100 }} /> unchanged ({summary?.unchanged ?? 0})
            </span>
            <span>Lines: the old regions.</span>
          </figcaption>
          <FigureTable
            summary={`The reform merged ${summary?.merged.length ?? 0} group${summary?.merged.length === 1 ? "" : "s"} of old regions into new ones, split ${summary?.split.length ?? 0} old region${summary?.split.length === 1 ? "" : "s"}, and left ${summary?.unchanged ?? 0} unchanged.`}
            caption="Merged and split regions of the reform"
            columns={[
              { key: "change", label: "Change" },
              { key: "from", label: "Old regions" },
              { key: "to", label: "New regions" },
            ]}
            rows={[
              ...(summary?.merged ?? []).map((m) => ({ change: "merged", from: m.from.join(", "), to: m.to })),
              ...(summary?.split ?? []).map((x) => ({ change: "split", from: x.from, to: x.to.join(", ") })),
            ]}
            testId="reform-map"
          />
        </figure>
      ) : (
        <p className="text-sm text-ink-500">Loading both boundary versions…</p>
      )}
    </Panel>
  );
}

function ReportPanel({ detail }: { detail: CrosswalkDetail }) {
  const r = detail.report;
  if (!r) return null;
  return (
    <Panel title="Report" caption="What the check found: problems in an uploaded file by line and code, and regions left out of the crosswalk.">
      <dl className="grid grid-cols-2 gap-2 text-sm md:grid-cols-4" data-testid="crosswalk-report">
        <dt className="text-ink-500">Errors</dt>
        <dd className="tabular-nums">{r.errorCount}</dd>
        <dt className="text-ink-500">Warnings</dt>
        <dd className="tabular-nums">{r.warningCount}</dd>
        <dt className="text-ink-500">Slivers dropped</dt>
        <dd className="tabular-nums">{r.droppedSlivers.length}</dd>
        <dt className="text-ink-500">Old regions unmatched</dt>
        <dd className="tabular-nums">{r.unmatchedFrom.length}</dd>
        <dt className="text-ink-500">New regions uncovered</dt>
        <dd className="tabular-nums">{r.uncoveredTo.length}</dd>
      </dl>
      {r.issues.length ? (
        <table className="mt-4 w-full text-left text-sm" data-testid="crosswalk-issues">
          <thead>
            <tr className="text-ink-500">
              <th className="py-1">Line</th>
              <th>Code</th>
              <th>Problem</th>
            </tr>
          </thead>
          <tbody>
            {r.issues.map((issue, i) => (
              <tr key={i} className={issue.severity === "error" ? "text-red-800" : "text-ink-700"}>
                <td className="py-1 tabular-nums">{issue.line ?? "—"}</td>
                <td>{issue.code}</td>
                <td>{issue.message}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
    </Panel>
  );
}

function PairsTable({ pairs }: { pairs: PairRow[] }) {
  const columns = useMemo<ColDef<PairRow>[]>(
    () => [
      { field: "from", headerName: "From (old region)", filter: true, flex: 1 },
      { field: "to", headerName: "To (new region)", filter: true, flex: 1 },
      { field: "share", headerName: "Share", filter: "agNumberColumnFilter", valueFormatter: (p) => (typeof p.value === "number" ? p.value.toFixed(4) : ""), flex: 1 },
    ],
    [],
  );
  return (
    <Panel title="Crosswalk table" caption="Each row: the share of the old region that goes to the new one. Filter a column to find a region.">
      <div style={{ height: 360 }} data-testid="crosswalk-grid">
        <AgGridReact<PairRow> theme={tesseraGridTheme} rowData={pairs} columnDefs={columns} />
      </div>
    </Panel>
  );
}

const METHOD_LABEL: Record<IndicatorMethod["kind"], string> = {
  extensive: "Count: share-weighted sum",
  intensive: "Rate or average: overlap-weighted mean",
  "intensive-by": "Rate or average: weighted by a denominator",
  rate: "Declared rate: re-derived from its harmonised events and population",
};

function HarmoniseForm({ slug, detail }: { slug: string; detail: CrosswalkDetail }) {
  const overview = useQuery(overviewQuery(slug));
  const candidates = (overview.data?.panels ?? []).flatMap((p) =>
    p.versions.filter((v) => (v.state === "validated" || v.state === "published") && p.boundarySetName === detail.from.setName && v.boundaryVersion === detail.from.version).map((v) => ({ id: v.id, label: `${p.name} v${v.version} (${v.state})` })),
  );
  // Versions already on the new boundaries: their periods are taken as observed there, the source's other periods carried.
  const continuations = (overview.data?.panels ?? []).flatMap((p) =>
    p.versions.filter((v) => (v.state === "validated" || v.state === "published") && p.boundarySetName === detail.to.setName && v.boundaryVersion === detail.to.version).map((v) => ({ id: v.id, label: `${p.name} v${v.version} (${v.state})` })),
  );
  const [panelVersionId, setPanelVersionId] = useState("");
  const [continuationId, setContinuationId] = useState("");
  const [chosen, setChosen] = useState<Record<string, ChosenMethod>>({});
  const defaults = useQuery({
    queryKey: ["reforms", slug, "defaults", panelVersionId],
    queryFn: () => apiFetch<{ indicators: string[]; methods: Record<string, IndicatorMethod> }>(`${intakeBase(slug)}/harmonise/defaults?panelVersionId=${panelVersionId}`),
    enabled: panelVersionId !== "",
  });
  const harmonise = useMutation({
    mutationFn: () => apiFetch<HarmonisedVersion>(`${intakeBase(slug)}/harmonise`, { method: "POST", body: JSON.stringify({
          panelVersionId: Number(panelVersionId),
          crosswalkId: detail.id,
          methods: chosen,
          ...(continuationId ? { continuationPanelVersionId: Number(continuationId) } : {}),
        }),
      }),
  });
  const counts = Object.entries(defaults.data?.methods ?? {}).filter(([, m]) => m.kind === "extensive").map(([code]) => code);
  return (
    <Panel title="Harmonise a panel" caption="Carries a panel version on the old boundaries onto the new ones as a new panel version (unpublished, validated like any upload).">
      <Notice tone="info">
        <span data-testid="harmonise-caution">{AREAL_WEIGHTING_CAUTION}</span>
      </Notice>
      <label className={`${labelClass} mt-4`}>
        Panel version on {detail.from.setName} v{detail.from.version}
        <select className={`${inputClass} mt-1`} value={panelVersionId} onChange={(e) => { setPanelVersionId(e.target.value); setChosen({}); }} data-testid="harmonise-panel">
          <option value="">Choose…</option>
          {candidates.map((c) => (
            <option key={c.id} value={c.id}>
              {c.label}
            </option>
          ))}
        </select>
      </label>
      <label className={`${labelClass} mt-4`}>
        Observed on {detail.to.setName} v{detail.to.version} (optional)
        <select className={`${inputClass} mt-1`} value={continuationId} onChange={(e) => setContinuationId(e.target.value)} data-testid="harmonise-continuation">
          <option value="">None: carry every period</option>
          {continuations.map((c) => (
            <option key={c.id} value={c.id}>
              {c.label}
            </option>
          ))}
        </select>
        <span className="mt-1 block text-xs font-normal text-ink-500">
          A version already on the new boundaries: its periods are kept as observed, the others are carried across, and its first period is recorded as the first on the new boundaries.
        </span>
      </label>
      {defaults.data ? (
        <table className="mt-4 w-full text-left text-sm" data-testid="harmonise-methods">
          <thead>
            <tr className="text-ink-500">
              <th className="py-1">Indicator</th>
              <th>Method</th>
              <th>Denominator</th>
            </tr>
          </thead>
          <tbody>
            {defaults.data.indicators.map((code) => {
              const base = defaults.data.methods[code];
              const current: IndicatorMethod = chosen[code] ?? base;
              return (
                <tr key={code}>
                  <td className="py-1 font-mono text-xs">{code}</td>
                  <td>
                    {base.kind === "rate" ? (
                      METHOD_LABEL.rate
                    ) : (
                      <select
                        className={inputClass}
                        value={current.kind}
                        data-testid={`method-${code}`}
                        onChange={(e) => {
                          const kind = e.target.value as ChosenMethod["kind"];
                          setChosen((c) => ({ ...c, [code]: kind === "intensive-by" ? { kind, denominator: counts[0] ?? "" } : { kind } }));
                        }}
                      >
                        <option value="extensive">{METHOD_LABEL.extensive}</option>
                        <option value="intensive">{METHOD_LABEL.intensive}</option>
                        <option value="intensive-by">{METHOD_LABEL["intensive-by"]}</option>
                      </select>
                    )}
                  </td>
                  <td>
                    {current.kind === "intensive-by" ? (
                      <select className={inputClass} value={current.denominator} onChange={(e) => setChosen((c) => ({ ...c, [code]: { kind: "intensive-by", denominator: e.target.value } }))}>
                        {defaults.data.indicators
                          .filter((d) => d !== code && defaults.data.methods[d].kind !== "rate")
                          .map((d) => (
                            <option key={d} value={d}>
                              {d}
                            </option>
                          ))}
                      </select>
                    ) : null}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      ) : null}
      <button type="button" className={`${primaryButton} mt-4`} disabled={!panelVersionId || harmonise.isPending} onClick={() => harmonise.mutate()} data-testid="harmonise-submit">
        {harmonise.isPending ? "Harmonising…" : "Harmonise"}
      </button>
      {harmonise.error ? <Notice tone="error">{harmonise.error.message}</Notice> : null}
      {harmonise.data ? (
        <Notice tone="success">
          <Link className="underline" href={`/w/${slug}/intake/panels/${harmonise.data.id}`} data-testid="harmonised-link">
            Version {harmonise.data.version} of {harmonise.data.panelName}
          </Link>{" "}
          is being validated.
        </Notice>
      ) : null}
      {detail.harmonised.length ? (
        <ul className="mt-4 text-sm" data-testid="harmonised-versions">
          {detail.harmonised.map((h) => (
            <li key={h.panelVersionId}>
              <Link className="underline" href={`/w/${slug}/intake/panels/${h.panelVersionId}`}>
                {h.panelName} v{h.version}
              </Link>{" "}
              ({h.state})
            </li>
          ))}
        </ul>
      ) : null}
    </Panel>
  );
}

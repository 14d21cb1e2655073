"use client";

import Link from "next/link";
import { IndicatorPicker } from "@/components/runs/indicator-picker";
import { useIndicatorTimeline } from "@/components/runs/use-indicator-timeline";
import { useQuery } from "@tanstack/react-query";
import { scaleSequential } from "d3-scale";
import { interpolateYlOrBr } from "d3-scale-chromatic";
import type { EChartsOption } from "echarts";
import { useMemo, useState } from "react";
import { EChart, INK, MUTED } from "@/components/charts/echart";
import { inputClass, secondaryButton } from "@/components/ui/button-styles";
import { fmt, fmtP, Notice, Panel, SignificanceBadge } from "@/components/runs/format";
import { CLUSTER_CLASS_COLOURS, CLUSTER_CLASS_NAMES, CLUSTER_CLASS_ORDER, clusterClassLegendSentence } from "@/lib/runs/cluster-classes";
import { compareQuery, geometryQuery, mapQuery, mapRatesQuery } from "@/components/runs/query-options";
import { LocalInferenceNote } from "@/components/runs/reachability-note";
import type { ClusterClass, IndependenceTest } from "@/lib/spatial";
import type { MapPeriod } from "@/lib/runs/on-demand";
import { escapeHtml } from "@/lib/security/html";
import { periodPair } from "@/lib/runs/period-order";
import { formatTick, formatValue } from "@/lib/runs/number-format";
import { RunPicker } from "@/components/runs/run-picker";
import { RegressionPanel } from "@/components/runs/regression-panel";
import { PanelTransitions } from "./panel-transitions";
import { ReformNote } from "@/components/reforms/reform-note";
import { RegionMap, useRegionFeatures } from "./region-map";
import { CLUSTER_CLASS_PATTERNS } from "@/lib/runs/class-patterns";
import { PatternSwatch } from "./class-pattern";
import { ChoroplethAlternative, ClusterMapAlternative, ScatterAlternative } from "./figure-alternatives";
import { GiStarDetailRows, GiStarPanel, LocalMapViewSwitch } from "./gi-star-map";
import { RATE_LAYER_NAMES, RATE_RAMP, RateChoropleth, RateLayerSwitch, rateScale, type RateLayer } from "./rate-layers";
import type { LocalMapView } from "@/lib/runs/gi-star-classes";
import { FigureDownloads, panelMapBody } from "@/components/figures/figure-downloads";
import { echartsFigureBody } from "@/components/figures/echarts-body";
import { choroplethFigure, clusterMapFigure, giStarMapFigure, rateMapFigure, scatterFigure } from "@/components/figures/figure-specs";
import { figureSourceLine } from "@/lib/runs/figures";
import type { RunSummary } from "@/lib/runs/queries";
import type { IndicatorMeta } from "@/lib/intake/published-panel";

const CLASSES = CLUSTER_CLASS_ORDER;

export function MapScreen({ slug, indicators }: { slug: string; indicators: { code: string; label: string }[] }) {
  const { params, setParams: set, indicator, timeline, periods, runId } = useIndicatorTimeline(slug, indicators);
  // Earlier period on the left whatever order the link or URL gave (lib/runs/period-order).
  const { earlier: a, later: b } = periodPair(periods, params.get("a"), params.get("b"));
  const geometry = useQuery(geometryQuery(slug, runId));
  const mapA = useQuery(mapQuery(slug, indicator, runId, a));
  const mapB = useQuery(mapQuery(slug, indicator, runId, b));
  const compare = useQuery(compareQuery(slug, indicator, runId, a, b));
  const features = useRegionFeatures(geometry.data);
  const [hovered, setHovered] = useState<string | null>(null);
  const [selected, setSelected] = useState<string | null>(null);
  const [localView, setLocalView] = useState<LocalMapView>("clusters");
  const active = hovered ?? selected;
  const unit = mapA.data?.indicator.unit ?? "";
  // A declared rate gets three layers: raw, global and local empirical-Bayes rates.
  const isRate = Boolean(mapA.data?.indicator.rate);
  const ratesA = useQuery(mapRatesQuery(slug, indicator, runId, a, isRate));
  const ratesB = useQuery(mapRatesQuery(slug, indicator, runId, b, isRate));
  const [rateLayer, setRateLayer] = useState<RateLayer>("raw");
  const ratesScale = useMemo(() => rateScale([ratesA.data, ratesB.data]), [ratesA.data, ratesB.data]);

  // One colour scale for both periods, so the same colour means the same value.
  const scale = useMemo(() => {
    const values = [mapA.data?.map, mapB.data?.map].flatMap((m) => (m ? Object.values(m.values).filter((v): v is number => v !== null) : []));
    if (!values.length) return null;
    return scaleSequential(interpolateYlOrBr).domain([Math.min(...values), Math.max(...values)]);
  }, [mapA.data, mapB.data]);

  const names = geometry.data?.names ?? {};
  const labels = useMemo(() => new Map(indicators.map((i) => [i.code, i.label])), [indicators]);
  const loading = geometry.isPending || mapA.isPending || mapB.isPending;
  const error = timeline.error ?? geometry.error ?? mapA.error ?? mapB.error;
  // What every downloaded figure of this screen says about where it comes from (lib/runs/figures.ts).
  const figure = mapA.data ? { run: mapA.data.run, indicator: mapA.data.indicator, harmonised: Boolean(timeline.data?.harmonisation) } : null;

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end gap-4 print:hidden">
        <IndicatorPicker id="map-indicator" value={indicator} indicators={indicators} onChange={(code) => set({ indicator: code, run: null })} />
        <RunPicker id="map-run" slug={slug} indicator={indicator} value={timeline.data?.run.id ?? null} onChange={(id) => set({ run: String(id) })} />
        <div>
          <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor="map-a">
            Earlier period
          </label>
          <select id="map-a" className={`${inputClass} mt-1 w-28`} value={a} onChange={(e) => set({ a: e.target.value })}>
            {periods.map((p) => (
              <option key={p}>{p}</option>
            ))}
          </select>
        </div>
        <div>
          <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor="map-b">
            Later period
          </label>
          <select id="map-b" className={`${inputClass} mt-1 w-28`} value={b} onChange={(e) => set({ b: e.target.value })}>
            {periods.map((p) => (
              <option key={p}>{p}</option>
            ))}
          </select>
        </div>
        <div className="ml-auto flex gap-2">
          <Link className={secondaryButton} href={`/w/${slug}/timeline?indicator=${encodeURIComponent(indicator)}${runId ? `&run=${runId}` : ""}`}>
            Timeline
          </Link>
          <Link className={secondaryButton} href={`/w/${slug}/compare?indicator=${encodeURIComponent(indicator)}${runId ? `&run=${runId}` : ""}&a=${a}&b=${b}`}>
            Compare {a} and {b}
          </Link>
        </div>
      </div>
      {error ? <Notice tone="error">{error.message}</Notice> : null}
      {timeline.data?.harmonisation ? <ReformNote harmonisation={timeline.data.harmonisation} indicator={indicator} shown={a === b ? [a] : [a, b]} testId="map-reform" /> : null}
      {loading && !error ? <p className="text-sm text-ink-500">Loading maps…</p> : null}
      {mapA.data && mapB.data && geometry.data ? (
        <>
          <p className="hidden text-xs text-ink-600 print:block" data-testid="map-print-source">
            {mapA.data.indicator.label} · {figureSourceLine(mapA.data.run, { periods: a === b ? [a] : [a, b] })}
          </p>
          <div className="print:hidden">
            <LocalMapViewSwitch value={localView} onChange={setLocalView} />
          </div>
          <div className="grid gap-6 lg:grid-cols-2">
            {[mapA.data.map, mapB.data.map].map((m, k) =>
              localView === "gi-star" ? (
                <GiStarPanel
                  key={`gi-star-${k}`}
                  map={m}
                  indicator={indicator}
                  features={features}
                  coordinates={geometry.data.coordinates}
                  names={names}
                  activeId={active}
                  onHover={setHovered}
                  onSelect={setSelected}
                  warning={(k === 0 ? mapA.data : mapB.data).reachability}
                  testId={k === 0 ? "a" : "b"}
                  actions={figure && m.giStar ? <FigureDownloads spec={giStarMapFigure(figure, m)} body={(g) => panelMapBody(g)} testId={`figure-gi-star-map-${k === 0 ? "a" : "b"}`} /> : null}
                />
              ) : (
              <Panel
                key={`cluster-${k}`}
                title={`Local clusters, ${m.period}`}
                actions={
                  <div className="flex flex-wrap items-center justify-end gap-3">
                    <PeriodBadge map={m} />
                    {figure ? <FigureDownloads spec={clusterMapFigure(figure, m)} body={(g) => panelMapBody(g)} testId={`figure-cluster-map-${k === 0 ? "a" : "b"}`} /> : null}
                  </div>
                }
                caption={clusterCaption(m)}
              >
                <RegionMap
                  features={features}
                  coordinates={geometry.data.coordinates}
                  fill={(id) => CLUSTER_CLASS_COLOURS[clusterOf(m, id) ?? "not-significant"]}
                  hatched={(id) => {
                    const c = clusterOf(m, id);
                    return c === "no-neighbours" || c === null;
                  }}
                  regionClass={(id) => clusterOf(m, id) ?? "no-value"}
                  regionTitle={(id) => {
                    const c = clusterOf(m, id);
                    return `${names[id] ? `${names[id]} (${id})` : id}: ${c ? CLUSTER_CLASS_NAMES[c] : "no value"}`;
                  }}
                  patterns={CLUSTER_CLASS_PATTERNS}
                  activeId={active}
                  onHover={setHovered}
                  onSelect={setSelected}
                  label={`Local cluster map of ${indicator} in ${m.period}`}
                  testId={`cluster-map-${k === 0 ? "a" : "b"}`}
                />
                <ClusterLegend map={m} />
                <ClusterMapAlternative map={m} indicator={mapA.data.indicator.label} names={names} unit={unit} testId={`cluster-map-${k === 0 ? "a" : "b"}`} />
                <LocalInferenceNote warning={(k === 0 ? mapA.data : mapB.data).reachability} local={m.local} testId={k === 0 ? "a" : "b"} />
              </Panel>
              ),
            )}
          </div>
          {isRate ? (
            <div className="print:hidden">
              <RateLayerSwitch value={rateLayer} onChange={setRateLayer} />
            </div>
          ) : null}
          {isRate ? (
            <div className="grid gap-6 lg:grid-cols-2">
              {[ratesA, ratesB].map((r, k) => (
                <RateChoropleth
                  key={`rate-${k}`}
                  rates={r.data}
                  layer={rateLayer}
                  scale={ratesScale}
                  title={`${mapA.data.indicator.label}, ${k === 0 ? a : b}`}
                  unit={unit}
                  features={features}
                  coordinates={geometry.data.coordinates}
                  names={names}
                  activeId={active}
                  onHover={setHovered}
                  onSelect={setSelected}
                  testId={`rate-map-${k === 0 ? "a" : "b"}`}
                  actions={
                    figure && r.data && ratesScale ? (
                      <FigureDownloads
                        spec={rateMapFigure(figure, r.data.period, RATE_LAYER_NAMES[rateLayer], RATE_RAMP, formatValue(ratesScale.domain[0], { unit }), formatValue(ratesScale.domain[1], { unit }))}
                        body={(g) => panelMapBody(g)}
                        testId={`figure-rate-map-${k === 0 ? "a" : "b"}`}
                      />
                    ) : null
                  }
                />
              ))}
            </div>
          ) : (
          <div className="grid gap-6 lg:grid-cols-2">
            {[mapA.data.map, mapB.data.map].map((m, k) => (
              <Panel
                key={`value-${k}`}
                title={`${mapA.data.indicator.label}, ${m.period}${unit ? ` (${unit})` : ""}`}
                caption={`Sequential colour scale (yellow–orange–brown) shared by both periods, from the lowest to the highest value shown. Hatched regions have no value in ${m.period}.`}
                actions={
                  figure && scale ? (
                    <FigureDownloads
                      spec={choroplethFigure(figure, m.period, formatValue(scale.domain()[0], { unit }), formatValue(scale.domain()[1], { unit }))}
                      body={(g) => panelMapBody(g)}
                      testId={`figure-choropleth-${k === 0 ? "a" : "b"}`}
                    />
                  ) : null
                }
              >
                <RegionMap
                  features={features}
                  coordinates={geometry.data.coordinates}
                  fill={(id) => {
                    const v = m.values[id];
                    return v === null || v === undefined || !scale ? "#f5f5f4" : scale(v);
                  }}
                  hatched={(id) => m.values[id] === null || m.values[id] === undefined}
                  activeId={active}
                  onHover={setHovered}
                  onSelect={setSelected}
                  regionTitle={(id) => `${names[id] ? `${names[id]} (${id})` : id}: ${formatValue(m.values[id], { unit })}`}
                  label={`Choropleth of ${indicator} in ${m.period}`}
                  testId={`choropleth-${k === 0 ? "a" : "b"}`}
                />
                {scale ? <ScaleLegend domain={scale.domain() as [number, number]} unit={unit} /> : null}
                <ChoroplethAlternative map={m} indicator={mapA.data.indicator.label} names={names} unit={unit} testId={`choropleth-${k === 0 ? "a" : "b"}`} />
              </Panel>
            ))}
          </div>
          )}
          {[mapA.data, mapB.data].map((d, k) =>
            d.map.regression && (k === 0 || d.map.period !== mapA.data.map.period) ? (
              <RegressionPanel
                key={`regression-${k}`}
                regression={d.map.regression}
                period={d.map.period}
                indicatorLabel={d.indicator.label}
                labels={labels}
                alpha={d.run.params.alpha}
                rawI={d.map.I}
                testId={k === 0 ? "a" : "b"}
              />
            ) : null,
          )}
          <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
            <RegionDetail id={active} names={names} a={mapA.data.map} b={mapB.data.map} unit={unit} />
            <Panel
              title={`Cluster classes from ${a} to ${b}`}
              caption="Rows are the class in period A, columns the class in period B; each cell counts regions. The diagonal holds regions that kept their class."
            >
              {compare.data?.comparison.transitions ? (
                <TransitionTable
                  counts={compare.data.comparison.transitions.counts}
                  moved={compare.data.comparison.transitions.moved}
                  independence={compare.data.comparison.transitions.independence}
                  a={a}
                  b={b}
                />
              ) : compare.isPending ? (
                <p className="text-sm text-ink-500">Counting transitions…</p>
              ) : (
                <Notice>Transitions need local results for both periods.</Notice>
              )}
            </Panel>
          </div>
          <PanelTransitions
            slug={slug}
            indicator={indicator}
            runId={runId}
            standardisedInRun={mapA.data.run.params.empiricalBayes?.some((d) => d.indicator === indicator) ?? false}
          />
          <div className="grid gap-6 lg:grid-cols-2">
            {[mapA.data.map, mapB.data.map].map((m, k) => (
              <ScatterPanel key={`scatter-${k}`} map={m} unit={unit} active={active} onSelect={setSelected} testId={`scatter-${k === 0 ? "a" : "b"}`} figure={figure} indicator={mapA.data.indicator.label} names={names} />
            ))}
          </div>
        </>
      ) : null}
    </div>
  );
}

function clusterOf(m: MapPeriod, id: string): ClusterClass | null {
  if (!m.local) return null;
  const i = m.local.ids.indexOf(id);
  return i < 0 ? null : m.local.cluster[i];
}

function clusterCaption(m: MapPeriod): string {
  if (!m.local) return m.note ?? "No local results were stored for this period.";
  const corr = m.local.correction === "fdr" ? "false discovery rate" : m.local.correction === "bonferroni" ? "Bonferroni" : "no";
  return `Local Moran's I per region with conditional permutation pseudo p (two-sided) and ${corr} correction across regions at α = ${m.local.alpha}. ${clusterClassLegendSentence()} (hatched).`;
}

function PeriodBadge({ map }: { map: MapPeriod }) {
  return (
    <div className="flex items-center gap-2 text-xs text-ink-500">
      <span className="tabular-nums">
        I = {fmt(map.I)} · p = {fmtP(map.pseudoP)}
      </span>
      <SignificanceBadge value={map.significance} />
    </div>
  );
}

function ClusterLegend({ map }: { map: MapPeriod }) {
  const counts = map.local?.counts;
  return (
    <ul className="mt-3 flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-600">
      {CLASSES.map((c) => (
        <li key={c} className="flex items-center gap-1.5">
          <PatternSwatch pattern={CLUSTER_CLASS_PATTERNS[c]} id={`cluster-${c}`} />
          {CLUSTER_CLASS_NAMES[c]} <span className="tabular-nums text-ink-400">{counts ? counts[c] : 0}</span>
        </li>
      ))}
    </ul>
  );
}

function ScaleLegend({ domain, unit }: { domain: [number, number]; unit: string }) {
  const stops = Array.from({ length: 11 }, (_, i) => interpolateYlOrBr(i / 10));
  return (
    <div className="mt-3">
      <div className="h-2.5 w-full rounded-sm" style={{ background: `linear-gradient(to right, ${stops.join(",")})` }} />
      <div className="mt-1 flex justify-between text-xs tabular-nums text-ink-500" data-testid="scale-legend">
        <span>{formatValue(domain[0], { unit })}</span>
        <span>{formatValue(domain[1], { unit })}</span>
      </div>
    </div>
  );
}

function RegionDetail({ id, names, a, b, unit }: { id: string | null; names: Record<string, string | null>; a: MapPeriod; b: MapPeriod; unit: string }) {
  if (!id) {
    return (
      <Panel title="Region" className="print:hidden">
        <p className="text-sm text-ink-500">Hover over or click a region on any map or scatter plot to see it everywhere at once.</p>
      </Panel>
    );
  }
  const row = (m: MapPeriod) => {
    const i = m.local?.ids.indexOf(id) ?? -1;
    return {
      value: m.values[id] ?? null,
      cluster: i >= 0 && m.local ? m.local.cluster[i] : null,
      Ii: i >= 0 && m.local ? m.local.Ii[i] : null,
      p: i >= 0 && m.local ? m.local.pseudoP[i] : null,
    };
  };
  const ra = row(a);
  const rb = row(b);
  return (
    <Panel title={`${names[id] ?? id} (${id})`}>
      <table className="w-full text-sm" data-testid="region-detail">
        <thead className="text-left text-xs uppercase tracking-wider text-ink-400">
          <tr>
            <th className="py-1" />
            <th className="py-1 text-right">{a.period}</th>
            <th className="py-1 text-right">{b.period}</th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-50">
          <tr>
            <td className="py-1.5 text-ink-500">Value{unit ? ` (${unit})` : ""}</td>
            <td className="py-1.5 text-right tabular-nums">{formatValue(ra.value)}</td>
            <td className="py-1.5 text-right tabular-nums">{formatValue(rb.value)}</td>
          </tr>
          <tr>
            <td className="py-1.5 text-ink-500">Cluster class</td>
            <td className="py-1.5 text-right">{ra.cluster ? CLUSTER_CLASS_NAMES[ra.cluster] : "—"}</td>
            <td className="py-1.5 text-right">{rb.cluster ? CLUSTER_CLASS_NAMES[rb.cluster] : "—"}</td>
          </tr>
          <tr>
            <td className="py-1.5 text-ink-500">Local I</td>
            <td className="py-1.5 text-right tabular-nums">{fmt(ra.Ii)}</td>
            <td className="py-1.5 text-right tabular-nums">{fmt(rb.Ii)}</td>
          </tr>
          <tr>
            <td className="py-1.5 text-ink-500">Pseudo p</td>
            <td className="py-1.5 text-right tabular-nums">{fmtP(ra.p)}</td>
            <td className="py-1.5 text-right tabular-nums">{fmtP(rb.p)}</td>
          </tr>
          <GiStarDetailRows id={id} a={a} b={b} />
        </tbody>
      </table>
    </Panel>
  );
}

function TransitionTable({ counts, moved, independence, a, b }: { counts: number[][]; moved: number; independence: IndependenceTest | null; a: string; b: string }) {
  const max = Math.max(1, ...counts.flat());
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="transition-table">
        <thead>
          <tr className="text-xs text-ink-400">
            <th className="py-1 text-left font-medium">
              {a} ↓ / {b} →
            </th>
            {CLASSES.map((c) => (
              <th key={c} className="px-1 py-1 text-right font-medium">
                {CLUSTER_CLASS_NAMES[c]}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {CLASSES.map((from, i) => (
            <tr key={from}>
              <th className="py-1 pr-2 text-left text-xs font-medium text-ink-500">{CLUSTER_CLASS_NAMES[from]}</th>
              {CLASSES.map((to, j) => {
                const v = counts[i]?.[j] ?? 0;
                return (
                  <td
                    key={to}
                    className={`px-1 py-1 text-right tabular-nums ${i === j ? "font-semibold" : ""} ${v === 0 ? "text-ink-500" : "text-ink"}`}
                    style={{ background: v ? `rgba(201,138,27,${(0.08 + 0.4 * (v / max)).toFixed(2)})` : undefined }}
                  >
                    {v}
                  </td>
                );
              })}
            </tr>
          ))}
        </tbody>
      </table>
      <p className="mt-2 text-xs text-ink-500">
        {moved} region{moved === 1 ? "" : "s"} changed class between {a} and {b}.
      </p>
      {independence ? (
        <p className="mt-1 text-xs text-ink-500" data-testid="transition-independence">
          Is the {b} class independent of the {a} class? Pearson χ² = {fmt(independence.chiSquare, 2)}, df {independence.degreesOfFreedom}, p = {fmtP(independence.p)}.
          Neighbouring regions are not independent observations, so this p is optimistic.
          {independence.expectedBelow5 > independence.cells / 5
            ? ` ${independence.expectedBelow5} of ${independence.cells} cells expect fewer than 5 regions: the χ² approximation is rough here.`
            : ""}
        </p>
      ) : (
        <p className="mt-1 text-xs text-ink-500" data-testid="transition-independence">
          No χ² test of independence: it needs regions in at least two classes in both {a} and {b}.
        </p>
      )}
    </div>
  );
}

function ScatterPanel({
  map,
  unit,
  active,
  onSelect,
  testId,
  figure,
  indicator,
  names,
}: {
  map: MapPeriod;
  unit: string;
  active: string | null;
  onSelect: (id: string) => void;
  testId: string;
  figure: { run: RunSummary; indicator: IndicatorMeta; harmonised: boolean } | null;
  indicator: string;
  names: Record<string, string | null>;
}) {
  const local = map.local;
  if (!local) {
    return (
      <Panel title={`Moran scatter plot, ${map.period}`}>
        <Notice>{map.note ?? "No local results for this period."}</Notice>
      </Panel>
    );
  }
  const xs = local.standardised;
  const extent = Math.ceil(Math.max(2, ...xs.map(Math.abs), ...local.lag.map(Math.abs)) * 1.05);
  const points = local.ids.map((id, i) => ({
    value: [xs[i], local.lag[i]],
    name: id,
    itemStyle: {
      color: CLUSTER_CLASS_COLOURS[local.cluster[i]],
      borderColor: id === active ? INK : "rgba(30,42,68,0.35)",
      borderWidth: id === active ? 2.5 : 0.5,
    },
    symbolSize: id === active ? 14 : 7,
  }));
  const option: EChartsOption = {
    grid: { left: 60, right: 20, top: 20, bottom: 50 },
    // ECharts inserts a formatter's string as HTML; region codes come from uploaded files.
    tooltip: {
      trigger: "item",
      formatter: (p) => {
        if (Array.isArray(p)) return "";
        const i = local.ids.indexOf(String(p.name ?? ""));
        return escapeHtml(i < 0 ? String(p.name ?? "") : `${local.ids[i]} · ${CLUSTER_CLASS_NAMES[local.cluster[i]]} · ${formatValue(map.values[local.ids[i]], { unit })}`);
      },
    },
    xAxis: { type: "value", min: -extent, max: extent, name: "Standardised value z (sd units)", nameLocation: "middle", nameGap: 30, axisLabel: { color: INK, formatter: formatTick }, splitLine: { show: false } },
    yAxis: { type: "value", min: -extent, max: extent, name: "Spatial lag of z (sd units)", nameLocation: "middle", nameGap: 40, axisLabel: { color: INK, formatter: formatTick }, splitLine: { show: false } },
    series: [
      {
        type: "scatter",
        data: points,
        markLine: {
          symbol: "none",
          silent: true,
          lineStyle: { color: MUTED, type: "solid", width: 1 },
          label: { show: false },
          data: [{ xAxis: 0 }, { yAxis: 0 }],
        },
      },
      {
        type: "line",
        name: "slope",
        data: [
          [-extent, -extent * local.slope],
          [extent, extent * local.slope],
        ],
        symbol: "none",
        lineStyle: { color: "#c98a1b", width: 2 },
        silent: true,
        tooltip: { show: false },
      },
    ],
  };
  return (
    <Panel
      title={`Moran scatter plot, ${map.period}`}
      actions={figure ? <FigureDownloads spec={scatterFigure(figure, map)} body={() => echartsFigureBody(option, 560, 520)} testId={`figure-${testId}`} /> : null}
      caption={`Each point is a region: its standardised value against the average of its neighbours. The ochre line through the origin has slope ${fmt(local.slope)}, which equals Moran's I for row-standardised weights (I = ${fmt(map.I)}). Colours are the cluster classes.`}
    >
      <EChart option={option} height={320} testId={testId} onClick={(p) => p.name && onSelect(p.name)} label={`Moran scatter plot of ${indicator} in ${map.period}`} />
      <ScatterAlternative map={map} indicator={indicator} names={names} testId={testId} />
    </Panel>
  );
}

"use client";

import Link from "next/link";
import { IndicatorPicker } from "@/components/runs/indicator-picker";
import { useIndicatorTimeline } from "@/components/runs/use-indicator-timeline";
import { useQuery } from "@tanstack/react-query";
import type { EChartsOption } from "echarts";
import { secondaryButton } from "@/components/ui/button-styles";
import { fmt, fmtP, fmtSigned, Notice, Panel, SignificanceBadge } from "@/components/runs/format";
import { RunPicker } from "@/components/runs/run-picker";
import { runLabel } from "@/lib/runs/label";
import { CLUSTER_CLASS_COLOURS } from "@/lib/runs/cluster-classes";
import { distanceSentence } from "@/lib/runs/distances";
import { robustnessQuery } from "@/components/runs/query-options";
import type { Timeline } from "@/lib/runs/queries";
import { MODEL_SUGGESTION_LABELS } from "@/lib/runs/types";
import type { HarmonisationView } from "@/lib/intake/harmonisation";
import { carriedSentence, crosswalkLabel, reformMarkLabel } from "@/lib/reforms/describe";
import { ReformNote } from "@/components/reforms/reform-note";
import { escapeHtml } from "@/lib/security/html";
import { EChart, INK, MUTED, OCHRE, REFORM_MARK, REFORM_SHADE } from "./echart";
import { FigureDownloads } from "@/components/figures/figure-downloads";
import { echartsFigureBody } from "@/components/figures/echarts-body";
import { moranTimelineFigure, robustnessFigure, zTimelineFigure } from "@/components/figures/figure-specs";
import { figureSourceLine } from "@/lib/runs/figures";
import { FigureTable } from "@/components/ui/figure-table";
import { seriesSummary } from "@/lib/runs/figure-summary";

/** The reform mark of a harmonised run's charts: a line at the first period on the new boundaries, the carried periods shaded. */
function reformMarks(harmonisation: HarmonisationView | null, periods: readonly string[], withLabel = true) {
  if (!harmonisation) return {};
  const label = reformMarkLabel(harmonisation);
  const carried = periods.filter((p) => harmonisation.carriedPeriods.includes(p));
  return {
    ...(label && periods.includes(harmonisation.firstPeriodOnTarget ?? "")
      ? {
          markLine: {
            symbol: "none",
            silent: true,
            lineStyle: { color: REFORM_MARK, type: "solid" as const, width: 1.5 },
            label: withLabel
              ? { formatter: label, position: "insideEndTop" as const, color: REFORM_MARK, fontSize: 11, backgroundColor: "rgba(255,255,255,0.85)", padding: [1, 3] }
              : { show: false },
            data: [{ xAxis: harmonisation.firstPeriodOnTarget as string }],
          },
        }
      : {}),
    ...(carried.length
      ? { markArea: { silent: true, itemStyle: { color: REFORM_SHADE }, data: [[{ xAxis: carried[0] }, { xAxis: carried[carried.length - 1] }]] as [{ xAxis: string }, { xAxis: string }][] } }
      : {}),
  };
}


/** The residual line: ochre-700 of the palette, dotted with diamonds so it reads apart from the solid I and the round significance marks. */
const RESIDUAL = "#865214";
const RESIDUAL_SERIES = "Moran's I of the residuals";

export function TimelineScreen({ slug, indicators }: { slug: string; indicators: { code: string; label: string }[] }) {
  const { params, setParams: set, router, indicator, run, timeline: data, periods } = useIndicatorTimeline(slug, indicators);
  const strip = params.get("period") ?? periods[periods.length - 1] ?? "";

  const openMap = (period: string) => {
    const runId = data.data?.run.id;
    router.push(`/w/${slug}/map?indicator=${encodeURIComponent(indicator)}${runId ? `&run=${runId}` : ""}&a=${encodeURIComponent(period)}`);
  };

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end gap-4 print:hidden">
        <IndicatorPicker id="tl-indicator" value={indicator} indicators={indicators} onChange={(code) => set({ indicator: code, run: null, period: null })} />
        <RunPicker id="tl-run" slug={slug} indicator={indicator} value={data.data?.run.id ?? null} onChange={(id) => set({ run: String(id), period: null })} />
        {data.data ? (
          <p className="pb-2 text-sm text-ink-500" data-testid="timeline-run">
            {runLabel(data.data.run)} · seed <span className="font-mono">{data.data.run.params.seed}</span>
          </p>
        ) : null}
        <div className="ml-auto flex gap-2 pb-0.5">
          <Link className={secondaryButton} href={`/w/${slug}/compare?indicator=${encodeURIComponent(indicator)}${run ? `&run=${run}` : ""}`}>
            Compare two periods
          </Link>
        </div>
      </div>
      {data.error ? <Notice tone="error">{data.error.message}</Notice> : null}
      {data.isPending && indicator ? <p className="text-sm text-ink-500">Loading the timeline…</p> : null}
      {data.data ? (
        <>
          <p className="hidden text-xs text-ink-600 print:block" data-testid="timeline-print-source">
            {data.data.indicator.label} · {figureSourceLine(data.data.run)}
          </p>
          {data.data.indicator.description ? <p className="max-w-3xl text-sm text-ink-600">{data.data.indicator.description}</p> : null}
          {data.data.harmonisation ? <ReformNote harmonisation={data.data.harmonisation} indicator={data.data.indicator.code} testId="timeline-reform" /> : null}
          <MoranChart timeline={data.data} onPeriod={openMap} />
          <ZChart timeline={data.data} onPeriod={openMap} />
          <RobustnessStrip slug={slug} indicator={indicator} run={data.data.run.id} period={strip} periods={periods} onPeriod={(p) => set({ period: p })} timeline={data.data} />
          <PeriodTable timeline={data.data} onPeriod={openMap} />
        </>
      ) : null}
    </div>
  );
}

function MoranChart({ timeline, onPeriod }: { timeline: Timeline; onPeriod: (period: string) => void }) {
  const pts = timeline.points;
  const reform = timeline.harmonisation;
  const periods = pts.map((p) => p.period);
  const significant = pts.map((p) => (p.significance === "clustering" || p.significance === "dispersion" ? p.I : null));
  const controlFor = timeline.run.params.controlFor ?? [];
  // A second line when the run controlled for covariates and this indicator is not one of them.
  const residual = controlFor.length > 0 && !controlFor.includes(timeline.indicator.code);
  const option: EChartsOption = {
    grid: { left: 64, right: 24, top: 44, bottom: 48 },
    legend: {
      top: 0,
      left: "center",
      itemGap: 30,
      data: ["Moran's I", ...(residual ? [RESIDUAL_SERIES] : []), "E[I]", "95 % band under the null", "Significant after correction"],
      textStyle: { color: INK },
    },
    tooltip: {
      trigger: "axis",
      valueFormatter: (v) => (typeof v === "number" ? v.toFixed(3) : String(v ?? "—")),
      ...(reform
        ? {
            formatter: (raw: unknown) => {
              const items = (Array.isArray(raw) ? raw : [raw]) as { axisValue?: string; seriesName?: string; value?: unknown; marker?: string }[];
              const period = items[0]?.axisValue ?? "";
              const lines = items
                .filter((i) => i.seriesName && !i.seriesName.startsWith("band") && !i.seriesName.startsWith("95 %"))
                // marker is ECharts' own coloured dot (HTML it builds from the palette).
                .map((i) => `${i.marker ?? ""}${escapeHtml(i.seriesName ?? "")}: ${typeof i.value === "number" ? i.value.toFixed(3) : "—"}`);
              const where = reform.carriedPeriods.includes(period) ? `Carried across the reform through ${crosswalkLabel(reform)}` : "Observed on the new boundaries";
              return [escapeHtml(period), ...lines, escapeHtml(where)].join("<br/>");
            },
          }
        : {}),
    },
    xAxis: { type: "category", data: periods, name: "Period (year)", nameLocation: "middle", nameGap: 30, axisLine: { lineStyle: { color: MUTED } }, axisLabel: { color: INK } },
    yAxis: { type: "value", name: "Moran's I (unitless)", nameLocation: "middle", nameGap: 48, axisLabel: { color: INK }, splitLine: { lineStyle: { color: "#eef1f6" } } },
    series: [
      // The band is drawn as its lower edge plus its width, stacked ("all": also across signs, since the lower edge is negative).
      { name: "band-low", type: "line", data: pts.map((p) => p.bandLow), stack: "band", stackStrategy: "all", lineStyle: { opacity: 0 }, symbol: "none", tooltip: { show: false } },
      {
        name: "95 % band under the null",
        type: "line",
        data: pts.map((p) => (p.bandHigh !== null && p.bandLow !== null ? p.bandHigh - p.bandLow : null)),
        stack: "band",
        stackStrategy: "all",
        lineStyle: { opacity: 0 },
        areaStyle: { color: "rgba(148,161,189,0.28)" },
        symbol: "none",
        itemStyle: { color: "rgba(148,161,189,0.5)" },
        tooltip: { show: false },
      },
      { name: "E[I]", type: "line", data: pts.map((p) => p.expectedI), lineStyle: { type: "dashed", color: MUTED, width: 1.5 }, itemStyle: { color: MUTED }, symbol: "none" },
      { name: "Moran's I", type: "line", data: pts.map((p) => p.I), lineStyle: { color: INK, width: 2.5 }, itemStyle: { color: INK }, symbolSize: 6, connectNulls: false, ...reformMarks(reform, periods) },
      ...(residual
        ? [
            {
              name: RESIDUAL_SERIES,
              type: "line" as const,
              data: pts.map((p) => p.residualI),
              lineStyle: { color: RESIDUAL, width: 2, type: "dotted" as const },
              itemStyle: { color: RESIDUAL },
              symbol: "diamond",
              symbolSize: 8,
              connectNulls: false,
            },
          ]
        : []),
      { name: "Significant after correction", type: "scatter", data: significant, itemStyle: { color: OCHRE, borderColor: "#fff", borderWidth: 1.5 }, symbolSize: 12, z: 5 },
    ],
  };
  const title = `Moran's I of ${timeline.indicator.label.toLowerCase()} per period`;
  const figure = { run: timeline.run, indicator: timeline.indicator, harmonised: Boolean(reform), points: pts };
  return (
    <Panel
      title={title}
      actions={<FigureDownloads spec={moranTimelineFigure(figure, title, residual ? RESIDUAL_SERIES : null)} body={() => echartsFigureBody(option, 820, 360)} testId="figure-timeline-moran" />}
      caption={
        <>
          The grey band holds the middle 95 % (2.5 %–97.5 % quantiles) of I under the null of no spatial pattern, from{" "}
          {timeline.run.params.permutations.toLocaleString("en-GB")} random relabellings of the values (the same draws in every period). The dashed line is
          E[I] = −1/(n−1). Ochre points are periods significant after the run&apos;s correction. Click a period to open its map.
          {residual ? (
            <span data-testid="timeline-residual-caption">
              {" "}
              The dotted brown line is Moran&apos;s I of what is left after regressing the indicator on {controlFor.join(", ")} (ordinary least squares with
              an intercept): where it sits well below the solid line, the covariates account for much of the clustering. Its own expected value under no
              residual dependence is slightly negative and differs by period; the period view gives it with the regression.
            </span>
          ) : null}
          {reform ? <span data-testid="timeline-reform-caption"> {carriedSentence(reform)} Shaded periods were carried; I there is computed on values spread across the new boundaries, not observed on them.</span> : null}
        </>
      }
    >
      <EChart option={option} height={340} onClick={(p) => p.name && onPeriod(p.name)} testId="timeline-moran" label={`Moran's I of ${timeline.indicator.label} per period`} />
      <FigureTable
        summary={seriesSummary(`Moran's I of ${timeline.indicator.label}`, pts.map((p) => ({ label: p.period, value: p.I })))}
        caption={`Moran's I of ${timeline.indicator.label} per period`}
        columns={[
          { key: "period", label: "Period" },
          { key: "I", label: "Moran's I", numeric: true },
          { key: "E", label: "E[I]", numeric: true },
          { key: "low", label: "Band 2.5 %", numeric: true },
          { key: "high", label: "Band 97.5 %", numeric: true },
          { key: "p", label: "Pseudo p", numeric: true },
          { key: "sig", label: "After correction" },
        ]}
        rows={pts.map((p) => ({ period: p.period, I: fmt(p.I), E: fmt(p.expectedI), low: fmt(p.bandLow), high: fmt(p.bandHigh), p: fmtP(p.pseudoP), sig: p.significance ?? "—" }))}
        testId="timeline-moran"
      />
    </Panel>
  );
}

function ZChart({ timeline, onPeriod }: { timeline: Timeline; onPeriod: (period: string) => void }) {
  const pts = timeline.points;
  const option: EChartsOption = {
    grid: { left: 64, right: 24, top: 24, bottom: 48 },
    tooltip: { trigger: "axis", valueFormatter: (v) => (typeof v === "number" ? v.toFixed(2) : "—") },
    xAxis: { type: "category", data: pts.map((p) => p.period), name: "Period (year)", nameLocation: "middle", nameGap: 30, axisLabel: { color: INK }, axisLine: { lineStyle: { color: MUTED } } },
    yAxis: { type: "value", name: "z under randomisation (sd units)", nameLocation: "middle", nameGap: 48, axisLabel: { color: INK }, splitLine: { lineStyle: { color: "#eef1f6" } } },
    series: [
      {
        name: "z",
        type: "bar",
        data: pts.map((p) => ({
          value: p.zRandomisation,
          // Clustering in the HH colour, dispersion in the LL one: the palette's pair (lib/runs/cluster-classes).
          itemStyle: { color: p.significance === "clustering" ? CLUSTER_CLASS_COLOURS.HH : p.significance === "dispersion" ? CLUSTER_CLASS_COLOURS.LL : "#c3cbdb" },
        })),
        barMaxWidth: 22,
        markLine: {
          symbol: "none",
          lineStyle: { color: OCHRE, type: "dashed" },
          label: { formatter: "{c}", color: OCHRE },
          data: [{ yAxis: 1.96 }, { yAxis: -1.96 }],
        },
      },
      // The reform's line and shading on an empty series of their own (the bars carry the ±1.96 lines).
      ...(timeline.harmonisation ? [{ name: "reform", type: "line" as const, data: [] as number[], ...reformMarks(timeline.harmonisation, pts.map((p) => p.period), false) }] : []),
    ],
  };
  return (
    <Panel
      title="z-value of I per period"
      actions={
        <FigureDownloads
          spec={zTimelineFigure({ run: timeline.run, indicator: timeline.indicator, harmonised: Boolean(timeline.harmonisation), points: pts })}
          body={() => echartsFigureBody(option, 820, 260)}
          testId="figure-timeline-z"
        />
      }
      caption="Bars show z = (I − E[I]) / sd under randomisation. The dashed lines at ±1.96 mark two-sided 5 % significance for one test on its own; bar colours show the class after the run's correction (brown clustering, teal dispersion, grey not significant)."
    >
      <EChart option={option} height={240} onClick={(p) => p.name && onPeriod(p.name)} testId="timeline-z" label={`z-value of Moran's I of ${timeline.indicator.label} per period`} />
      <FigureTable
        summary={seriesSummary(`z of Moran's I of ${timeline.indicator.label}`, pts.map((p) => ({ label: p.period, value: p.zRandomisation })))}
        caption={`z-value of Moran's I of ${timeline.indicator.label} per period`}
        columns={[
          { key: "period", label: "Period" },
          { key: "z", label: "z under randomisation", numeric: true },
          { key: "sig", label: "After correction" },
        ]}
        rows={pts.map((p) => ({ period: p.period, z: fmt(p.zRandomisation, 2), sig: p.significance ?? "—" }))}
        testId="timeline-z"
      />
    </Panel>
  );
}

function RobustnessStrip({
  slug,
  indicator,
  run,
  period,
  periods,
  onPeriod,
  timeline,
}: {
  slug: string;
  indicator: string;
  run: number;
  period: string;
  periods: string[];
  onPeriod: (p: string) => void;
  timeline: Timeline;
}) {
  const strip = useQuery(robustnessQuery(slug, indicator, run, period));
  const entries = strip.data?.entries ?? [];
  const measure = entries.find((e) => e.distances !== null)?.distances ?? null;
  const option: EChartsOption = {
    grid: { left: 110, right: 40, top: 12, bottom: 44 },
    tooltip: { trigger: "item" },
    yAxis: { type: "category", data: entries.map((e) => e.rule), inverse: true, axisLabel: { color: INK }, name: "Weights rule", nameLocation: "middle", nameGap: 90 },
    xAxis: { type: "value", name: "Moran's I (unitless)", nameLocation: "middle", nameGap: 28, axisLabel: { color: INK }, splitLine: { lineStyle: { color: "#eef1f6" } } },
    series: [
      { name: "band-low", type: "bar", stack: "b", stackStrategy: "all", data: entries.map((e) => e.bandLow), itemStyle: { color: "transparent" }, barWidth: 12, tooltip: { show: false } },
      {
        name: "95 % null band",
        type: "bar",
        stack: "b",
        stackStrategy: "all",
        data: entries.map((e) => (e.bandHigh !== null && e.bandLow !== null ? e.bandHigh - e.bandLow : null)),
        itemStyle: { color: "rgba(148,161,189,0.35)" },
        barWidth: 12,
        tooltip: { show: false },
      },
      {
        name: "I",
        type: "scatter",
        data: entries.map((e) => e.I),
        symbolSize: 12,
        itemStyle: { color: INK },
        label: { show: true, position: "right", formatter: (p) => (typeof p.value === "number" ? p.value.toFixed(3) : ""), color: INK },
      },
    ],
  };
  return (
    <Panel
      title="Robustness across weights"
      actions={
        <div className="flex flex-wrap items-center justify-end gap-3">
          {entries.length ? (
            <FigureDownloads
              spec={robustnessFigure({ run: timeline.run, indicator: timeline.indicator, harmonised: Boolean(timeline.harmonisation) }, period)}
              body={() => echartsFigureBody(option, 820, 270)}
              testId="figure-timeline-robustness"
            />
          ) : null}
          <select aria-label="Period of the robustness strip" className="rounded-md border border-ink-200 px-2 py-1 text-sm print:hidden" value={period} onChange={(e) => onPeriod(e.target.value)}>
            {periods.map((p) => (
              <option key={p}>{p}</option>
            ))}
          </select>
        </div>
      }
      caption={
        <>
          {`Moran's I for ${period} recomputed on demand under queen and rook contiguity, 4, 6 and 8 nearest neighbours and the smallest distance band that connects every region (${strip.data?.transform ?? "row-standardised"} weights, the run's seed and permutations). Grey bars are each rule's 95 % band under the null; a result that holds across rules depends less on the choice of weights.`}
          {measure ? <span data-testid="robustness-distances"> {distanceSentence(measure)}</span> : null}
        </>
      }
    >
      {strip.isPending ? <p className="text-sm text-ink-500">Computing the strip…</p> : null}
      {strip.error ? <Notice tone="error">{strip.error.message}</Notice> : null}
      {entries.length ? <EChart option={option} height={250} testId="timeline-robustness" label={`Moran's I for ${period} under each weights rule`} /> : null}
      {entries.length ? (
        <FigureTable
          summary={seriesSummary(`Moran's I for ${period} across weights rules`, entries.map((e) => ({ label: e.rule, value: e.I })))}
          caption={`Moran's I for ${period} under each weights rule`}
          columns={[
            { key: "rule", label: "Weights rule" },
            { key: "I", label: "Moran's I", numeric: true },
            { key: "low", label: "Band 2.5 %", numeric: true },
            { key: "high", label: "Band 97.5 %", numeric: true },
            { key: "p", label: "Pseudo p", numeric: true },
          ]}
          rows={entries.map((e) => ({ rule: e.rule, I: fmt(e.I), low: fmt(e.bandLow), high: fmt(e.bandHigh), p: fmtP(e.pseudoP) }))}
          testId="timeline-robustness"
        />
      ) : null}
      {entries.some((e) => e.note) ? (
        <ul className="mt-2 space-y-1 text-xs text-ink-500">
          {entries
            .filter((e) => e.note)
            .map((e) => (
              <li key={e.rule}>
                <span className="font-medium">{e.rule}:</span> {e.note}
              </li>
            ))}
        </ul>
      ) : null}
    </Panel>
  );
}

function PeriodTable({ timeline, onPeriod }: { timeline: Timeline; onPeriod: (period: string) => void }) {
  const controlFor = timeline.run.params.controlFor ?? [];
  const residual = controlFor.length > 0 && !controlFor.includes(timeline.indicator.code);
  return (
    <Panel title="Per period: n, weights and inference" caption="n counts regions with a value after the island policy. Pseudo p is the two-sided permutation p; adjusted p applies the run's correction across all its indicator-periods.">
      <div className="overflow-x-auto">
        <table className="w-full text-sm">
          <thead className="text-left text-xs uppercase tracking-wider text-ink-400">
            <tr>
              <th className="py-2 pr-3">Period</th>
              <th className="py-2 pr-3 text-right">n</th>
              <th className="py-2 pr-3 text-right">Left out</th>
              <th className="py-2 pr-3 text-right">Mean neighbours</th>
              <th className="py-2 pr-3 text-right">I</th>
              <th className="py-2 pr-3 text-right">ΔI</th>
              <th className="py-2 pr-3 text-right">Pseudo p</th>
              <th className="py-2 pr-3 text-right">Adjusted p</th>
              <th className="py-2 pr-3 text-right">Geary&apos;s C</th>
              <th className="py-2 pr-3">Class</th>
              {residual ? (
                <>
                  <th className="py-2 pr-3 text-right">Residual I</th>
                  <th className="py-2 pr-3 text-right">Residual p</th>
                  <th className="py-2 pr-3">Points to</th>
                </>
              ) : null}
            </tr>
          </thead>
          <tbody className="divide-y divide-ink-50">
            {timeline.points.map((p) => (
              <tr key={p.period} className="hover:bg-ochre-50/50">
                <td className="py-1.5 pr-3">
                  <button type="button" className="font-medium text-ink hover:text-ochre-700 hover:underline" onClick={() => onPeriod(p.period)}>
                    {p.period}
                  </button>
                </td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{p.n}</td>
                <td className="py-1.5 pr-3 text-right tabular-nums" title={p.note ?? undefined}>
                  {p.excludedMissing + p.excludedIslands}
                </td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(p.weights?.meanNeighbours ?? null, 2)}</td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(p.I)}</td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{fmtSigned(p.deltaI)}</td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{fmtP(p.pseudoP)}</td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{fmtP(p.adjustedP)}</td>
                <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(p.gearyC)}</td>
                <td className="py-1.5 pr-3">{p.status === "computed" ? <SignificanceBadge value={p.significance} /> : <span className="text-xs text-ink-400">{p.note}</span>}</td>
                {residual ? (
                  <>
                    <td className="py-1.5 pr-3 text-right tabular-nums" data-testid={`residual-i-${p.period}`}>
                      {fmt(p.residualI)}
                    </td>
                    <td className="py-1.5 pr-3 text-right tabular-nums">{fmtP(p.residualP)}</td>
                    <td className="py-1.5 pr-3 text-xs text-ink-600" title={p.regressionMessage ?? undefined}>
                      {p.modelSuggestion ? MODEL_SUGGESTION_LABELS[p.modelSuggestion] : p.regressionMessage ? "not fitted" : "—"}
                    </td>
                  </>
                ) : null}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {timeline.run.significanceBasis ? <p className="mt-3 text-xs text-ink-500">{timeline.run.significanceBasis}</p> : null}
    </Panel>
  );
}

"use client";

import Link from "next/link";
import { IndicatorPicker } from "@/components/runs/indicator-picker";
import { useIndicatorTimeline } from "@/components/runs/use-indicator-timeline";
import { useQuery } from "@tanstack/react-query";
import { inputClass, secondaryButton } from "@/components/ui/button-styles";
import { fmt, fmtP, fmtSigned, Notice, Panel, SignificanceBadge } from "@/components/runs/format";
import { compareQuery } from "@/components/runs/query-options";
import { RunPicker } from "@/components/runs/run-picker";
import { periodPair } from "@/lib/runs/period-order";
import { ReformNote } from "@/components/reforms/reform-note";

export function CompareScreen({ slug, indicators }: { slug: string; indicators: { code: string; label: string }[] }) {
  const { params, setParams: set, indicator, periods, runId, timeline } = useIndicatorTimeline(slug, indicators);
  // Earlier period first whatever order the link or URL gave (lib/runs/period-order).
  const { earlier: a, later: b } = periodPair(periods, params.get("a"), params.get("b"));
  const data = useQuery(compareQuery(slug, indicator, runId, a, b));
  const c = data.data?.comparison;
  const label = indicators.find((i) => i.code === indicator)?.label ?? indicator;

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end gap-4">
        <IndicatorPicker id="cmp-indicator" value={indicator} indicators={indicators} onChange={(code) => set({ indicator: code, run: null })} />
        <RunPicker id="cmp-run" slug={slug} indicator={indicator} value={timeline.data?.run.id ?? null} onChange={(id) => set({ run: String(id) })} />
        {(["a", "b"] as const).map((key) => (
          <div key={key}>
            <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor={`cmp-${key}`}>
              {key === "a" ? "Earlier period" : "Later period"}
            </label>
            <select id={`cmp-${key}`} className={`${inputClass} mt-1 w-28`} value={key === "a" ? a : b} onChange={(e) => set({ [key]: e.target.value })}>
              {periods.map((p) => (
                <option key={p}>{p}</option>
              ))}
            </select>
          </div>
        ))}
        <Link className={`${secondaryButton} ml-auto`} href={`/w/${slug}/map?indicator=${encodeURIComponent(indicator)}${runId ? `&run=${runId}` : ""}&a=${a}&b=${b}`}>
          Open both periods on the map
        </Link>
      </div>
      {a === b && a ? <Notice>Choose two different periods.</Notice> : null}
      {data.error ? <Notice tone="error">{data.error.message}</Notice> : null}
      {c && timeline.data?.run.params.empiricalBayes?.some((d) => d.indicator === indicator) ? (
        <Notice>
          This run analysed {label.toLowerCase()} as empirical-Bayes standardised rates: the two periods&apos; Moran&apos;s I are on the standardised values,
          while the change between the periods and the bivariate statistic below use the published rates.
        </Notice>
      ) : null}
      {data.isPending && a !== b ? <p className="text-sm text-ink-500">Computing the comparison…</p> : null}
      {timeline.data?.harmonisation && a !== b ? <ReformNote harmonisation={timeline.data.harmonisation} indicator={indicator} shown={[a, b]} testId="compare-reform" /> : null}
      {c ? (
        <>
          <div className="grid gap-6 md:grid-cols-2">
            {[
              { period: c.earlier, r: c.earlierResult },
              { period: c.later, r: c.laterResult },
            ].map(({ period, r }) => (
              <Panel key={period} title={`Moran's I, ${period}`}>
                <p className="text-3xl font-semibold tabular-nums text-ink">{fmt(r?.I ?? null)}</p>
                <p className="mt-1 flex items-center gap-2 text-sm text-ink-500">
                  pseudo p {fmtP(r?.pseudoP ?? null)} · n = {r?.n ?? "—"} <SignificanceBadge value={r?.significance ?? null} />
                </p>
              </Panel>
            ))}
          </div>
          <div className="grid gap-6 lg:grid-cols-3">
            <Panel
              title="Change in I"
              caption="Paired permutation test: the same random relabelling of regions is applied to both periods (common random numbers), so the p says whether the change in I is larger than random maps would produce."
            >
              <p className="text-2xl font-semibold tabular-nums text-ink" data-testid="compare-delta">
                {fmtSigned(c.pairedChange?.difference ?? null)}
              </p>
              <p className="mt-1 text-sm text-ink-500">
                I({c.later}) − I({c.earlier}) over the {c.n} regions with values in both · paired pseudo p {fmtP(c.pairedChange?.pseudoP ?? null)}
              </p>
              {c.pairedChange?.note ? <p className="mt-2 text-xs text-red-700">{c.pairedChange.note}</p> : null}
            </Panel>
            <Panel
              title="Moran's I of the change"
              caption={`The variable is ${label.toLowerCase()} in ${c.later} minus ${c.earlier} (later − earlier): positive I means regions whose value rose sit near regions whose value rose, and regions whose value fell near others that fell.`}
            >
              <p className="text-2xl font-semibold tabular-nums text-ink" data-testid="compare-change-i">
                {fmt(c.change.I)}
              </p>
              <p className="mt-1 text-sm text-ink-500">
                E[I] {fmt(c.change.expectedI, 4)} · pseudo p {fmtP(c.change.pseudoP)} · {c.change.rising} rose, {c.change.falling} fell
              </p>
              {c.change.note ? <p className="mt-2 text-xs text-red-700">{c.change.note}</p> : null}
            </Panel>
            <Panel
              title={`${c.later} against the neighbours' ${c.earlier}`}
              caption={`Bivariate Moran's I of each region's value in ${c.later} against the spatial lag (neighbours' average) of ${c.earlier}. Regions are relabelled in pairs, so the null mean is not zero: read it against the permutation mean.`}
            >
              <p className="text-2xl font-semibold tabular-nums text-ink" data-testid="compare-bivariate">
                {fmt(c.bivariate.I)}
              </p>
              <p className="mt-1 text-sm text-ink-500">
                permutation mean {fmt(c.bivariate.permutationMean)} · pseudo p {fmtP(c.bivariate.pseudoP)} · same-region correlation {fmt(c.bivariate.inSituCorrelation, 2)}
              </p>
              {c.bivariate.note ? <p className="mt-2 text-xs text-red-700">{c.bivariate.note}</p> : null}
            </Panel>
          </div>
        </>
      ) : null}
    </div>
  );
}

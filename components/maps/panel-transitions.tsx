"use client";

import { useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { inputClass } from "@/components/ui/button-styles";
import { fmt, fmtP, Notice, Panel } from "@/components/runs/format";
import { panelTransitionsQuery } from "@/components/runs/query-options";
import type { PanelTransitions as PanelTransitionsResult } from "@/lib/runs/panel-transitions";
import { PANEL_TRANSITION_CLASS_CHOICES } from "@/lib/runs/schemas";

const SHARE: Record<number, string> = { 3: "third", 4: "quarter", 5: "fifth" };

/**
 * Spatial Markov tables of one indicator over all periods of a run, each
 * period to the next, with the test of homogeneity (GET …/map/transitions).
 */
export function PanelTransitions({
  slug,
  indicator,
  runId,
  standardisedInRun = false,
}: {
  slug: string;
  indicator: string;
  runId: number | null;
  /** The run analysed this rate empirical-Bayes standardised; the tables class the published rates, so say so. */
  standardisedInRun?: boolean;
}) {
  const [classes, setClasses] = useState<number>(5);
  const query = useQuery(panelTransitionsQuery(slug, indicator, runId, classes));
  const t = query.data?.transitions;
  const span = t && t.periods.length > 0 ? `${t.periods[0]}–${t.periods[t.periods.length - 1]}` : "all periods";
  const share = SHARE[classes] ?? `1/${classes}`;
  return (
    <Panel
      title={`Class moves over the whole panel, ${span}, by the neighbours' class`}
      actions={
        <label className="flex items-center gap-2 text-xs text-ink-500">
          Classes
          <select className={`${inputClass} w-16 py-0.5`} value={classes} onChange={(e) => setClasses(Number(e.target.value))} aria-label="Number of quantile classes">
            {PANEL_TRANSITION_CLASS_CHOICES.map((k) => (
              <option key={k} value={k}>
                {k}
              </option>
            ))}
          </select>
        </label>
      }
      caption={
        <>
          Every year, each region is put in one of {classes} classes of that year&apos;s own values: class 1 holds the lowest {share} of the regions, class {classes}{" "}
          the highest (cut points at the 1/{classes}, 2/{classes}, … quantiles of the year, type 7; a value equal to a cut point goes to the lower class). So a move
          is a change of rank among the regions, not of level. Each cell counts region-years: rows are the class in one year, columns the class in the next, over
          every pair of consecutive years. The first table holds all regions; the others split them by the class of their neighbours&apos; average (the spatial
          lag, row-standardised) in the earlier year, classed the same way. If the neighbours made no difference, each split table would move like the first one,
          row by row; the χ² test of homogeneity asks whether they do (spatial Markov chain, Rey 2001).
        </>
      }
    >
      {standardisedInRun ? (
        <Notice>The run analysed this rate empirical-Bayes standardised; these tables class the published rates, whose small-population noise moves regions between classes.</Notice>
      ) : null}
      {query.error ? <Notice tone="error">{query.error.message}</Notice> : null}
      {query.isPending ? <p className="text-sm text-ink-500">Counting moves over every pair of periods…</p> : null}
      {t ? <Tables t={t} /> : null}
    </Panel>
  );
}

function Tables({ t }: { t: PanelTransitionsResult }) {
  const k = t.classes;
  const counted = t.pairs.filter((p) => !p.skipped);
  const skipped = t.pairs.filter((p) => p.skipped);
  return (
    <div className="space-y-4" data-testid="panel-transitions">
      {t.note ? <Notice>{t.note}</Notice> : null}
      <p className="text-sm text-ink-600">
        {t.transitions} moves counted over {counted.length} pair{counted.length === 1 ? "" : "s"} of consecutive periods
        {counted.length > 0 ? ` (${counted[0].earlier}→${counted[0].later} to ${counted[counted.length - 1].earlier}→${counted[counted.length - 1].later})` : ""}.
      </p>
      <div className="grid gap-x-8 gap-y-5 sm:grid-cols-2 xl:grid-cols-3">
        <div>
          <h3 className="mb-1 text-xs font-semibold uppercase tracking-wider text-ink">All regions</h3>
          <ClassTable counts={t.pooled} k={k} testId="panel-transitions-pooled" />
        </div>
        {t.conditional.map((counts, l) => (
          <div key={l}>
            <h3 className="mb-1 text-xs font-semibold uppercase tracking-wider text-ink-400">
              Neighbours in class {l + 1}
              {l === 0 ? " (lowest)" : l === k - 1 ? " (highest)" : ""}
            </h3>
            <ClassTable counts={counts} k={k} testId={`panel-transitions-lag-${l + 1}`} />
          </div>
        ))}
      </div>
      <TestSentence t={t} />
      <DroppedSentence t={t} skipped={skipped.map((p) => `${p.earlier}→${p.later}: ${p.skipped ?? ""}`)} />
    </div>
  );
}

function ClassTable({ counts, k, testId }: { counts: number[][]; k: number; testId: string }) {
  const labels = Array.from({ length: k }, (_, i) => String(i + 1));
  return (
    <table className="w-full text-sm" data-testid={testId}>
      <thead>
        <tr className="text-xs text-ink-400">
          <th className="py-0.5 text-left font-medium">from ↓ / to →</th>
          {labels.map((c) => (
            <th key={c} className="px-1 py-0.5 text-right font-medium">
              {c}
            </th>
          ))}
          <th className="px-1 py-0.5 text-right font-medium">n</th>
        </tr>
      </thead>
      <tbody>
        {counts.map((row, i) => {
          const total = row.reduce((s, v) => s + v, 0);
          return (
            <tr key={i}>
              <th className="py-0.5 pr-2 text-left text-xs font-medium text-ink-500">{labels[i]}</th>
              {row.map((v, j) => {
                const rowShare = total > 0 ? v / total : 0;
                return (
                  <td
                    key={j}
                    title={total > 0 ? `${v} of ${total} (${Math.round(rowShare * 100)} %) moved from class ${i + 1} to class ${j + 1}` : undefined}
                    className={`px-1 py-0.5 text-right tabular-nums ${i === j ? "font-semibold" : ""} ${v === 0 ? "text-ink-500" : "text-ink"}`}
                    style={{ background: v ? `rgba(201,138,27,${(0.06 + 0.5 * rowShare).toFixed(2)})` : undefined }}
                  >
                    {v}
                  </td>
                );
              })}
              <td className="px-1 py-0.5 text-right text-xs tabular-nums text-ink-400">{total}</td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

function TestSentence({ t }: { t: PanelTransitionsResult }) {
  const test = t.test;
  return (
    <div className="space-y-1 text-xs text-ink-500">
      {test ? (
        <p data-testid="panel-transitions-test">
          Do the moves depend on the neighbours&apos; class? Test of homogeneity of the {t.classes} split tables against the table of all regions: χ² ={" "}
          {fmt(test.chiSquare, 2)}, df {test.degreesOfFreedom}, p = {fmtP(test.p)}.
        </p>
      ) : (
        <p data-testid="panel-transitions-test">No test of homogeneity for these tables.</p>
      )}
      <p data-testid="panel-transitions-caution">
        Neighbouring regions are not independent observations, and each region is counted once for every pair of years, so this p is optimistic: read a small p as
        a hint that the neighbours matter, not as proof.
        {test && test.expectedBelow5 > test.cells / 5
          ? ` ${test.expectedBelow5} of ${test.cells} cells of the test expect fewer than 5 moves: the χ² approximation is rough here.`
          : ""}
      </p>
    </div>
  );
}

function DroppedSentence({ t, skipped }: { t: PanelTransitionsResult; skipped: string[] }) {
  const pairs = (n: number) => `${n} region-year pair${n === 1 ? " is" : "s are"} left out`;
  const parts: string[] = [];
  if (t.droppedMissing > 0) parts.push(`${pairs(t.droppedMissing)} because the region has no value in one of the two years.`);
  if (t.droppedNoNeighbours > 0) {
    parts.push(`${pairs(t.droppedNoNeighbours)} because the region has no neighbour with a value under the run's weights, so it has no neighbours' class.`);
  }
  if (skipped.length) parts.push(`Pairs not counted: ${skipped.join("; ")}.`);
  return (
    <p className="text-xs text-ink-500" data-testid="panel-transitions-dropped">
      {parts.length ? parts.join(" ") : "Every region with a value in both years of a pair is counted."}
    </p>
  );
}

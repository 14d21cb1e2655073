"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { fmt, fmtSigned, Notice, runLabel, runName, SignificanceBadge, SIGNIFICANCE_SHORT, StateBadge } from "./format";
import { deskQuery } from "./query-options";

export function DeskPanel({ slug }: { slug: string }) {
  const desk = useQuery(deskQuery(slug));
  if (desk.isPending) return <p className="text-sm text-ink-500">Loading the latest analyses…</p>;
  if (desk.error) return <Notice tone="error">{desk.error.message}</Notice>;
  const d = desk.data;
  return (
    <div className="space-y-8" data-testid="desk-analyses">
      <section className="rounded-lg border border-ink-100 bg-white p-6 shadow-sm">
        <div className="flex items-baseline justify-between">
          <h2 className="text-base font-semibold text-ink">Largest movements</h2>
          {d.latest ? (
            <Link className="text-sm font-medium text-ochre-700 hover:underline" href={`/w/${slug}/catalogue?run=${d.latest.id}`}>
              {runName(d.latest.number)} in the catalogue
            </Link>
          ) : null}
        </div>
        {!d.latest ? (
          <p className="mt-2 text-sm text-ink-500">No completed analysis yet. Movements appear here once a run over a published panel has finished.</p>
        ) : (
          <>
            <p className="mt-1 text-sm text-ink-500">
              The biggest changes in Moran&apos;s I from one period to the next in {runLabel(d.latest)}.
              {d.counts ? ` ${d.counts.clustering} indicator-periods show significant clustering, ${d.counts.dispersion} dispersion.` : ""}
            </p>
            <ul className="mt-4 divide-y divide-ink-50">
              {d.movements.map((m) => (
                <li key={`${m.indicator}-${m.period}`} className="flex items-center justify-between gap-4 py-2.5">
                  <div className="min-w-0">
                    <Link className="font-medium text-ink hover:text-ochre-700 hover:underline" href={`/w/${slug}/timeline?indicator=${encodeURIComponent(m.indicator)}&run=${d.latest?.id}`}>
                      {m.indicatorLabel}
                    </Link>
                    <p className="text-xs text-ink-500">
                      {m.previousPeriod ?? "previous"} → {m.period}: I now {fmt(m.I)}
                    </p>
                  </div>
                  <div className="flex items-center gap-3">
                    <span className={`text-lg font-semibold tabular-nums ${m.deltaI > 0 ? "text-[#9a3412]" : "text-[#115e59]"}`}>{fmtSigned(m.deltaI)}</span>
                    <SignificanceBadge value={m.significance} />
                  </div>
                </li>
              ))}
            </ul>
          </>
        )}
      </section>

      {d.previous ? (
        <section className="rounded-lg border border-ink-100 bg-white p-6 shadow-sm">
          <h2 className="text-base font-semibold text-ink">Changed since the previous run</h2>
          <p className="mt-1 text-sm text-ink-500">
            Indicator-periods whose class differs between {d.latest ? runLabel(d.latest) : "the latest run"} and {runLabel(d.previous)}, the newest earlier run of this panel computed
            the same way (same weights, transform, island policy, permutations, alpha and correction).
          </p>
          {d.classChanges.length === 0 ? (
            <p className="mt-3 text-sm text-ink-500">No class changed.</p>
          ) : (
            <ul className="mt-3 space-y-1.5 text-sm">
              {d.classChanges.map((c) => (
                <li key={`${c.indicator}-${c.period}`} className="flex flex-wrap items-center gap-2">
                  <span className="font-medium text-ink">{c.indicatorLabel}</span> <span className="text-ink-500">{c.period}:</span>
                  <span className="text-ink-500">{c.before ? SIGNIFICANCE_SHORT[c.before] : "not computed"}</span> →
                  <SignificanceBadge value={c.after} />
                </li>
              ))}
            </ul>
          )}
        </section>
      ) : null}

      {d.methodChange ? (
        <section className="rounded-lg border border-ink-100 bg-white p-6 shadow-sm" data-testid="desk-method-change">
          <h2 className="text-base font-semibold text-ink">Changed since the previous run</h2>
          <p className="mt-1 text-sm text-ink-700">
            Method changed between {runName(d.methodChange.runNumber)} and {d.latest ? runName(d.latest.number) : "the latest run"}: {d.methodChange.sentence}. A difference between them would be the
            method&apos;s, not the data&apos;s, so none is shown.
          </p>
        </section>
      ) : null}

      <section className="rounded-lg border border-ink-100 bg-white p-6 shadow-sm">
        <div className="flex items-baseline justify-between">
          <h2 className="text-base font-semibold text-ink">Latest runs</h2>
          <Link className="text-sm font-medium text-ochre-700 hover:underline" href={`/w/${slug}/runs`}>
            All runs
          </Link>
        </div>
        {d.runs.length === 0 ? <p className="mt-2 text-sm text-ink-500">No runs yet.</p> : null}
        <ul className="mt-3 divide-y divide-ink-50">
          {d.runs.map((r) => (
            <li key={r.id} className="flex items-center justify-between gap-3 py-2 text-sm">
              <span className="text-ink">
                {runLabel(r)}
              </span>
              <span className="flex items-center gap-3 text-xs text-ink-500">
                {r.state === "running" ? `${Math.round((100 * r.periodsDone) / Math.max(1, r.resultsTotal))}%` : new Date(r.finishedAt ?? r.createdAt).toLocaleDateString("en-GB")}
                <StateBadge state={r.state} />
              </span>
            </li>
          ))}
        </ul>
      </section>
    </div>
  );
}

import { Cautions, REGRESSION_CAUTIONS } from "@/components/ui/cautions";
import type { RegressionFields, StoredLagrangeTest } from "@/lib/runs/types";
import { fmt, fmtP, Notice, Panel } from "./format";

// The period view's regression on the run's covariates and what is left of the
// clustering in its residuals. Words and layout are Tessera's own: what the
// covariates explain first, then what remains and which model it points to.

const TESTS: { key: keyof NonNullable<RegressionFields["lagrange"]>; name: string; reads: string }[] = [
  { key: "error", name: "Error dependence", reads: "neighbours' unexplained parts move together" },
  { key: "lag", name: "Lag dependence", reads: "the indicator depends on its neighbours' values" },
  { key: "robustError", name: "Error, allowing for lag", reads: "error dependence once a lag is allowed for" },
  { key: "robustLag", name: "Lag, allowing for error", reads: "lag dependence once an error is allowed for" },
  { key: "combined", name: "Either, together", reads: "lag and error dependence tested jointly" },
];

/** The suggestion in words (what the five tests point to). */
export function suggestionSentence(r: RegressionFields, alpha: number): string {
  switch (r.suggestion) {
    case "error":
      return `The residual dependence looks like a spatial error: unobserved influences shared by neighbouring regions. A spatial error model is the one to consider (α = ${alpha}).`;
    case "lag":
      return `The residual dependence looks like a spatial lag: a region's value moves with its neighbours' values. A spatial lag model is the one to consider (α = ${alpha}).`;
    case "both":
      return `Both forms stay significant (α = ${alpha}), even allowing for each other: a model with a spatial lag and a spatial error may be needed, or the covariates miss something spatial.`;
    case "neither":
      return `Neither test is significant (α = ${alpha}): once these covariates are accounted for, no spatial dependence is detected in what is left.`;
    default:
      return "";
  }
}

export function RegressionPanel({
  regression,
  period,
  indicatorLabel,
  labels,
  alpha,
  rawI,
  testId,
}: {
  regression: RegressionFields;
  period: string;
  indicatorLabel: string;
  /** Indicator code → label, for the covariates' rows. */
  labels: ReadonlyMap<string, string>;
  alpha: number;
  /** Moran's I of the indicator itself in the period, to set beside the residual I. */
  rawI: number | null;
  testId: string;
}) {
  const r = regression;
  const covariateNames = r.covariates.map((c) => labels.get(c) ?? c).join(", ");
  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_320px]" data-testid={`regression-${testId}`}>
      <Panel
        title={`After the covariates, ${period}`}
        caption={
          <>
            {indicatorLabel} regressed on {covariateNames} with an intercept (ordinary least squares) over the {r.n} regions that have every value
            {r.excluded > 0 ? ` (${r.excluded} more with a value of the indicator left out because a covariate has none; the weights are restricted to the rest)` : ""}.
            Moran&apos;s I of the residuals uses the run&apos;s weights; its expected value and variance allow for the fitted coefficients, so its p is not the
            p of I on the raw values.
          </>
        }
      >
        {r.message ? (
          <Notice tone="error">
            <span data-testid={`regression-message-${testId}`}>{r.message}</span>
          </Notice>
        ) : (
          <div className="space-y-5">
            <div>
              <h3 className="text-xs font-semibold uppercase tracking-wider text-ink-400">What the covariates explain</h3>
              <table className="mt-2 w-full text-sm" data-testid={`regression-table-${testId}`}>
                <thead className="text-left text-xs text-ink-400">
                  <tr className="border-b border-ink-100">
                    <th className="py-1.5 pr-3 font-medium">Term</th>
                    <th className="py-1.5 pr-3 text-right font-medium">Estimate</th>
                    <th className="py-1.5 pr-3 text-right font-medium">Standard error</th>
                    <th className="py-1.5 pr-3 text-right font-medium">t</th>
                    <th className="py-1.5 pr-3 text-right font-medium">p</th>
                  </tr>
                </thead>
                <tbody className="divide-y divide-ink-50">
                  {(r.coefficients ?? []).map((c) => (
                    <tr key={c.name} className={c.p !== null && c.p < alpha ? "bg-ochre-50/60" : undefined}>
                      <td className="py-1.5 pr-3 text-ink-700">{c.name === "intercept" ? "Intercept" : (labels.get(c.name) ?? c.name)}</td>
                      <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(c.estimate, 4)}</td>
                      <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(c.standardError, 4)}</td>
                      <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(c.t, 2)}</td>
                      <td className="py-1.5 pr-3 text-right tabular-nums">{fmtP(c.p)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
              <p className="mt-2 text-xs text-ink-500" data-testid={`regression-r2-${testId}`}>
                R² {fmt(r.rSquared, 3)} · adjusted R² {fmt(r.adjustedRSquared, 3)} · {r.n} regions, {r.covariates.length + 1} coefficients. Shaded rows have p
                below α = {alpha}.
              </p>
            </div>
            <div>
              <h3 className="text-xs font-semibold uppercase tracking-wider text-ink-400">What is left</h3>
              <dl className="mt-2 grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
                <div>
                  <dt className="text-xs text-ink-400">I of the values</dt>
                  <dd className="tabular-nums text-ink-700">{fmt(rawI)}</dd>
                </div>
                <div>
                  <dt className="text-xs text-ink-400">I of the residuals</dt>
                  <dd className="tabular-nums font-semibold text-ink" data-testid={`residual-i-${testId}`}>
                    {fmt(r.moran?.I ?? null)}
                  </dd>
                </div>
                <div>
                  <dt className="text-xs text-ink-400">Its E[I] · z</dt>
                  <dd className="tabular-nums text-ink-700">
                    {fmt(r.moran?.expectedI ?? null, 4)} · {fmt(r.moran?.z ?? null, 2)}
                  </dd>
                </div>
                <div>
                  <dt className="text-xs text-ink-400">p two-sided · greater</dt>
                  <dd className="tabular-nums text-ink-700">
                    {fmtP(r.moran?.pTwoSided ?? null)} · {fmtP(r.moran?.pGreater ?? null)}
                  </dd>
                </div>
              </dl>
              <table className="mt-4 w-full text-sm" data-testid={`diagnostics-table-${testId}`}>
                <thead className="text-left text-xs text-ink-400">
                  <tr className="border-b border-ink-100">
                    <th className="py-1.5 pr-3 font-medium">Lagrange multiplier test</th>
                    <th className="py-1.5 pr-3 font-medium">Asks whether</th>
                    <th className="py-1.5 pr-3 text-right font-medium">Statistic</th>
                    <th className="py-1.5 pr-3 text-right font-medium">df</th>
                    <th className="py-1.5 pr-3 text-right font-medium">p</th>
                  </tr>
                </thead>
                <tbody className="divide-y divide-ink-50">
                  {TESTS.map((t) => {
                    const test: StoredLagrangeTest | undefined = r.lagrange?.[t.key];
                    return (
                      <tr key={t.key} className={test?.p !== null && test?.p !== undefined && test.p < alpha ? "bg-ochre-50/60" : undefined}>
                        <td className="py-1.5 pr-3 text-ink-700">{t.name}</td>
                        <td className="py-1.5 pr-3 text-xs text-ink-500">{t.reads}</td>
                        <td className="py-1.5 pr-3 text-right tabular-nums">{fmt(test?.statistic ?? null, 3)}</td>
                        <td className="py-1.5 pr-3 text-right tabular-nums">{test?.df ?? "—"}</td>
                        <td className="py-1.5 pr-3 text-right tabular-nums">{fmtP(test?.p ?? null)}</td>
                      </tr>
                    );
                  })}
                </tbody>
              </table>
              <p className="mt-3 rounded-md border-l-4 border-ochre-400 bg-ochre-50 px-3 py-2 text-sm text-ink-700" data-testid={`suggestion-${testId}`} data-suggestion={r.suggestion ?? ""}>
                {suggestionSentence(r, alpha)}
              </p>
            </div>
          </div>
        )}
      </Panel>
      <Cautions items={REGRESSION_CAUTIONS} headingId={`regression-cautions-${testId}`} testId={`regression-cautions-${testId}`} className="h-fit" />
    </div>
  );
}

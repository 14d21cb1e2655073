// The cautions of docs/statistics.md: shown beside every result. Items can be narrowed to the
// ones a particular result needs (e.g. leave out "small n" for a large panel).

export type CautionKey = "causation" | "maup" | "multiple" | "small-n" | "small-rates";

const CAUTIONS: Record<CautionKey, { title: string; body: string }> = {
  causation: {
    title: "Significance is not causation",
    body: "A significant cluster says neighbouring regions have similar values, not why.",
  },
  maup: {
    title: "Units and weights matter",
    body: "Results depend on the regional units and their boundaries (the modifiable areal unit problem) and on the spatial weights chosen.",
  },
  multiple: {
    title: "Many tests, some false alarms",
    body: "Testing many indicator-periods at once produces false positives unless a correction (Bonferroni or false discovery rate) is applied.",
  },
  "small-n": {
    title: "Few regions",
    body: "With small n, analytical p-values are unreliable; prefer the permutation p-value.",
  },
  "small-rates": {
    title: "Rates on small populations",
    body: "Rates on small bases are noisy, and the noise of small regions can dominate Moran's I. A run can standardise declared rates by their population (EB-standardised, empirical Bayes), and the region map shows raw, global and local empirical-Bayes rates side by side; results on raw rates still deserve care.",
  },
};

const ALL: CautionKey[] = ["causation", "maup", "multiple", "small-n", "small-rates"];

export function Cautions({ items = ALL, className = "" }: { items?: CautionKey[]; className?: string }) {
  return (
    <aside
      aria-labelledby="cautions-heading"
      className={`rounded-lg border border-ochre-200 bg-ochre-50 p-5 text-sm text-ink-700 ${className}`}
    >
      <h2 id="cautions-heading" className="flex items-center gap-2 text-xs font-semibold uppercase tracking-wider text-ochre-800">
        <svg viewBox="0 0 20 20" className="h-4 w-4" aria-hidden="true">
          <path d="M10 2 19 18H1L10 2Z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
          <path d="M10 8v4.5M10 14.8v.2" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
        </svg>
        Read results with care
      </h2>
      <ul className="mt-3 space-y-2.5">
        {items.map((key) => (
          <li key={key} className="leading-snug">
            <span className="font-semibold text-ink">{CAUTIONS[key].title}.</span> {CAUTIONS[key].body}
          </li>
        ))}
      </ul>
    </aside>
  );
}

// The cautions box beside every result. The texts live in lib/runs/cautions.ts (figures print them
// too); items can be narrowed to the ones a particular result needs (e.g. leave out "small n" for a large panel).
import { CAUTIONS, DEFAULT_CAUTIONS, type CautionKey } from "@/lib/runs/cautions";

export { AREAL_WEIGHTING_CAUTION, REGRESSION_CAUTIONS, type CautionKey } from "@/lib/runs/cautions";

export function Cautions({
  items = DEFAULT_CAUTIONS,
  className = "",
  headingId = "cautions-heading",
  heading = "Read results with care",
  testId,
}: {
  items?: CautionKey[];
  className?: string;
  /** A second box on one page needs its own heading id. */
  headingId?: string;
  heading?: string;
  testId?: string;
}) {
  return (
    <aside
      aria-labelledby={headingId}
      data-testid={testId}
      className={`rounded-lg border border-ochre-200 bg-ochre-50 p-5 text-sm text-ink-700 ${className}`}
    >
      <h2 id={headingId} className="flex items-center gap-2 text-xs font-semibold uppercase tracking-wider text-ochre-800">
        <svg viewBox="0 0 20 20" className="h-4 w-4" aria-hidden="true">
          <path d="M10 2 19 18H1L10 2Z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
          <path d="M10 8v4.5M10 14.8v.2" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
        </svg>
        {heading}
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

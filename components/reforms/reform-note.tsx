import type { HarmonisationView } from "@/lib/intake/harmonisation";
import { carriedSentence, methodLabel, periodSpan } from "@/lib/reforms/describe";
import { Cautions } from "@/components/ui/cautions";

/**
 * Beside the results of a run on a harmonised panel version (timeline, map,
 * comparison): which periods were carried across the reform, how this
 * indicator was carried, and the areal-weighting caution. With `shown`, it
 * also says which of the periods on screen are carried estimates.
 */
export function ReformNote({
  harmonisation,
  indicator,
  shown,
  testId,
}: {
  harmonisation: HarmonisationView;
  indicator: string;
  /** The periods this screen shows; omitted on the timeline, which shades the carried ones. */
  shown?: readonly string[];
  testId: string;
}) {
  const carriedShown = shown ? shown.filter((p) => harmonisation.carriedPeriods.includes(p)) : [];
  return (
    <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_minmax(0,22rem)]" data-testid={testId}>
      <div className="rounded-lg border border-ink-100 bg-white p-4 text-sm text-ink-700">
        <h2 className="text-xs font-semibold uppercase tracking-wider text-ink-500">Harmonised across a boundary reform</h2>
        <p className="mt-2">{carriedSentence(harmonisation)}</p>
        <p className="mt-1 text-ink-500">
          This indicator was carried as {methodLabel(harmonisation.methods[indicator])}
          {harmonisation.source ? (
            <>
              {" "}
              from &apos;{harmonisation.source.panelName}&apos; v{harmonisation.source.version}
            </>
          ) : null}
          .
          {shown === undefined
            ? " The shaded periods were carried; the line marks the first period on the new boundaries."
            : carriedShown.length > 0
              ? ` On this screen, ${periodSpan(carriedShown)} ${carriedShown.length === 1 ? "is a carried estimate" : "are carried estimates"}, not observed on these regions.`
              : " Every period on this screen is observed on these regions."}
        </p>
      </div>
      <Cautions items={["areal-weighting"]} headingId={`${testId}-cautions-heading`} heading="Carried values" />
    </div>
  );
}

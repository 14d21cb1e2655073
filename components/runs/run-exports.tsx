"use client";

import { secondaryButton } from "@/components/ui/button-styles";
import { runExportUrl } from "./query-options";

const EXPORTS = [
  { kind: "global", label: "Global results", hint: "one row per indicator and period" },
  { kind: "local", label: "Local results", hint: "one row per region, indicator and period" },
  { kind: "weights", label: "Weights", hint: "edge list: from, to, weight" },
] as const;

/** Download links for a run's three exports in both formats (docs/exports.md), for R, Python or a spreadsheet. */
export function RunExports({ slug, runId, runName, localComputed }: { slug: string; runId: number; runName: string; localComputed: boolean }) {
  return (
    <details className="relative" data-testid={`run-${runId}-exports`}>
      <summary className={`${secondaryButton} cursor-pointer list-none`}>Run exports</summary>
      <div className="absolute right-0 z-20 mt-2 w-80 rounded-md border border-ink-100 bg-white p-3 shadow-lg">
        <p className="mb-2 text-xs text-ink-500">{runName}: tidy tables for R or Python. CSV opens in a spreadsheet too.</p>
        <ul className="space-y-2">
          {EXPORTS.filter((e) => e.kind !== "local" || localComputed).map((e) => (
            <li key={e.kind} className="flex items-center justify-between gap-2">
              <span className="min-w-0">
                <span className="block text-sm font-medium text-ink-700">{e.label}</span>
                <span className="block text-xs text-ink-400">{e.hint}</span>
              </span>
              <span className="flex shrink-0 gap-1">
                <a className={secondaryButton} href={runExportUrl(slug, runId, e.kind, "csv")} download aria-label={`${e.label} of ${runName} as CSV`}>
                  CSV
                </a>
                <a className={secondaryButton} href={runExportUrl(slug, runId, e.kind, "json")} download aria-label={`${e.label} of ${runName} as JSON`}>
                  JSON
                </a>
              </span>
            </li>
          ))}
        </ul>
      </div>
    </details>
  );
}

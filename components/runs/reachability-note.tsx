"use client";

import type { ReachabilityWarning } from "@/lib/runs/reachability";
import type { LocalFields } from "@/lib/runs/types";

/**
 * Beside a local result: whether its permutations could reach significance
 * under the run's correction (lib/runs/reachability) and, for runs with
 * sequential p-values, how many regions stopped early.
 */
export function LocalInferenceNote({ warning, local, testId }: { warning: ReachabilityWarning | null; local: LocalFields | null; testId: string }) {
  const sequential = local?.sequentialExtremes !== undefined && local?.sequentialExtremes !== null ? local : null;
  if (!warning && !sequential) return null;
  const tested = local ? local.cluster.filter((c) => c !== "no-neighbours").length : 0;
  return (
    <div className="mt-3 space-y-1 text-xs">
      {warning ? (
        <p className="rounded-md border border-ochre-200 bg-ochre-50 px-3 py-2 text-ochre-900" data-testid={`reachability-${testId}`} title={warning.text}>
          {warning.note}
        </p>
      ) : null}
      {sequential ? (
        <p className="text-ink-500" data-testid={`sequential-${testId}`}>
          Sequential p-values (Besag &amp; Clifford, h = {sequential.sequentialExtremes}): {sequential.stopped ?? 0} of {tested} region{tested === 1 ? "" : "s"} stopped
          early, far from significance; the others used every permutation.
        </p>
      ) : null}
    </div>
  );
}

/** The start form's warning, before a run is started. */
export function StartFormReachability({ warnings }: { warnings: readonly ReachabilityWarning[] }) {
  if (warnings.length === 0) return null;
  return (
    <div className="space-y-2 rounded-md border border-ochre-200 bg-ochre-50 px-4 py-3 text-sm text-ochre-900" role="status" data-testid="run-reachability-warning">
      {warnings.map((w) => (
        <p key={w.scope}>
          <span className="font-semibold">{w.scope === "local" ? "Local clusters: " : "Run-wide classes: "}</span>
          {w.text}
        </p>
      ))}
    </div>
  );
}

"use client";

import { useEffect, useRef, useState } from "react";
import { runName } from "@/lib/runs/label";

type RunState = { id: number; number: number; state: string; periodsDone: number; resultsTotal: number };

const FINISHED: Record<string, string> = { completed: "finished", failed: "failed", cancelled: "was cancelled" };

/** The words for what changed between two polls of the queue, or null when nothing worth saying did. */
export function runChangeMessage(before: RunState | undefined, now: RunState): string | null {
  const name = runName(now.number);
  if (before && before.state === now.state) {
    if (now.state !== "running" || !now.resultsTotal) return null;
    // Progress in quarters, so a screen reader is not told every poll.
    const quarter = (r: RunState) => Math.floor((4 * r.periodsDone) / Math.max(1, r.resultsTotal));
    return quarter(now) > quarter(before) && quarter(now) < 4 ? `${name}: ${Math.round((100 * now.periodsDone) / now.resultsTotal)} % done.` : null;
  }
  if (!before) return now.state === "queued" || now.state === "running" ? `${name} queued.` : null;
  if (now.state === "running") return `${name} started.`;
  if (FINISHED[now.state]) return `${name} ${FINISHED[now.state]}.`;
  return null;
}

/**
 * A polite live region saying what happens to the runs in the queue ("Run 7 started",
 * "Run 7: 50 % done", "Run 7 finished"), so a screen-reader user need not watch the
 * progress bars. The first answer is only remembered, never announced.
 */
export function RunAnnouncer({ runs }: { runs: readonly RunState[] | undefined }) {
  const seen = useRef<Map<number, RunState> | null>(null);
  const [message, setMessage] = useState("");
  useEffect(() => {
    if (!runs) return;
    const before = seen.current;
    seen.current = new Map(runs.map((r) => [r.id, { ...r }]));
    if (!before) return;
    const said = runs.map((r) => runChangeMessage(before.get(r.id), r)).filter((m): m is string => m !== null);
    if (said.length) setMessage(said.join(" "));
  }, [runs]);
  return (
    <div role="status" aria-live="polite" aria-atomic="true" className="sr-only" data-testid="run-announcer">
      {message}
    </div>
  );
}

"use client";

import { useQuery } from "@tanstack/react-query";
import { idFromText } from "@/lib/http/params";
import { timelineQuery } from "./query-options";
import { useUrlParams } from "./use-url-params";

/**
 * The indicator and run chosen in the URL (`indicator`, `run`), the run's
 * timeline and its periods — shared by the timeline, map and comparison
 * screens. Without `run`, the latest completed run of the indicator is used.
 */
export function useIndicatorTimeline(slug: string, indicators: { code: string; label: string }[]) {
  const url = useUrlParams();
  const indicator = url.params.get("indicator") ?? indicators[0]?.code ?? "";
  // A run number as the API accepts it (lib/http/params.ts); anything else means the latest run.
  const run = idFromText(url.params.get("run"));
  const timeline = useQuery(timelineQuery(slug, indicator, run));
  const periods = timeline.data?.points.map((p) => p.period) ?? [];
  return { ...url, indicator, run, timeline, periods, runId: timeline.data?.run.id ?? run };
}

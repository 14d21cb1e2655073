"use client";

import { useQuery } from "@tanstack/react-query";
import { inputClass } from "@/components/ui/button-styles";
import { runLabel } from "@/lib/runs/label";
import { runsQuery } from "./query-options";

/**
 * The run choice of the timeline, map and comparison screens: completed runs
 * that analysed the indicator, each named by runLabel so a queen run and a
 * rook run of one panel are told apart. The value is the run's global id (URLs).
 */
export function RunPicker({
  id,
  slug,
  indicator,
  value,
  onChange,
}: {
  id: string;
  slug: string;
  indicator: string;
  value: number | null;
  onChange: (runId: number) => void;
}) {
  const runs = useQuery(runsQuery(slug));
  const choices = (runs.data ?? []).filter((r) => r.state === "completed" && r.params.indicators.includes(indicator));
  // Only once the shown run is among the choices: a select must never show a run other than the one on screen.
  if (value === null || !choices.some((r) => r.id === value)) return null;
  return (
    <div>
      <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor={id}>
        Run
      </label>
      <select id={id} className={`${inputClass} mt-1 w-[26rem] max-w-full`} value={value} onChange={(e) => onChange(Number(e.target.value))} data-testid="run-picker">
        {choices.map((r) => (
          <option key={r.id} value={r.id}>
            {runLabel(r)}
          </option>
        ))}
      </select>
    </div>
  );
}

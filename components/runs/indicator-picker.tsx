"use client";

import { inputClass } from "@/components/ui/button-styles";

/** The indicator choice shared by the timeline, map and comparison screens. */
export function IndicatorPicker({
  id,
  value,
  indicators,
  onChange,
}: {
  id: string;
  value: string;
  indicators: { code: string; label: string }[];
  onChange: (code: string) => void;
}) {
  return (
    <div>
      <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor={id}>
        Indicator
      </label>
      <select id={id} className={`${inputClass} mt-1 w-72`} value={value} onChange={(e) => onChange(e.target.value)}>
        {indicators.map((i) => (
          <option key={i.code} value={i.code}>
            {i.label}
          </option>
        ))}
      </select>
    </div>
  );
}

"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import type { IndicatorMeta } from "@/lib/intake/published-panel";
import { RATE_MULTIPLIERS, multiplierLabel } from "@/lib/intake/rates";
import { Notice, Panel } from "./format";
import { intakeApi, intakeKeys } from "./query-options";

const DIRECTION: Record<string, string> = { true: "Higher is better", false: "Lower is better", null: "Neither" };

export function IndicatorsEditor({ slug, indicators, canEdit }: { slug: string; indicators: IndicatorMeta[]; canEdit: boolean }) {
  const [editing, setEditing] = useState<string | null>(null);
  return (
    <Panel
      title="Indicators"
      caption="Labels, units and sources shown with every result. New codes appear here when a panel containing them is validated. An indicator can be declared a rate of two others of one panel (events over population)."
    >
      {indicators.length === 0 ? <Notice>No indicators yet.</Notice> : null}
      <ul className="divide-y divide-ink-50" data-testid="indicators">
        {indicators.map((indicator) => (
          <li key={indicator.code} className="py-3">
            {editing === indicator.code ? (
              <IndicatorForm slug={slug} indicator={indicator} others={indicators.filter((other) => other.code !== indicator.code)} onDone={() => setEditing(null)} />
            ) : (
              <div className="flex flex-wrap items-start justify-between gap-3">
                <div>
                  <p className="text-sm font-medium text-ink">
                    {indicator.label} {indicator.unit ? <span className="font-normal text-ink-400">({indicator.unit})</span> : null}
                  </p>
                  <p className="text-xs text-ink-400">
                    <code>{indicator.code}</code> · {DIRECTION[String(indicator.higherIsBetter)]}
                    {indicator.source ? ` · ${indicator.source}` : ""}
                  </p>
                  {indicator.rate ? (
                    <p className="mt-1 text-xs text-ink-600" data-testid={`rate-${indicator.code}`}>
                      Rate: <code>{indicator.rate.events}</code> / <code>{indicator.rate.population}</code> × {indicator.rate.multiplier.toLocaleString("en")} ({multiplierLabel(indicator.rate.multiplier)})
                    </p>
                  ) : null}
                  {indicator.description ? <p className="mt-1 max-w-2xl text-sm text-ink-600">{indicator.description}</p> : null}
                </div>
                {canEdit ? (
                  <button type="button" className={secondaryButton} onClick={() => setEditing(indicator.code)}>
                    Edit
                  </button>
                ) : null}
              </div>
            )}
          </li>
        ))}
      </ul>
    </Panel>
  );
}

function IndicatorForm({ slug, indicator, others, onDone }: { slug: string; indicator: IndicatorMeta; others: IndicatorMeta[]; onDone: () => void }) {
  const client = useQueryClient();
  const [label, setLabel] = useState(indicator.label);
  const [unit, setUnit] = useState(indicator.unit ?? "");
  const [source, setSource] = useState(indicator.source ?? "");
  const [description, setDescription] = useState(indicator.description ?? "");
  const [direction, setDirection] = useState(String(indicator.higherIsBetter));
  const [isRate, setIsRate] = useState(indicator.rate !== null);
  const [events, setEvents] = useState(indicator.rate?.events ?? "");
  const [population, setPopulation] = useState(indicator.rate?.population ?? "");
  const [multiplier, setMultiplier] = useState(String(indicator.rate?.multiplier ?? 1000));
  const save = useMutation({
    mutationFn: () =>
      intakeApi.saveIndicator(slug, indicator.code, {
        label,
        unit: unit || null,
        source: source || null,
        description: description || null,
        higherIsBetter: direction === "true" ? true : direction === "false" ? false : null,
        rate: isRate ? { events, population, multiplier: Number(multiplier) as NonNullable<IndicatorMeta["rate"]>["multiplier"] } : null,
      }),
    onSuccess: async () => {
      await client.invalidateQueries({ queryKey: intakeKeys.all(slug) });
      onDone();
    },
  });
  return (
    <form
      className="grid gap-3 sm:grid-cols-2"
      onSubmit={(e) => {
        e.preventDefault();
        save.mutate();
      }}
    >
      <label className={labelClass}>
        Label
        <input className={`${inputClass} mt-1`} value={label} onChange={(e) => setLabel(e.target.value)} required maxLength={200} />
      </label>
      <label className={labelClass}>
        Unit
        <input className={`${inputClass} mt-1`} value={unit} onChange={(e) => setUnit(e.target.value)} maxLength={80} />
      </label>
      <label className={labelClass}>
        Source
        <input className={`${inputClass} mt-1`} value={source} onChange={(e) => setSource(e.target.value)} maxLength={400} />
      </label>
      <label className={labelClass}>
        Direction
        <select className={`${inputClass} mt-1`} value={direction} onChange={(e) => setDirection(e.target.value)}>
          <option value="true">Higher is better</option>
          <option value="false">Lower is better</option>
          <option value="null">Neither</option>
        </select>
      </label>
      <label className={`${labelClass} sm:col-span-2`}>
        Description
        <textarea className={`${inputClass} mt-1`} rows={3} value={description} onChange={(e) => setDescription(e.target.value)} maxLength={4000} />
      </label>
      <fieldset className="sm:col-span-2 rounded border border-ink-100 p-3">
        <legend className="px-1 text-sm font-medium text-ink">Rate</legend>
        <label className="flex items-center gap-2 text-sm text-ink-700">
          <input type="checkbox" checked={isRate} onChange={(e) => setIsRate(e.target.checked)} />
          This indicator is a rate: events over population of the same panel
        </label>
        {isRate ? (
          <div className="mt-3 grid gap-3 sm:grid-cols-3">
            <IndicatorChoice title="Events" value={events} onChange={setEvents} indicators={others} />
            <IndicatorChoice title="Population" value={population} onChange={setPopulation} indicators={others} />
            <label className={labelClass}>
              Multiplier
              <select className={`${inputClass} mt-1`} value={multiplier} onChange={(e) => setMultiplier(e.target.value)}>
                {RATE_MULTIPLIERS.map((m) => (
                  <option key={m} value={String(m)}>
                    {m.toLocaleString("en")} ({multiplierLabel(m)})
                  </option>
                ))}
              </select>
            </label>
          </div>
        ) : null}
      </fieldset>
      {save.error ? (
        <div className="sm:col-span-2">
          <Notice tone="error">{save.error.message}</Notice>
        </div>
      ) : null}
      <div className="flex gap-2 sm:col-span-2">
        <button type="submit" className={primaryButton} disabled={save.isPending}>
          Save
        </button>
        <button type="button" className={secondaryButton} onClick={onDone}>
          Cancel
        </button>
      </div>
    </form>
  );
}

/** A required choice among the panel's other indicators (a rate's events or population). */
function IndicatorChoice({ title, value, onChange, indicators }: { title: string; value: string; onChange: (code: string) => void; indicators: IndicatorMeta[] }) {
  return (
    <label className={labelClass}>
      {title}
      <select className={`${inputClass} mt-1`} value={value} onChange={(e) => onChange(e.target.value)} required>
        <option value="">Choose…</option>
        {indicators.map((other) => (
          <option key={other.code} value={other.code}>
            {other.label} ({other.code})
          </option>
        ))}
      </select>
    </label>
  );
}

"use client";

import type { ReactNode } from "react";
import { SegmentedSwitch } from "@/components/ui/segmented-switch";
import { scaleLinear } from "d3-scale";
import { Notice, Panel } from "@/components/runs/format";
import type { MapRates, RegionRates } from "@/lib/runs/on-demand";
import { formatValue } from "@/lib/runs/number-format";
import { RegionMap, type RegionFeature } from "./region-map";
import { RateMapAlternative } from "./figure-alternatives";

/** The map's three views of a rate indicator. */
export const RATE_LAYERS = ["raw", "global", "local"] as const;
export type RateLayer = (typeof RATE_LAYERS)[number];

export const RATE_LAYER_NAMES: Record<RateLayer, string> = {
  raw: "Raw rate",
  global: "Global EB rate",
  local: "Local EB rate",
};

const RATE_LAYER_CAPTIONS: Record<RateLayer, string> = {
  raw: "Events divided by population as published: a district with a few hundred residents swings on one or two events.",
  global:
    "Each rate shrunk towards the overall rate, the more the smaller its population (empirical Bayes, Marshall 1991): large districts keep their rate, small ones move towards the whole.",
  local:
    "Each rate shrunk towards the rate of the district and its neighbours under the run's weights (local empirical Bayes, Marshall 1991); a district without neighbours keeps its raw rate.",
};

// Ochre ramp of the Tessera palette (tailwind.config.ts ochre 50, 200, 400, 600, 800).
export const RATE_RAMP = ["#fdf8ec", "#f0d48e", "#d9a033", "#a86d14", "#6d4217"];

/** One colour scale over both periods and all three layers, so switching layers shows the shrinkage as a change of colour. */
export function rateScale(rates: readonly (MapRates | undefined)[]): ((v: number) => string) & { domain: [number, number] } | null {
  const values = rates.flatMap((r) => (r ? Object.values(r.regions).flatMap((x) => (x ? [x.raw, x.global, x.local] : [])) : []));
  if (!values.length) return null;
  const min = Math.min(...values);
  const max = Math.max(...values);
  const step = (max - min) / (RATE_RAMP.length - 1);
  const scale = scaleLinear<string>()
    .domain(RATE_RAMP.map((_, i) => min + i * step))
    .range(RATE_RAMP)
    .clamp(true);
  return Object.assign((v: number) => scale(v), { domain: [min, max] as [number, number] });
}

export function rateOf(region: RegionRates | null | undefined, layer: RateLayer): number | null {
  if (!region) return null;
  return layer === "raw" ? region.raw : layer === "global" ? region.global : region.local;
}

export function RateLayerSwitch({ value, onChange }: { value: RateLayer; onChange: (layer: RateLayer) => void }) {
  return <SegmentedSwitch options={RATE_LAYERS} names={RATE_LAYER_NAMES} value={value} onChange={onChange} label="Rate layer" testId="rate-layer-switch" tone="ochre" />;
}

/** The choropleth of one period under the chosen rate layer; each region's title gives raw and both smoothed rates. */
export function RateChoropleth({
  rates,
  layer,
  scale,
  title,
  unit,
  features,
  coordinates,
  names,
  activeId,
  onHover,
  onSelect,
  testId,
  actions,
}: {
  rates: MapRates | undefined;
  layer: RateLayer;
  scale: ReturnType<typeof rateScale>;
  title: string;
  unit: string;
  features: RegionFeature[];
  coordinates: "planar" | "lonlat";
  names: Record<string, string | null>;
  activeId: string | null;
  onHover: (id: string | null) => void;
  onSelect: (id: string) => void;
  testId: string;
  /** The panel's header actions (the map's figure downloads). */
  actions?: ReactNode;
}) {
  const caption = `${RATE_LAYER_CAPTIONS[layer]} Ochre scale shared by both periods and all three layers. Hatched districts lack the events or the population.`;
  if (!rates) {
    return (
      <Panel title={title}>
        <p className="text-sm text-ink-500">Loading rates…</p>
      </Panel>
    );
  }
  const fmt = (v: number | null) => formatValue(v, { unit });
  return (
    <Panel title={`${title} · ${RATE_LAYER_NAMES[layer]}`} caption={caption} actions={actions}>
      {rates.problem ? <Notice>{rates.problem}</Notice> : null}
      <RegionMap
        features={features}
        coordinates={coordinates}
        fill={(id) => {
          const v = rateOf(rates.regions[id], layer);
          return v === null || !scale ? "#f5f5f4" : scale(v);
        }}
        hatched={(id) => !rates.regions[id]}
        activeId={activeId}
        onHover={onHover}
        onSelect={onSelect}
        label={`${RATE_LAYER_NAMES[layer]} map, ${rates.period}`}
        testId={testId}
        regionValue={(id) => {
          const v = rateOf(rates.regions[id], layer);
          return v === null ? undefined : String(v);
        }}
        regionTitle={(id) => {
          const r = rates.regions[id];
          const name = `${names[id] ?? id} (${id})`;
          if (!r) return `${name}: no events or population in ${rates.period}`;
          return `${name}: raw ${fmt(r.raw)} · global EB ${fmt(r.global)} · local EB ${fmt(r.local)} (${formatValue(r.events)} events, population ${formatValue(r.population)})`;
        }}
      />
      {scale ? (
        <div className="mt-3">
          <div className="h-2.5 w-full rounded-sm" style={{ background: `linear-gradient(to right, ${RATE_RAMP.join(",")})` }} />
          <div className="mt-1 flex justify-between text-xs tabular-nums text-ink-500" data-testid={`${testId}-legend`}>
            <span>{formatValue(scale.domain[0])}</span>
            <span>overall rate {fmt(rates.overallRate)}</span>
            <span>{formatValue(scale.domain[1])}</span>
          </div>
        </div>
      ) : null}
      <RateMapAlternative rates={rates} layer={layer} layerName={`${RATE_LAYER_NAMES[layer]}, ${title}`} names={names} unit={unit} testId={testId} />
    </Panel>
  );
}

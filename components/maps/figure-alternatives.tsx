"use client";

import { FigureTable, type FigureRow } from "@/components/ui/figure-table";
import { CLUSTER_CLASS_NAMES } from "@/lib/runs/cluster-classes";
import { choroplethSummary, clusterMapSummary, giStarMapSummary, scatterSummary } from "@/lib/runs/figure-summary";
import { GI_STAR_CLASS_NAMES, giStarMapLabel } from "@/lib/runs/gi-star-classes";
import { formatValue } from "@/lib/runs/number-format";
import type { MapPeriod } from "@/lib/runs/on-demand";
import type { MapRates } from "@/lib/runs/on-demand";
import { fmt, fmtP } from "@/components/runs/format";

// The text alternatives of the Region map's figures (summary sentence + "Table"): regions with
// their value, class and p, in the order of their codes.

type Names = Record<string, string | null>;

function regionName(id: string, names: Names): string {
  return names[id] ? `${names[id]} (${id})` : id;
}

function byCode(ids: readonly string[]): string[] {
  return [...ids].sort((x, y) => x.localeCompare(y, "en", { numeric: true }));
}

const REGION_COLUMNS = [
  { key: "region", label: "Region" },
  { key: "value", label: "Value", numeric: true },
  { key: "class", label: "Class" },
  { key: "p", label: "Pseudo p", numeric: true },
] as const;

/** The local cluster map of one period as words and a table. */
export function ClusterMapAlternative({ map, indicator, names, unit, testId }: { map: MapPeriod; indicator: string; names: Names; unit: string; testId: string }) {
  const local = map.local;
  const ids = byCode(Object.keys(map.values));
  const at = new Map(local ? local.ids.map((id, i) => [id, i]) : []);
  const rows: FigureRow[] = ids.map((id) => {
    const i = at.get(id);
    return {
      region: regionName(id, names),
      value: formatValue(map.values[id], { unit }),
      class: local && i !== undefined ? CLUSTER_CLASS_NAMES[local.cluster[i]] : "No value",
      p: local && i !== undefined ? fmtP(local.adjustedP[i] ?? local.pseudoP[i]) : null,
    };
  });
  return <FigureTable summary={clusterMapSummary(indicator, map.period, local?.counts ?? null)} caption={`Local clusters of ${indicator} in ${map.period}`} columns={REGION_COLUMNS} rows={rows} testId={testId} />;
}

/** The Gi* map of one period as words and a table. */
export function GiStarMapAlternative({ map, indicator, names, unit, testId }: { map: MapPeriod; indicator: string; names: Names; unit: string; testId: string }) {
  const g = map.giStar;
  const ids = byCode(Object.keys(map.values));
  const at = new Map(g ? g.ids.map((id, i) => [id, i]) : []);
  const rows: FigureRow[] = ids.map((id) => {
    const i = at.get(id);
    return {
      region: regionName(id, names),
      value: formatValue(map.values[id], { unit }),
      z: g && i !== undefined ? fmt(g.z[i]) : null,
      class: g && i !== undefined ? GI_STAR_CLASS_NAMES[g.classes[i]] : "No value",
      p: g && i !== undefined ? fmtP(g.pseudoP[i]) : null,
    };
  });
  return (
    <FigureTable
      summary={giStarMapSummary(indicator, map.period, g?.counts ?? null)}
      caption={giStarMapLabel(indicator, map.period)}
      columns={[REGION_COLUMNS[0], REGION_COLUMNS[1], { key: "z", label: "Gi* z", numeric: true }, REGION_COLUMNS[2], REGION_COLUMNS[3]]}
      rows={rows}
      testId={testId}
    />
  );
}

/** A choropleth of values as words and a table. */
export function ChoroplethAlternative({ map, indicator, names, unit, testId }: { map: MapPeriod; indicator: string; names: Names; unit: string; testId: string }) {
  const rows: FigureRow[] = byCode(Object.keys(map.values)).map((id) => ({ region: regionName(id, names), value: formatValue(map.values[id], { unit }) }));
  return (
    <FigureTable
      summary={choroplethSummary(indicator, map.period, map.values, { unit, names })}
      caption={`${indicator} by region in ${map.period}`}
      columns={[REGION_COLUMNS[0], REGION_COLUMNS[1]]}
      rows={rows}
      testId={testId}
    />
  );
}

/** A rate map (raw, global or local empirical-Bayes) as words and a table of all three rates. */
export function RateMapAlternative({ rates, layer, layerName, names, unit, testId }: { rates: MapRates; layer: "raw" | "global" | "local"; layerName: string; names: Names; unit: string; testId: string }) {
  const ids = byCode(Object.keys(rates.regions));
  const shown: Record<string, number | null> = Object.fromEntries(ids.map((id) => [id, rates.regions[id]?.[layer] ?? null]));
  const f = (v: number | null | undefined) => formatValue(v, { unit });
  const rows: FigureRow[] = ids.map((id) => {
    const r = rates.regions[id];
    return { region: regionName(id, names), raw: f(r?.raw), global: f(r?.global), local: f(r?.local), events: formatValue(r?.events), population: formatValue(r?.population) };
  });
  return (
    <FigureTable
      summary={choroplethSummary(layerName, rates.period, shown, { unit, names })}
      caption={`Rates by region in ${rates.period}`}
      columns={[
        { key: "region", label: "Region" },
        { key: "raw", label: "Raw rate", numeric: true },
        { key: "global", label: "Global EB rate", numeric: true },
        { key: "local", label: "Local EB rate", numeric: true },
        { key: "events", label: "Events", numeric: true },
        { key: "population", label: "Population", numeric: true },
      ]}
      rows={rows}
      testId={testId}
    />
  );
}

/** The Moran scatter plot of one period as words and a table. */
export function ScatterAlternative({ map, indicator, names, testId }: { map: MapPeriod; indicator: string; names: Names; testId: string }) {
  const local = map.local;
  if (!local) return null;
  const points = local.ids.map((id, i) => ({ id, x: local.standardised[i], y: local.lag[i], cls: local.cluster[i] }));
  const rows: FigureRow[] = [...points]
    .sort((p, q) => p.id.localeCompare(q.id, "en", { numeric: true }))
    .map((p) => ({ region: regionName(p.id, names), z: fmt(p.x), lag: fmt(p.y), class: CLUSTER_CLASS_NAMES[p.cls] }));
  return (
    <FigureTable
      summary={scatterSummary(indicator, map.period, points, local.slope)}
      caption={`Moran scatter plot of ${indicator} in ${map.period}`}
      columns={[
        { key: "region", label: "Region" },
        { key: "z", label: "Standardised value z", numeric: true },
        { key: "lag", label: "Spatial lag of z", numeric: true },
        { key: "class", label: "Class" },
      ]}
      rows={rows}
      testId={testId}
    />
  );
}

import { interpolateYlOrBr } from "d3-scale-chromatic";
import type { IndicatorMeta } from "@/lib/intake/published-panel";
import { CLUSTER_CLASS_COLOURS, CLUSTER_CLASS_NAMES, CLUSTER_CLASS_ORDER } from "@/lib/runs/cluster-classes";
import type { CrosswalkDetail } from "@/lib/reforms/service";
import { crosswalkSourceLine, figureCautions, figureSourceLine, type FigureKind, type FigureLegendItem } from "@/lib/runs/figures";
import { GI_STAR_CLASS_COLOURS, GI_STAR_CLASS_NAMES, GI_STAR_CLASS_ORDER, giStarMapTitle } from "@/lib/runs/gi-star-classes";
import type { MapPeriod } from "@/lib/runs/on-demand";
import type { RunSummary } from "@/lib/runs/queries";
import type { FigureSpec } from "./figure-downloads";

// The words of each downloadable figure of the timeline and the region map: title, units,
// legend, source line and cautions, from the data the screen already holds.

const INK = "#1e2a44";
const MUTED = "#94a1bd";
const OCHRE = "#c98a1b";

function today(): string {
  return new Date().toISOString().slice(0, 10);
}

interface Context {
  run: RunSummary;
  indicator: IndicatorMeta;
  periods: readonly string[];
  harmonised: boolean;
  /** The fewest regions behind any number in the figure (for the "few regions" caution). */
  regions?: number | null;
}

function spec(kind: FigureKind, c: Context, words: { title: string; units: string; legend: FigureLegendItem[] }, cautionContext: { covariates?: boolean } = {}): FigureSpec {
  return {
    ...words,
    sourceLine: figureSourceLine(c.run, { periods: c.periods, date: today() }),
    cautions: figureCautions(kind, { regions: c.regions, rate: Boolean(c.indicator.rate), harmonised: c.harmonised, ...cautionContext }),
    file: { runId: c.run.id, indicator: c.indicator.code, periods: c.periods.length <= 2 ? c.periods : [], figure: kind },
  };
}

function fewest(ns: readonly (number | null | undefined)[]): number | null {
  const known = ns.filter((n): n is number => typeof n === "number" && n > 0);
  return known.length ? Math.min(...known) : null;
}

function valueUnits(indicator: IndicatorMeta): string {
  return indicator.unit ? `${indicator.label} in ${indicator.unit}` : indicator.label;
}

/** The timeline's chart of Moran's I with E[I], the band and the significant periods (and the residual line when shown). */
export function moranTimelineFigure(
  c: Omit<Context, "regions" | "periods"> & { points: readonly { period: string; n: number }[] },
  title: string,
  residualSeries: string | null,
): FigureSpec {
  return spec(
    "timeline",
    { ...c, periods: [], regions: fewest(c.points.map((p) => p.n)) },
    {
      title,
      units: `Moran's I (unitless) of ${valueUnits(c.indicator)}; periods in years`,
      legend: [
        { kind: "line", label: "Moran's I", colour: INK },
        ...(residualSeries ? [{ kind: "line" as const, label: residualSeries, colour: "#865214", dash: "dotted" as const }] : []),
        { kind: "line", label: "E[I]", colour: MUTED, dash: "dashed" },
        { kind: "swatch", label: "95 % band under the null", colour: "rgba(148,161,189,0.45)" },
        { kind: "point", label: "Significant after correction", colour: OCHRE },
      ],
    },
    { covariates: Boolean(residualSeries) },
  );
}

/** The timeline's bars of z per period. */
export function zTimelineFigure(c: Omit<Context, "regions" | "periods"> & { points: readonly { n: number }[] }): FigureSpec {
  return spec(
    "z-chart",
    { ...c, periods: [], regions: fewest(c.points.map((p) => p.n)) },
    {
      title: `z-value of Moran's I of ${c.indicator.label.toLowerCase()} per period`,
      units: "z under randomisation (standard deviations); periods in years",
      legend: [
        { kind: "swatch", label: "Clustering", colour: CLUSTER_CLASS_COLOURS.HH },
        { kind: "swatch", label: "Dispersion", colour: CLUSTER_CLASS_COLOURS.LL },
        { kind: "swatch", label: "Not significant", colour: "#c3cbdb" },
        { kind: "line", label: "±1.96 (two-sided 5 %, one test)", colour: OCHRE, dash: "dashed" },
      ],
    },
  );
}

/** The robustness strip: I for one period under each weights rule. */
export function robustnessFigure(c: Omit<Context, "regions" | "periods">, period: string): FigureSpec {
  return spec(
    "robustness",
    { ...c, periods: [period] },
    {
      title: `Moran's I of ${c.indicator.label.toLowerCase()} in ${period} across weights rules`,
      units: "Moran's I (unitless)",
      legend: [
        { kind: "point", label: "I under the rule", colour: INK },
        { kind: "swatch", label: "95 % band under the null", colour: "rgba(148,161,189,0.45)" },
      ],
    },
  );
}

/** One period's local Moran cluster map. */
export function clusterMapFigure(c: Omit<Context, "regions" | "periods">, map: MapPeriod): FigureSpec {
  const counts = map.local?.counts;
  return spec(
    "cluster-map",
    { ...c, periods: [map.period], regions: map.local?.ids.length ?? null },
    {
      title: `Local clusters of ${c.indicator.label.toLowerCase()}, ${map.period}`,
      units: "cluster classes of local Moran's I (no units)",
      legend: CLUSTER_CLASS_ORDER.map((k) =>
        k === "no-neighbours"
          ? { kind: "hatch" as const, label: `${CLUSTER_CLASS_NAMES[k]} (${counts?.[k] ?? 0})` }
          : { kind: "swatch" as const, label: `${CLUSTER_CLASS_NAMES[k]} (${counts?.[k] ?? 0})`, colour: CLUSTER_CLASS_COLOURS[k] },
      ),
    },
  );
}

/** One period's Gi* map. */
export function giStarMapFigure(c: Omit<Context, "regions" | "periods">, map: MapPeriod): FigureSpec {
  const counts = map.giStar?.counts;
  return spec(
    "gi-star-map",
    { ...c, periods: [map.period], regions: map.giStar?.ids.length ?? null },
    {
      title: `${giStarMapTitle(map.period)}: local Gi* of ${c.indicator.label.toLowerCase()}`,
      units: "classes of the Gi* z-score (no units)",
      legend: GI_STAR_CLASS_ORDER.map((k) =>
        k === "no-neighbours"
          ? { kind: "hatch" as const, label: `${GI_STAR_CLASS_NAMES[k]} (${counts?.[k] ?? 0})` }
          : { kind: "swatch" as const, label: `${GI_STAR_CLASS_NAMES[k]} (${counts?.[k] ?? 0})`, colour: GI_STAR_CLASS_COLOURS[k] },
      ),
    },
  );
}

/** One period's choropleth of the values (low and high already formatted with the unit). */
export function choroplethFigure(c: Omit<Context, "regions" | "periods">, period: string, low: string, high: string): FigureSpec {
  return spec(
    "choropleth",
    { ...c, periods: [period] },
    {
      title: `${c.indicator.label}, ${period}`,
      units: valueUnits(c.indicator),
      legend: [
        { kind: "scale", label: "Value", stops: Array.from({ length: 11 }, (_, i) => interpolateYlOrBr(i / 10)), low, high },
        { kind: "hatch", label: "No value" },
      ],
    },
  );
}

/** One period's rate map under a layer (raw, global or local empirical-Bayes). */
export function rateMapFigure(c: Omit<Context, "regions" | "periods">, period: string, layerName: string, stops: readonly string[], low: string, high: string): FigureSpec {
  return spec(
    "rate-map",
    { ...c, periods: [period] },
    {
      title: `${c.indicator.label}, ${period} · ${layerName}`,
      units: valueUnits(c.indicator),
      legend: [
        { kind: "scale", label: layerName, stops, low, high },
        { kind: "hatch", label: "No events or population" },
      ],
    },
  );
}

/** One period's Moran scatter plot. */
export function scatterFigure(c: Omit<Context, "regions" | "periods">, map: MapPeriod): FigureSpec {
  return spec(
    "scatter",
    { ...c, periods: [map.period], regions: map.local?.ids.length ?? null },
    {
      title: `Moran scatter plot of ${c.indicator.label.toLowerCase()}, ${map.period}`,
      units: "standardised value z and its spatial lag (standard deviations)",
      legend: [
        ...CLUSTER_CLASS_ORDER.filter((k) => k !== "no-neighbours").map((k) => ({ kind: "point" as const, label: CLUSTER_CLASS_NAMES[k], colour: CLUSTER_CLASS_COLOURS[k] })),
        { kind: "line", label: "Slope = Moran's I", colour: OCHRE },
      ],
    },
  );
}

/** The reform map of a crosswalk: the new regions (merged, split parts, unchanged) under the old regions' outlines. */
export function reformMapFigure(detail: CrosswalkDetail): FigureSpec {
  const summary = detail.report?.summary;
  const title = `Boundary reform: ${detail.from.setName} v${detail.from.version} to ${detail.to.setName} v${detail.to.version}`;
  return {
    title,
    units: "regions of the two boundary versions (no values)",
    legend: [
      { kind: "swatch", label: `Merged (${summary?.merged.length ?? 0})`, colour: "#f0d48e" },
      { kind: "line", label: `Split: the old border (${summary?.split.length ?? 0})`, colour: OCHRE },
      { kind: "swatch", label: `Unchanged (${summary?.unchanged ?? 0})`, colour: "#e3e7ef" },
      { kind: "line", label: "Old regions", colour: INK },
    ],
    sourceLine: crosswalkSourceLine(detail, { date: today() }),
    cautions: figureCautions("reform-map", { harmonised: detail.origin === "derived" }),
    file: { runId: null, indicator: `crosswalk ${detail.id}`, figure: "reform-map" },
  };
}

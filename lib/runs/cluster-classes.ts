/**
 * The one place that names and colours the local cluster classes of local
 * Moran's I. Maps, legends, the transition table, tooltips, the scatter
 * plot, digests and the catalogue all read these, so a class has one name on
 * a page and in a mail. The colours are the palette's `cluster` colours in
 * tailwind.config.ts (a unit test keeps the two equal). Pure; no React.
 */
import type { ClusterClass } from "@/lib/spatial";

/**
 * Every class in display order (legends, table rows and columns): the order of
 * the engine's transition tables (lib/spatial CLUSTER_CLASSES; a unit test
 * keeps them equal). Spelled out so client bundles do not pull in the engine.
 */
export const CLUSTER_CLASS_ORDER: readonly ClusterClass[] = ["HH", "LL", "HL", "LH", "not-significant", "no-neighbours"];

/** The significant classes, which count as a local cluster or outlier. */
export const SIGNIFICANT_CLUSTER_CLASSES = ["HH", "LL", "HL", "LH"] as const;
export type SignificantClusterClass = (typeof SIGNIFICANT_CLUSTER_CLASSES)[number];

/** The one name of each class. */
export const CLUSTER_CLASS_NAMES: Readonly<Record<ClusterClass, string>> = {
  HH: "High-High",
  LL: "Low-Low",
  HL: "High-Low",
  LH: "Low-High",
  "not-significant": "Not significant",
  "no-neighbours": "No neighbours",
};

/** What each class means, for captions and tooltips. */
export const CLUSTER_CLASS_MEANINGS: Readonly<Record<ClusterClass, string>> = {
  HH: "a high value among high neighbours",
  LL: "a low value among low neighbours",
  HL: "a high value among low neighbours (an outlier)",
  LH: "a low value among high neighbours (an outlier)",
  "not-significant": "no significant local association after the correction",
  "no-neighbours": "no neighbour with a value, or left out",
};

/** Fill of each class. "No neighbours" is drawn hatched (NO_NEIGHBOURS_HATCH); its colour is the fallback where a hatch cannot be drawn (scatter points). */
export const CLUSTER_CLASS_COLOURS: Readonly<Record<ClusterClass, string>> = {
  HH: "#9a3412",
  LL: "#115e59",
  HL: "#fdba74",
  LH: "#5eead4",
  "not-significant": "#e7e5e4",
  "no-neighbours": "#d6d3d1",
};

/** The grey hatch of regions without neighbours: background and stroke. */
export const NO_NEIGHBOURS_HATCH = { background: "#e7e5e4", stroke: "#a8a29e" } as const;

/** The name of a class; anything else (an unknown stored value) is shown as it is. */
export function clusterClassName(value: string): string {
  return Object.hasOwn(CLUSTER_CLASS_NAMES, value) ? CLUSTER_CLASS_NAMES[value as ClusterClass] : value;
}

/** "High-High: a high value among high neighbours; Low-Low: …" for a caption. */
export function clusterClassLegendSentence(classes: readonly ClusterClass[] = CLUSTER_CLASS_ORDER): string {
  return classes.map((c) => `${CLUSTER_CLASS_NAMES[c]}: ${CLUSTER_CLASS_MEANINGS[c]}`).join("; ");
}

/**
 * The one place that names and colours the classes of local Getis–Ord Gi*,
 * the map's second view beside local Moran's clusters. The map, its legend,
 * caption and region detail read these. The hot and cold colours are the
 * palette's `gistar` colours in tailwind.config.ts (a unit test keeps the two
 * equal and apart from the cluster colours); "Not significant" and "No
 * neighbours" are the cluster map's own names and fills, so the two views
 * agree on what grey and hatching mean. Pure; no React, no engine.
 */
import { CLUSTER_CLASS_COLOURS, CLUSTER_CLASS_MEANINGS, CLUSTER_CLASS_NAMES } from "./cluster-classes";
import type { GiStarClass } from "./types";

/** Every class in display order (legends, counts). */
export const GI_STAR_CLASS_ORDER: readonly GiStarClass[] = ["hot", "cold", "not-significant", "no-neighbours"];

/** The one name of each class. */
export const GI_STAR_CLASS_NAMES: Readonly<Record<GiStarClass, string>> = {
  hot: "Hot spot",
  cold: "Cold spot",
  "not-significant": CLUSTER_CLASS_NAMES["not-significant"],
  "no-neighbours": CLUSTER_CLASS_NAMES["no-neighbours"],
};

/** What each class means, for captions and tooltips. */
export const GI_STAR_CLASS_MEANINGS: Readonly<Record<GiStarClass, string>> = {
  hot: "the region and its neighbours together are significantly high",
  cold: "the region and its neighbours together are significantly low",
  "not-significant": "no significant concentration of high or low values after the correction",
  "no-neighbours": CLUSTER_CLASS_MEANINGS["no-neighbours"],
};

/** Fill of each class; "No neighbours" is drawn hatched like on the cluster map. */
export const GI_STAR_CLASS_COLOURS: Readonly<Record<GiStarClass, string>> = {
  hot: "#be123c",
  cold: "#3b82f6",
  "not-significant": CLUSTER_CLASS_COLOURS["not-significant"],
  "no-neighbours": CLUSTER_CLASS_COLOURS["no-neighbours"],
};

/** The two views of the local map and their names on the switch between them. */
export type LocalMapView = "clusters" | "gi-star";
export const LOCAL_MAP_VIEW_NAMES: Readonly<Record<LocalMapView, string>> = {
  clusters: "Clusters (local Moran)",
  "gi-star": "Hot and cold spots (Gi*)",
};

/** The panel title of the Gi* map of a period. */
export function giStarMapTitle(period: string): string {
  return `Hot and cold spots, ${period}`;
}

/** The accessible label of the Gi* map of an indicator in a period. */
export function giStarMapLabel(indicator: string, period: string): string {
  return `Map of hot and cold spots (local Gi*) of ${indicator} in ${period}`;
}

/** The name of a class; anything else (an unknown stored value) is shown as it is. */
export function giStarClassName(value: string): string {
  return Object.hasOwn(GI_STAR_CLASS_NAMES, value) ? GI_STAR_CLASS_NAMES[value as GiStarClass] : value;
}

/** "Hot spot: …; Cold spot: …" for a caption. */
export function giStarLegendSentence(classes: readonly GiStarClass[] = GI_STAR_CLASS_ORDER): string {
  return classes.map((c) => `${GI_STAR_CLASS_NAMES[c]}: ${GI_STAR_CLASS_MEANINGS[c]}`).join("; ");
}

/**
 * Said in place of the Gi* map when a period has no stored Gi*: the run asked
 * for no local results, or it ran before Gi* was stored (a rerun computes it).
 */
export function giStarMissingNote(hasLocalResults: boolean): string {
  return hasLocalResults
    ? "Hot and cold spots are not stored for this run: it ran before Tessera stored local Gi*. Rerun it to compute them."
    : "Hot and cold spots are not stored for this period: the run has no local results here.";
}

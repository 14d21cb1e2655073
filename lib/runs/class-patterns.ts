/**
 * The pattern each map class carries on top of its colour, so a class is told
 * apart without colour: in greyscale, in print and by readers with a colour-vision
 * deficiency (see colour-vision.ts). Pure definitions; components/maps/class-pattern.tsx
 * draws them as SVG <pattern>s for maps and legend swatches.
 */
import type { ClusterClass } from "@/lib/spatial";
import { CLUSTER_CLASS_COLOURS, NO_NEIGHBOURS_HATCH } from "./cluster-classes";
import { GI_STAR_CLASS_COLOURS } from "./gi-star-classes";
import type { GiStarClass } from "./types";

/** The marks drawn over a class's colour: none, dots, lines in one direction, or a cross-hatch. */
export type PatternMark = "none" | "dots" | "horizontal" | "diagonal" | "anti-diagonal" | "cross";

export type ClassPattern = {
  /** The class's fill. */
  readonly background: string;
  readonly mark: PatternMark;
  /** Colour of the marks: light on dark fills, dark on light ones. */
  readonly ink: string;
  /** Tile size in map units (the maps are 460 wide). */
  readonly size: number;
};

const LIGHT_INK = "#ffffff";
const DARK_INK = "#1e2a44";

/** Local Moran classes: each significant class its own mark; "Not significant" plain; "No neighbours" the grey hatch. */
export const CLUSTER_CLASS_PATTERNS: Readonly<Record<ClusterClass, ClassPattern>> = {
  HH: { background: CLUSTER_CLASS_COLOURS.HH, mark: "dots", ink: LIGHT_INK, size: 6 },
  LL: { background: CLUSTER_CLASS_COLOURS.LL, mark: "horizontal", ink: LIGHT_INK, size: 5 },
  HL: { background: CLUSTER_CLASS_COLOURS.HL, mark: "diagonal", ink: DARK_INK, size: 6 },
  LH: { background: CLUSTER_CLASS_COLOURS.LH, mark: "cross", ink: DARK_INK, size: 6 },
  "not-significant": { background: CLUSTER_CLASS_COLOURS["not-significant"], mark: "none", ink: DARK_INK, size: 6 },
  "no-neighbours": { background: NO_NEIGHBOURS_HATCH.background, mark: "anti-diagonal", ink: NO_NEIGHBOURS_HATCH.stroke, size: 6 },
};

/** Gi* classes: `hot` dotted like `HH`, `cold` lined like `LL`. */
export const GI_STAR_CLASS_PATTERNS: Readonly<Record<GiStarClass, ClassPattern>> = {
  hot: { background: GI_STAR_CLASS_COLOURS.hot, mark: "dots", ink: LIGHT_INK, size: 6 },
  cold: { background: GI_STAR_CLASS_COLOURS.cold, mark: "horizontal", ink: LIGHT_INK, size: 5 },
  "not-significant": CLUSTER_CLASS_PATTERNS["not-significant"],
  "no-neighbours": CLUSTER_CLASS_PATTERNS["no-neighbours"],
};

/** A class name made safe for an SVG id ("not-significant" → "not-significant", "HH" → "hh"). */
export function patternKey(cls: string): string {
  return cls.toLowerCase().replace(/[^a-z0-9-]/g, "-");
}

import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import tailwind from "@/tailwind.config";
import { CLUSTER_CLASSES } from "@/lib/spatial";
import { LOCAL_CLUSTER_CLASSES, LOCAL_CLUSTER_LABELS } from "@/lib/digests/compose";
import {
  CLUSTER_CLASS_COLOURS,
  CLUSTER_CLASS_NAMES,
  CLUSTER_CLASS_ORDER,
  clusterClassLegendSentence,
  clusterClassName,
  SIGNIFICANT_CLUSTER_CLASSES,
} from "@/lib/runs/cluster-classes";

// One name and one colour per local cluster class, from one module
// (lib/runs/cluster-classes), on every screen and in every digest (issue 13, item 5).

const ROOT = path.resolve(__dirname, "../../..");
const MODULE = path.join("lib", "runs", "cluster-classes.ts");
// Gi*'s classes (hot and cold spots) are named in their own module, tests/unit/runs/gi-star-classes.test.ts.
const GI_STAR_MODULE = path.join("lib", "runs", "gi-star-classes.ts");

function sources(dir: string): string[] {
  return readdirSync(path.join(ROOT, dir)).flatMap((name) => {
    const rel = path.join(dir, name);
    if (statSync(path.join(ROOT, rel)).isDirectory()) return sources(rel);
    return /\.(ts|tsx)$/.test(name) ? [rel] : [];
  });
}

// lib/spatial names quadrants in its own doc comments (it imports nothing); everything else reads the module.
const FILES = [...sources("components"), ...sources("lib"), ...sources("app")].filter((f) => f !== MODULE && f !== GI_STAR_MODULE && !f.startsWith(path.join("lib", "spatial")));

/** A class name written out: "High-High", "High–High", "High among high", "hot spot", "cold spot"… */
const HARD_CODED_NAME = /\b(high|low)\s*[-–‑ ]\s*(high|low)\b|\b(high|low) among (high|low)\b|\b(hot|cold)[ -]?spots?\b/i;
/** A class colour written as a string: only the module holds them (Tailwind classes such as text-[#9a3412] are not strings of their own). */
const HARD_CODED_COLOUR = /["'`](#9a3412|#115e59|#fdba74|#5eead4|#d6d3d1)["'`]/i;
/** A table of labels keyed by class, e.g. `"no-neighbours": "No neighbours"` or `HH: "…"`. */
const LABEL_TABLE = /("no-neighbours"|\bHH)\s*:\s*["'`][A-Za-z]/;

describe("the cluster class module", () => {
  it("lists the classes in the engine's transition-table order", () => {
    expect(CLUSTER_CLASS_ORDER).toEqual(CLUSTER_CLASSES);
    expect(SIGNIFICANT_CLUSTER_CLASSES).toEqual(["HH", "LL", "HL", "LH"]);
  });

  it("names each class once, all different", () => {
    expect(CLUSTER_CLASS_NAMES).toEqual({
      HH: "High-High",
      LL: "Low-Low",
      HL: "High-Low",
      LH: "Low-High",
      "not-significant": "Not significant",
      "no-neighbours": "No neighbours",
    });
    expect(new Set(Object.values(CLUSTER_CLASS_NAMES)).size).toBe(6);
    expect(clusterClassName("LH")).toBe("Low-High");
    expect(clusterClassName("something-else")).toBe("something-else");
    expect(clusterClassName("toString")).toBe("toString");
  });

  it("colours the classes with the palette's cluster colours in tailwind.config.ts", () => {
    const palette = (tailwind.theme?.extend?.colors as Record<string, Record<string, string>>).cluster;
    expect({ hh: CLUSTER_CLASS_COLOURS.HH, ll: CLUSTER_CLASS_COLOURS.LL, hl: CLUSTER_CLASS_COLOURS.HL, lh: CLUSTER_CLASS_COLOURS.LH, ns: CLUSTER_CLASS_COLOURS["not-significant"] }).toEqual(palette);
  });

  it("writes the caption's legend from the names", () => {
    expect(clusterClassLegendSentence(["HH", "LH"])).toBe("High-High: a high value among high neighbours; Low-High: a low value among high neighbours (an outlier)");
  });

  it("is what digests name clusters by", () => {
    expect(LOCAL_CLUSTER_CLASSES).toEqual(SIGNIFICANT_CLUSTER_CLASSES);
    for (const c of LOCAL_CLUSTER_CLASSES) expect(LOCAL_CLUSTER_LABELS[c]).toBe(CLUSTER_CLASS_NAMES[c]);
  });
});

describe("no other file names or colours the classes itself", () => {
  it("finds the files to check (the scan is not empty)", () => {
    expect(FILES.some((f) => f.endsWith("map-screen.tsx"))).toBe(true);
    expect(FILES.some((f) => f.endsWith(path.join("digests", "render.ts")))).toBe(true);
    expect(FILES.length).toBeGreaterThan(100);
  });

  it("the patterns catch what they are meant to catch", () => {
    for (const text of ['"High-High"', "High–High:", "High among high", "a hot spot", "Low - Low"]) expect(text).toMatch(HARD_CODED_NAME);
    expect('color: "#9a3412"').toMatch(HARD_CODED_COLOUR);
    expect('"text-[#9a3412]"').not.toMatch(HARD_CODED_COLOUR);
    expect('  "no-neighbours": "No neighbours",').toMatch(LABEL_TABLE);
    expect('  HH: "High among high",').toMatch(LABEL_TABLE);
  });

  it.each([
    ["a class name", HARD_CODED_NAME],
    ["a class colour", HARD_CODED_COLOUR],
    ["a table of class labels", LABEL_TABLE],
  ])("no component, lib or app file writes %s", (_what, pattern) => {
    const offenders = FILES.flatMap((f) =>
      readFileSync(path.join(ROOT, f), "utf8")
        .split("\n")
        .flatMap((line, i) => (pattern.test(line) ? [`${f}:${i + 1}: ${line.trim()}`] : [])),
    );
    expect(offenders).toEqual([]);
  });

  it("the map, transition table, legends and tooltips import their names from the module", () => {
    for (const f of ["components/maps/map-screen.tsx", "lib/digests/compose.ts"]) {
      expect(readFileSync(path.join(ROOT, f), "utf8")).toContain('from "@/lib/runs/cluster-classes"');
    }
  });
});

import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import tailwind from "@/tailwind.config";
import { CLUSTER_CLASS_COLOURS, CLUSTER_CLASS_NAMES } from "@/lib/runs/cluster-classes";
import {
  GI_STAR_CLASS_COLOURS,
  GI_STAR_CLASS_NAMES,
  GI_STAR_CLASS_ORDER,
  giStarClassName,
  giStarLegendSentence,
  LOCAL_MAP_VIEW_NAMES,
} from "@/lib/runs/gi-star-classes";

// One name and one colour per Gi* class (hot and cold spots), from one module
// (lib/runs/gi-star-classes), kept equal to the palette in tailwind.config.ts.

const ROOT = path.resolve(__dirname, "../../..");
const MODULE = path.join("lib", "runs", "gi-star-classes.ts");

function sources(dir: string): string[] {
  return readdirSync(path.join(ROOT, dir)).flatMap((name) => {
    const rel = path.join(dir, name);
    if (statSync(path.join(ROOT, rel)).isDirectory()) return sources(rel);
    return /\.(ts|tsx)$/.test(name) ? [rel] : [];
  });
}

const FILES = [...sources("components"), ...sources("lib"), ...sources("app")].filter((f) => f !== MODULE);
const palette = (tailwind.theme?.extend?.colors as Record<string, Record<string, string>>).gistar;
/** The hot and cold colours written as a string anywhere but the module. */
const HARD_CODED_COLOUR = new RegExp(`["'\`](${Object.values(palette).join("|")})["'\`]`, "i");

describe("the Gi* class module", () => {
  it("lists hot, cold, not significant and no neighbours, in that order", () => {
    expect(GI_STAR_CLASS_ORDER).toEqual(["hot", "cold", "not-significant", "no-neighbours"]);
  });

  it("names each class once; the grey classes keep the cluster map's names", () => {
    expect(GI_STAR_CLASS_NAMES).toEqual({ hot: "Hot spot", cold: "Cold spot", "not-significant": "Not significant", "no-neighbours": "No neighbours" });
    expect(GI_STAR_CLASS_NAMES["not-significant"]).toBe(CLUSTER_CLASS_NAMES["not-significant"]);
    expect(new Set(Object.values(GI_STAR_CLASS_NAMES)).size).toBe(4);
    expect(giStarClassName("cold")).toBe("Cold spot");
    expect(giStarClassName("toString")).toBe("toString");
    expect(LOCAL_MAP_VIEW_NAMES).toEqual({ clusters: "Clusters (local Moran)", "gi-star": "Hot and cold spots (Gi*)" });
  });

  it("colours hot and cold with the palette's gistar colours, apart from every cluster colour", () => {
    expect({ hot: GI_STAR_CLASS_COLOURS.hot, cold: GI_STAR_CLASS_COLOURS.cold }).toEqual(palette);
    const clusters = new Set(Object.values(CLUSTER_CLASS_COLOURS).map((c) => c.toLowerCase()));
    for (const c of [GI_STAR_CLASS_COLOURS.hot, GI_STAR_CLASS_COLOURS.cold]) expect(clusters.has(c.toLowerCase())).toBe(false);
    expect(GI_STAR_CLASS_COLOURS.hot).not.toBe(GI_STAR_CLASS_COLOURS.cold);
    expect(GI_STAR_CLASS_COLOURS["not-significant"]).toBe(CLUSTER_CLASS_COLOURS["not-significant"]);
  });

  it("writes the caption's legend from the names", () => {
    expect(giStarLegendSentence(["hot", "cold"])).toBe(
      "Hot spot: the region and its neighbours together are significantly high; Cold spot: the region and its neighbours together are significantly low",
    );
  });

  it("no component, lib or app file writes the hot or cold colour as a string", () => {
    expect('fill: "#be123c"').toMatch(HARD_CODED_COLOUR);
    expect(FILES.some((f) => f.endsWith("map-screen.tsx"))).toBe(true);
    const offenders = FILES.flatMap((f) =>
      readFileSync(path.join(ROOT, f), "utf8")
        .split("\n")
        .flatMap((line, i) => (HARD_CODED_COLOUR.test(line) ? [`${f}:${i + 1}: ${line.trim()}`] : [])),
    );
    expect(offenders).toEqual([]);
  });
});

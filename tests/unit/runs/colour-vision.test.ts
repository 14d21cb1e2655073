import { CLUSTER_CLASS_COLOURS, SIGNIFICANT_CLUSTER_CLASSES } from "@/lib/runs/cluster-classes";
import { CLUSTER_CLASS_PATTERNS, GI_STAR_CLASS_PATTERNS } from "@/lib/runs/class-patterns";
import { closestPair, deltaE, DEFICIENCIES, MACHADO_2009, relativeLuminance, simulate, type Deficiency } from "@/lib/runs/colour-vision";
import { GI_STAR_CLASS_COLOURS } from "@/lib/runs/gi-star-classes";

// Colour-vision check of the map classes (issue 20, item 3), with the matrices of Machado,
// Oliveira & Fernandes (2009), "A Physiologically-based Model for Simulation of Color Vision
// Deficiency", IEEE TVCG 15(6), severity 1.0. Threshold: two classes count as distinguishable
// by colour when their CIE76 ΔE*ab is at least 10 as the reader sees them (a difference seen at a
// glance between map patches; ΔE ≈ 2.3 is only just noticeable side by side).

const THRESHOLD = 10;

/** The classes a reader must tell apart on a map: the significant ones and "Not significant". */
const CLUSTER = {
  ...Object.fromEntries(SIGNIFICANT_CLUSTER_CLASSES.map((c) => [c, CLUSTER_CLASS_COLOURS[c]])),
  "not-significant": CLUSTER_CLASS_COLOURS["not-significant"],
};
const GI_STAR = { hot: GI_STAR_CLASS_COLOURS.hot, cold: GI_STAR_CLASS_COLOURS.cold, "not-significant": GI_STAR_CLASS_COLOURS["not-significant"] };

describe("the simulation (Machado, Oliveira & Fernandes 2009)", () => {
  it("keeps white, black and greys as they are (each matrix row sums to 1)", () => {
    for (const d of DEFICIENCIES) {
      for (const row of MACHADO_2009[d]) expect(row[0] + row[1] + row[2]).toBeCloseTo(1, 5);
      expect(simulate("#ffffff", d)).toBe("#ffffff");
      expect(simulate("#000000", d)).toBe("#000000");
      expect(simulate("#808080", d)).toBe("#808080");
    }
  });

  it("moves pure red towards olive for protanopes and deuteranopes, and keeps it red for tritanopes", () => {
    expect(simulate("#ff0000", "protanopia")).toBe("#6d5f00");
    expect(simulate("#ff0000", "deuteranopia")).toBe("#a39000");
    expect(deltaE(simulate("#ff0000", "tritanopia"), "#ff0000")).toBeLessThan(15);
  });

  it("throws on colours that are not #rrggbb", () => {
    expect(() => simulate("red", "protanopia")).toThrow(/Not a #rrggbb colour/);
  });

  it("gives WCAG's luminance and CIE76 distances", () => {
    expect(relativeLuminance("#ffffff")).toBeCloseTo(1, 6);
    expect(relativeLuminance("#000000")).toBe(0);
    expect(deltaE("#ffffff", "#000000")).toBeCloseTo(100, 1);
  });
});

describe(`the map classes under colour-vision deficiencies (ΔE*ab ≥ ${THRESHOLD})`, () => {
  it("the Gi* classes (hot, cold, not significant) stay apart by colour alone for normal vision and all three deficiencies", () => {
    expect(closestPair(GI_STAR).deltaE).toBeGreaterThanOrEqual(THRESHOLD);
    for (const d of DEFICIENCIES) expect({ d, ...closestPair(GI_STAR, d) }.deltaE).toBeGreaterThanOrEqual(THRESHOLD);
  });

  it("the cluster classes stay apart by colour for normal vision, tritanopia and deuteranopia, not for protanopia (Low-High against Not significant): the patterns carry it", () => {
    const pass: Record<string, boolean> = { normal: closestPair(CLUSTER).deltaE >= THRESHOLD };
    for (const d of DEFICIENCIES) pass[d] = closestPair(CLUSTER, d).deltaE >= THRESHOLD;
    expect(pass).toEqual({ normal: true, tritanopia: true, deuteranopia: true, protanopia: false });
    const worst = closestPair(CLUSTER, "protanopia" as Deficiency);
    expect([worst.a, worst.b].sort()).toEqual(["LH", "not-significant"]);
    // Which is why no class relies on colour: the two carry different patterns.
    expect(CLUSTER_CLASS_PATTERNS.LH.mark).not.toBe(CLUSTER_CLASS_PATTERNS["not-significant"].mark);
  });

  it("every class a map shows has its own pattern, so classes differ in greyscale too", () => {
    for (const patterns of [CLUSTER_CLASS_PATTERNS, GI_STAR_CLASS_PATTERNS]) {
      const marks = Object.values(patterns).map((p) => p.mark);
      expect(new Set(marks).size).toBe(marks.length);
    }
  });

  it("the patterns sit on the classes' own colours", () => {
    for (const [c, p] of Object.entries(CLUSTER_CLASS_PATTERNS)) if (c !== "no-neighbours") expect(p.background).toBe(CLUSTER_CLASS_COLOURS[c as keyof typeof CLUSTER_CLASS_COLOURS]);
    expect(GI_STAR_CLASS_PATTERNS.hot.background).toBe(GI_STAR_CLASS_COLOURS.hot);
    expect(GI_STAR_CLASS_PATTERNS.cold.background).toBe(GI_STAR_CLASS_COLOURS.cold);
  });
});

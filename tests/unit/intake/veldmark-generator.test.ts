/**
 * The demo generator must be deterministic and the committed files must be its
 * current output (regenerate with `npx tsx scripts/demo/generate-veldmark.ts`).
 */
import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { Readable } from "node:stream";
import { neighbors } from "topojson-client";
import type { GeometryCollection, Topology } from "topojson-specification";
import { generateVeldmark } from "@/scripts/demo/generate-veldmark";
import { boundaryIds, loadBoundaries, validatePanel, type Observation } from "@/lib/intake";

const dataDir = path.join(__dirname, "..", "..", "..", "seeders", "data", "veldmark");
const sha256 = (text: string): string => createHash("sha256").update(text).digest("hex");

jest.setTimeout(120_000);

describe("Veldmark demo generator", () => {
  const first = generateVeldmark();

  test("two runs give byte-identical files, equal to the committed ones", () => {
    const second = generateVeldmark();
    for (const [name, content] of Object.entries(first.files)) {
      expect(sha256(second.files[name as keyof typeof first.files])).toBe(sha256(content));
      expect(sha256(readFileSync(path.join(dataDir, name), "utf8"))).toBe(sha256(content));
    }
  });

  test("a different seed gives a different country", () => {
    const other = generateVeldmark({ seed: 7, years: 1 });
    expect(other.files["veldmark.topojson"]).not.toBe(first.files["veldmark.topojson"]);
  });

  test("about 240 districts in 9 provinces; only the two islets lack contiguity neighbours", () => {
    const topology = JSON.parse(first.files["veldmark.topojson"]) as Topology;
    const districts = topology.objects.districts as GeometryCollection;
    const provinces = topology.objects.provinces as GeometryCollection;
    const props = (i: number): Record<string, string> => districts.geometries[i].properties as Record<string, string>;
    expect(districts.geometries.length).toBeGreaterThanOrEqual(230);
    expect(districts.geometries.length).toBeLessThanOrEqual(250);
    expect(provinces.geometries).toHaveLength(9);
    expect(new Set(districts.geometries.map((_, i) => props(i).province)).size).toBe(9);
    const lists = neighbors(districts.geometries);
    const lonely = lists.flatMap((list, i) => (list.length === 0 ? [props(i).code] : []));
    expect(lonely).toEqual(first.summary.districtsWithoutNeighbours);
    expect(lonely).toHaveLength(2);
    // Shared arcs, not near-misses: a mainland district has several rook neighbours on average.
    const mainland = lists.filter((_, i) => props(i).landmass === "mainland");
    expect(mainland.every((list) => list.length > 0)).toBe(true);
    expect(mainland.reduce((sum, list) => sum + list.length, 0) / mainland.length).toBeGreaterThan(4.5);
    // Planar kilometres far from the origin: cannot be taken for degrees.
    expect(topology.bbox?.[0]).toBeGreaterThan(180);
  });

  test("the panel passes intake against the boundaries, with the planned missing cells and the closure rate derived", async () => {
    const ids = boundaryIds(loadBoundaries(first.files["veldmark.topojson"]), "districts", "code");
    const observations: Observation[] = [];
    const report = await validatePanel({
      source: Readable.from([Buffer.from(first.files["veldmark-panel.csv"])]),
      boundaryIds: ids,
      onObservations: (batch) => {
        observations.push(...batch);
      },
    });
    expect(report.ok).toBe(true);
    expect(report.warnings).toEqual([]);
    expect(report.rows).toBe(ids.length * 17 * 10);
    expect(report.periods).toEqual(Array.from({ length: 17 }, (_, i) => String(2008 + i)));
    expect(report.indicators).toEqual([
      "unemployment_rate",
      "youth_unemployment_rate",
      "median_household_income",
      "output_per_head",
      "business_births_per_1000",
      "broadband_coverage",
      "population_change",
      "heavy_industry_share",
      "business_closures",
      "working_age_population",
      "business_closures_per_1000",
    ]);
    // The rate is declared in the file, not given: derived for every district and year, with no problem.
    expect(report.rates).toEqual({
      declarations: [
        {
          indicator: "business_closures_per_1000",
          events: "business_closures",
          population: "working_age_population",
          multiplier: 1000,
          source: "file",
          derived: true,
          values: ids.length * 17,
          missing: 0,
          problems: 0,
        },
      ],
      problems: [],
      problemCount: 0,
    });
    expect(Object.values(report.missing).reduce((a, b) => a + b, 0)).toBe(10);
    expect(report.regions.inBoundariesNotInPanelCount).toBe(0);
    const indicators = JSON.parse(first.files["indicators.json"]) as { code: string; source: string; rate?: unknown }[];
    expect(indicators.map((i) => i.code)).toEqual(report.indicators);
    expect(new Set(indicators.map((i) => i.source))).toEqual(new Set(["Invented demo data (Veldmark)"]));
    expect(indicators.filter((i) => i.rate).map((i) => [i.code, i.rate])).toEqual([
      ["business_closures_per_1000", { events: "business_closures", population: "working_age_population", multiplier: 1000 }],
    ]);

    // A few tiny island districts: raw closure rates beyond the whole mainland's range, both ways.
    const byKey = new Map(observations.map((o) => [`${o.indicator}|${o.region}|${o.periodKey}`, o.value]));
    const islands = new Set(first.summary.islandDistricts);
    const rates = observations.filter((o) => o.indicator === "business_closures_per_1000");
    const mainland = rates.filter((o) => !islands.has(o.region)).map((o) => o.value as number);
    const island = rates.filter((o) => islands.has(o.region)).map((o) => o.value as number);
    expect(islands.size).toBeGreaterThanOrEqual(3);
    for (const code of islands) expect(byKey.get(`working_age_population|${code}|2024`)).toBeLessThan(1000);
    expect(Math.min(...island)).toBeLessThan(Math.min(...mainland));
    expect(Math.max(...island)).toBeGreaterThan(Math.max(...mainland));
    // Each derived value is closures / working-age population × 1,000.
    for (const o of rates.slice(0, 50)) {
      expect(o.value).toBeCloseTo(((byKey.get(`business_closures|${o.region}|${o.periodKey}`) as number) / (byKey.get(`working_age_population|${o.region}|${o.periodKey}`) as number)) * 1000, 12);
    }
  });
});

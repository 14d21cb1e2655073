/**
 * The statistics CLI's rate-moran, rates and hotspots commands end to end
 * (`npx tsx scripts/stats-cli.ts`) on the North Carolina SIDS data of R's
 * spData package: boundaries tests/fixtures/nc/nc.topojson, data
 * tests/fixtures/nc-sids/nc-sids.csv. Every expected number is spdep 1.2-7's,
 * read from tests/fixtures/nc-sids/rates-hotspots.json
 * (scripts/reference/rates-hotspots-reference.R); the source is named beside
 * each check.
 */
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runStatsCli } from "@/tests/helpers/stats-cli";
import { NC_SIDS_CSV, NC_TOPOLOGY, loadRatesHotspots } from "../../fixtures/nc-sids/fixture";

jest.setTimeout(300_000);

const fixture = loadRatesHotspots();
const TIGHT = 1e-10;
const index = new Map(fixture.ids.map((id, k) => [String(id), k]));


function args(command: string, options: Record<string, string>): string[] {
  const all: Record<string, string> = { topology: NC_TOPOLOGY, object: "nc", id: "FIPSNO", data: NC_SIDS_CSV, "id-column": "FIPSNO", ...options };
  return [command, ...Object.entries(all).flatMap(([k, v]) => [`--${k}`, v])];
}

const counts = { events: "SID74", population: "BIR74" };

function close(label: string, actual: unknown, expected: number, abs = 0): string | null {
  if (typeof actual !== "number" || !(Math.abs(actual - expected) <= TIGHT * Math.abs(expected) + abs)) {
    return `${label}: CLI ${String(actual)}, spdep ${expected}`;
  }
  return null;
}

const temporary = mkdtempSync(join(tmpdir(), "tessera-stats-rates-"));
/** A copy of the NC CSV with cells replaced: { FIPSNO: { column: text } }. */
function editedCsv(name: string, edits: Record<string, Record<string, string>>): string {
  const [header, ...rows] = readFileSync(NC_SIDS_CSV, "utf8").trim().split("\n");
  const columns = header.split(",");
  const out = rows.map((row) => {
    const cells = row.split(",");
    for (const [column, text] of Object.entries(edits[cells[0]] ?? {})) cells[columns.indexOf(column)] = text;
    return cells.join(",");
  });
  const path = join(temporary, name);
  writeFileSync(path, [header, ...out].join("\n") + "\n");
  return path;
}

describe("stats rate-moran (Assunção & Reis 1999) vs spdep EBImoran.mc", () => {
  for (const transform of ["W", "B"] as const) {
    test(`--transform ${transform}: exactly the documented fields; I to 1e-10; the permutation distribution within sampling error`, async () => {
      const run = await runStatsCli(args("rate-moran", { ...counts, transform, permutations: "999", seed: "11" }));
      expect(run).toMatchObject({ code: 0, stderr: "" });
      const out = JSON.parse(run.stdout);
      expect(Object.keys(out).sort()).toEqual(["I", "n", "permutation"]);
      expect(Object.keys(out.permutation).sort()).toEqual(["mean", "pGreater", "pLess", "pTwoSided", "permutations", "sd", "seed", "z"].sort());
      expect(out.n).toBe(100);
      expect(out.permutation).toMatchObject({ permutations: 999, seed: 11 });
      const reference = fixture.EBImoran[transform];
      // source: EBImoran.mc(SID74, BIR74, queen <transform>)$statistic
      expect(close("I", out.I, reference.observed)).toBeNull();
      // source: mean and sd of EBImoran.mc(...)$res[1:9999]; two independent random streams (999 and 9,999 draws)
      const se = reference.simulatedSd * Math.sqrt(1 / 999 + 1 / fixture.EBImoran.nsim);
      expect(Math.abs(out.permutation.mean - reference.simulatedMean)).toBeLessThan(4 * se);
      expect(Math.abs(out.permutation.sd / reference.simulatedSd - 1)).toBeLessThan(0.15);
    });
  }
});

test("stats rates: raw, global EB (spdep EBest) and local EB over each county and its neighbours (spdep EBlocal centred on the county's local rate)", async () => {
  const run = await runStatsCli(args("rates", counts));
  expect(run).toMatchObject({ code: 0, stderr: "" });
  const out = JSON.parse(run.stdout);
  expect(Object.keys(out).sort()).toEqual(["n", "regions"]);
  expect(out.n).toBe(100);
  expect(out.regions).toHaveLength(100);
  const mismatches: (string | null)[] = [];
  for (const region of out.regions) {
    expect(Object.keys(region).sort()).toEqual(["events", "id", "population", "raw", "smoothedGlobal", "smoothedLocal"].sort());
    const k = index.get(region.id) as number;
    // source: rates-hotspots.json events / population (spData sids.shp SID74, BIR74)
    expect([region.events, region.population]).toEqual([fixture.events[k], fixture.population[k]]);
    // source: EBest(SID74, BIR74)$raw and $estmm
    mismatches.push(close(`${region.id} raw`, region.raw, fixture.EBest.raw[k], 1e-300));
    mismatches.push(close(`${region.id} smoothedGlobal`, region.smoothedGlobal, fixture.EBest.estmm[k]));
    // source: EBlocal(SID74, BIR74, poly2nb(queen), NULL, NULL, TRUE)$est
    mismatches.push(close(`${region.id} smoothedLocal`, region.smoothedLocal, fixture.EBlocal.localRate.est[k], 1e-300));
  }
  expect(mismatches.filter((m) => m !== null)).toEqual([]);
});

describe("stats hotspots vs spdep localG on SIDR74 (= 1000 · SID74 / BIR74)", () => {
  const cases = [
    { self: "include", correction: "fdr", key: "star_B", method: "BH" },
    { self: "exclude", correction: "bonferroni", key: "nostar_B", method: "bonferroni" },
    { self: "exclude", correction: "none", key: "nostar_B", method: "none" },
  ] as const;
  for (const { self, correction, key, method } of cases) {
    test(`--self ${self} --correction ${correction} --permutations 0: G, E, Var, z, p to 1e-10; classes as R's p.adjust(${method})`, async () => {
      const run = await runStatsCli(args("hotspots", { value: "SIDR74", self, correction, permutations: "0" }));
      expect(run).toMatchObject({ code: 0, stderr: "" });
      const out = JSON.parse(run.stdout);
      expect(Object.keys(out).sort()).toEqual(["n", "regions"]);
      expect(out.n).toBe(100);
      const f = fixture.localG[key];
      const mismatches: (string | null)[] = [];
      for (const region of out.regions) {
        expect(Object.keys(region).sort()).toEqual(["G", "class", "expectedG", "id", "p", "pseudoP", "varianceG", "z"].sort());
        const k = index.get(region.id) as number;
        // source: localG(SIDR74, nb2listw(<include.self>(nb), style = "B"), return_internals = TRUE)
        mismatches.push(close(`${region.id} G`, region.G, f.G[k], 1e-300));
        mismatches.push(close(`${region.id} E`, region.expectedG, f.E[k]));
        mismatches.push(close(`${region.id} V`, region.varianceG, f.V[k]));
        mismatches.push(close(`${region.id} z`, region.z, f.z[k], 1e-14));
        mismatches.push(close(`${region.id} p`, region.p, f.p[k]));
        expect(region.pseudoP).toBeNull();
        // source: rates-hotspots.json hotspotClasses.<key>.<method>, from R's p.adjust at alpha 0.05
        if (region.class !== fixture.hotspotClasses[key][method][k]) mismatches.push(`${region.id} class ${region.class}`);
      }
      expect(mismatches.filter((m) => m !== null)).toEqual([]);
    });
  }

  test("--transform W gives spdep's row-standardised Gi* (self inside the row), with permutation pseudo p deciding the class", async () => {
    const run = await runStatsCli(args("hotspots", { value: "SIDR74", transform: "W", permutations: "199", seed: "4", correction: "none" }));
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    const f = fixture.localG.star_W;
    const mismatches: (string | null)[] = [];
    for (const region of out.regions) {
      const k = index.get(region.id) as number;
      // source: localG(SIDR74, nb2listw(include.self(nb), style = "W"), return_internals = TRUE)
      mismatches.push(close(`${region.id} G`, region.G, f.G[k], 1e-300));
      mismatches.push(close(`${region.id} z`, region.z, f.z[k], 1e-14));
      // the class follows the pseudo p (no correction) and the sign of z
      expect(region.pseudoP).toBeGreaterThanOrEqual(2 / 200);
      const expected = region.pseudoP <= 0.05 ? (region.z > 0 ? "hot" : "cold") : "not-significant";
      expect({ id: region.id, class: region.class }).toEqual({ id: region.id, class: expected });
    }
    expect(mismatches.filter((m) => m !== null)).toEqual([]);
  });
});

test("rates: a missing events or population value excludes the region and names it with the column on stderr", async () => {
  const data = editedCsv("missing.csv", { "37009": { SID74: "" }, "37005": { BIR74: "n/a" } });
  const run = await runStatsCli(args("rates", { ...counts, data }));
  expect(run.code).toBe(0);
  expect(JSON.parse(run.stdout).n).toBe(98);
  expect(run.stderr.trim().split("\n")).toHaveLength(1);
  expect(run.stderr).toMatch(/^note: excluded 2 region\(s\) with an empty or non-numeric value: "37009" \(column "SID74"\), "37005" \(column "BIR74"\); n = 98\./);
});

test("bad input to the new commands: exit 2 and one line on stderr naming the problem", async () => {
  const cases: [string[], RegExp][] = [
    [args("rates", { ...counts, data: editedCsv("negative.csv", { "37009": { SID74: "-1" } }) }), /Region "37009": events in column "SID74" are -1; events must be ≥ 0/],
    [args("rate-moran", { ...counts, data: editedCsv("zero.csv", { "37005": { BIR74: "0" } }) }), /Region "37005": population in column "BIR74" is 0; the population must be > 0/],
    [args("rates", { ...counts, data: editedCsv("above.csv", { "37171": { SID74: "4000" } }) }), /Region "37171": events \(4000, column "SID74"\) exceed the population \(3188, column "BIR74"\)/],
    [args("rates", { events: "SID74", population: "NAME" }), /No region has a number in both column "SID74" and column "NAME"/],
    [args("rates", { events: "SID74", population: "BIRTHS" }), /no column "BIRTHS"/],
    [args("rate-moran", { events: "SID74" }), /Missing required option --population/],
    [args("rates", { ...counts, value: "SIDR74" }), /--value does not apply to rates/],
    [args("hotspots", { ...counts }), /--events applies only to rate-moran and rates/],
    [args("hotspots", { value: "SIDR74", self: "both" }), /--self/],
    [args("local", { value: "SIDR74", self: "exclude" }), /--self applies only to hotspots/],
    [args("rate-moran", { ...counts, permutations: "50" }), /--permutations/],
  ];
  const runs = await Promise.all(cases.map(([argv]) => runStatsCli(argv)));
  runs.forEach((run, k) => {
    expect({ k, code: run.code, stdout: run.stdout }).toEqual({ k, code: 2, stdout: "" });
    const lines = run.stderr.trim().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(cases[k][1]);
  });
});

/**
 * A run's stored numbers and the statistics CLI agree on the same data: the
 * worker's per-period computation (lib/runs) and `npm run -s stats -- moran`
 * are two separate paths over the engine, so this catches a drift in how
 * either aligns values, builds weights, treats islands or seeds permutations.
 * Data: the invented Veldmark demo panel (seeders/data/veldmark/).
 */
import { execFile } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Topology } from "topojson-specification";
import { buildRunGeometry, computePeriod, type PeriodParams } from "@/lib/runs/compute";

const root = path.resolve(__dirname, "../../..");
const dataDir = path.join(root, "seeders/data/veldmark");
const topologyFile = path.join(dataDir, "veldmark.topojson");

type CliMoran = {
  n: number;
  I: number;
  expectedI: number;
  normality: { variance: number; z: number; pTwoSided: number };
  randomization: { variance: number; z: number; pTwoSided: number; pGreater: number };
  permutation: { permutations: number; seed: number; mean: number; sd: number; pGreater: number; pLess: number; pTwoSided: number };
};

/** Values of one indicator-period from the long-form demo panel; empty cells stay missing. */
function periodValues(indicator: string, period: string): Map<string, number | null> {
  const values = new Map<string, number | null>();
  // The file opens with its `# rate:` line, then the header.
  const lines = fs.readFileSync(path.join(dataDir, "veldmark-panel.csv"), "utf8").trim().split("\n").filter((line) => !line.startsWith("#")).slice(1);
  for (const line of lines) {
    const [region, p, code, raw] = line.split(",");
    if (code === indicator && p === period) values.set(region, raw === "" ? null : Number(raw));
  }
  return values;
}

function runCli(args: string[]): Promise<CliMoran> {
  return new Promise((resolve, reject) => {
    execFile(path.join(root, "node_modules/.bin/tsx"), ["scripts/stats-cli.ts", ...args], { cwd: root }, (error, stdout, stderr) => {
      if (error) reject(new Error(`stats CLI failed: ${stderr || error.message}`));
      else resolve(JSON.parse(stdout) as CliMoran);
    });
  });
}

const params: PeriodParams = {
  weights: "queen",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 199,
  seed: 20131,
  alpha: 0.05,
  correction: "fdr",
  local: false,
};

describe("a run's global Moran results match the statistics CLI on the same data", () => {
  const topology = JSON.parse(fs.readFileSync(topologyFile, "utf8")) as Topology;
  const geometry = buildRunGeometry(topology, { object: "districts", idProperty: "code" }, params);
  let tmp: string;

  beforeAll(() => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), "tessera-cli-match-"));
  });
  afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

  it.each([
    ["unemployment_rate", "2014"],
    ["broadband_coverage", "2010"],
    ["business_births_per_1000", "2019"],
  ])("%s in %s: I, both variances, z, p and permutation p are identical", async (indicator, period) => {
    const values = periodValues(indicator, period);
    expect(values.size).toBeGreaterThan(200);

    const row = computePeriod(geometry, params, indicator, period, values);
    expect(row.status).toBe("computed");

    const csv = path.join(tmp, `${indicator}-${period}.csv`);
    const body = [...values].map(([region, v]) => `${region},${v === null ? "" : v}`).join("\n");
    fs.writeFileSync(csv, `region,value\n${body}\n`);
    const cli = await runCli([
      "moran",
      "--topology", topologyFile,
      "--object", "districts",
      "--id", "code",
      "--data", csv,
      "--id-column", "region",
      "--value", "value",
      "--weights", "queen",
      "--transform", "W",
      "--islands", "exclude",
      "--permutations", String(params.permutations),
      "--seed", String(params.seed),
    ]);

    expect(cli.n).toBe(row.n);
    const moran = row.moran;
    const permutation = row.permutation;
    if (!moran || !permutation) throw new Error("the run computed no Moran fields");
    expect(cli.I).toBeCloseTo(moran.I, 12);
    expect(cli.expectedI).toBeCloseTo(moran.expectedI, 12);
    expect(cli.normality.variance).toBeCloseTo(moran.varianceNormality, 12);
    expect(cli.randomization.variance).toBeCloseTo(moran.varianceRandomisation, 12);
    expect(cli.randomization.z).toBeCloseTo(moran.zRandomisation, 9);
    expect(cli.randomization.pTwoSided).toBeCloseTo(moran.pRandomisation, 12);
    // Same seed, same draws: the permutation results are equal, not merely close.
    expect(cli.permutation.pGreater).toBe(permutation.pGreater);
    expect(cli.permutation.pLess).toBe(permutation.pLess);
    expect(cli.permutation.pTwoSided).toBe(permutation.pTwoSided);
    expect(cli.permutation.mean).toBeCloseTo(permutation.mean, 12);
  }, 60_000);
});

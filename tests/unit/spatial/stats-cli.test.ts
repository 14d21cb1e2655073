/**
 * The statistics CLI end to end: spawns `npx tsx scripts/stats-cli.ts` on the
 * invented 4 × 4 grid fixture (tests/fixtures/spatial, made by make-grid.ts).
 */
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runStatsCli } from "@/tests/helpers/stats-cli";

jest.setTimeout(300_000);

const root = join(__dirname, "..", "..", "..");
const fixtures = join(root, "tests", "fixtures", "spatial");
const topology = join(fixtures, "grid.topojson.json");
const data = join(fixtures, "grid.csv");


const common = (overrides: Record<string, string> = {}): string[] => {
  const options: Record<string, string> = {
    topology,
    object: "districts",
    id: "code",
    data,
    "id-column": "code",
    value: "rate",
    ...overrides,
  };
  return Object.entries(options).flatMap(([k, v]) => [`--${k}`, v]);
};

const temporary = mkdtempSync(join(tmpdir(), "tessera-stats-"));
function csv(name: string, transform: (lines: string[]) => string[]): string {
  const path = join(temporary, name);
  writeFileSync(path, transform(readFileSync(data, "utf8").trim().split("\n")).join("\n") + "\n");
  return path;
}

describe("stats CLI", () => {
  test("--help prints the usage on stdout and exits 0; no command at all is a usage error (exit 2)", async () => {
    const help = await runStatsCli(["--help"]);
    expect(help).toMatchObject({ code: 0, stderr: "" });
    expect(help.stdout).toMatch(/^usage: stats <moran\|local\|geary\|getis-ord\|hotspots\|rate-moran\|rates\|residuals>/);
    const none = await runStatsCli([]);
    expect(none.code).toBe(2);
    expect(none.stdout).toBe("");
    expect(none.stderr).toMatch(/^usage: stats/);
  });

  test("moran prints exactly the documented fields", async () => {
    const run = await runStatsCli(["moran", ...common({ weights: "rook", permutations: "199", seed: "5" })]);
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    expect(Object.keys(out).sort()).toEqual(["I", "expectedI", "n", "normality", "permutation", "randomization", "weights"].sort());
    expect(Object.keys(out.weights).sort()).toEqual(["S0", "S1", "S2", "islands", "meanNeighbours", "rule", "transform"].sort());
    expect(Object.keys(out.normality).sort()).toEqual(["pGreater", "pTwoSided", "variance", "z"]);
    expect(Object.keys(out.randomization).sort()).toEqual(["pGreater", "pTwoSided", "variance", "z"]);
    expect(Object.keys(out.permutation).sort()).toEqual(["mean", "pGreater", "pLess", "pTwoSided", "permutations", "sd", "seed", "z"].sort());
    expect(out.n).toBe(17); // 16 grid squares + the detached island, kept with a zero lag by default
    expect(out.weights).toMatchObject({ rule: "rook", transform: "W", islands: 1 });
    expect(out.expectedI).toBeCloseTo(-1 / 16, 12);
    expect(out.permutation).toMatchObject({ permutations: 199, seed: 5 });
    expect(out.permutation.pGreater).toBeGreaterThanOrEqual(1 / 200);
  });

  test("local, geary and getis-ord follow their documented shapes", async () => {
    const [local, geary, getis] = await Promise.all([
      runStatsCli(["local", ...common({ permutations: "99", alpha: "0.1", correction: "bonferroni" })]),
      runStatsCli(["geary", ...common({ permutations: "99" })]),
      runStatsCli(["getis-ord", ...common({ permutations: "99" })]),
    ]);
    expect(local.code).toBe(0);
    const lisa = JSON.parse(local.stdout);
    expect(Object.keys(lisa).sort()).toEqual(["n", "regions"]);
    expect(lisa.regions).toHaveLength(17);
    expect(Object.keys(lisa.regions[0]).sort()).toEqual(
      ["cluster", "expectedIi", "id", "Ii", "p", "pseudoP", "quadrant", "varianceIi", "z"].sort(),
    );
    expect(lisa.regions.find((r: { id: string }) => r.id === "Z9")).toMatchObject({ cluster: "no-neighbours", pseudoP: null });
    expect(geary.code).toBe(0);
    expect(Object.keys(JSON.parse(geary.stdout)).sort()).toEqual(["C", "expectedC", "n", "normality", "permutation", "randomization", "weights"].sort());
    expect(getis.code).toBe(0);
    const g = JSON.parse(getis.stdout);
    expect(Object.keys(g).sort()).toEqual(["G", "expectedG", "n", "normality", "permutation", "randomization", "weights"].sort());
    expect(g.weights.transform).toBe("B");
  });

  test("non-numeric values are excluded and counted on stderr, never read as zero", async () => {
    const path = csv("non-numeric.csv", (lines) => lines.map((line) => (line.startsWith("B2,") ? "B2,n/a" : line.startsWith("C3,") ? "C3," : line)));
    const run = await runStatsCli(["moran", ...common({ data: path, permutations: "0" })]);
    expect(run.code).toBe(0);
    expect(JSON.parse(run.stdout).n).toBe(15);
    expect(JSON.parse(run.stdout).permutation).toBeNull();
    expect(run.stderr).toMatch(/1 non-numeric value\(s\) \("B2"\).*1 empty value\(s\) \("C3"\)/);
  });

  test("bad input: non-zero exit and one line on stderr naming the problem", async () => {
    const extra = csv("extra.csv", (lines) => [...lines, "X1,4", "X2,5"]);
    const short = csv("short.csv", (lines) => lines.filter((line) => !line.startsWith("D4,")));
    const constant = csv("constant.csv", (lines) => lines.map((line, i) => (i === 0 ? line : `${line.split(",")[0]},7`)));
    const cases: [string[], RegExp][] = [
      [["moran", ...common({ topology: join(temporary, "missing.json") })], /Cannot read the --topology file .*no such file/],
      [["moran", ...common({ object: "provinces" })], /no object "provinces"/],
      [["moran", ...common({ "id-column": "district" })], /no column "district"/],
      [["moran", ...common({ data: extra })], /2 id\(s\) in the data are not in the boundaries: "X1", "X2"/],
      [["moran", ...common({ data: short })], /1 region\(s\) of the boundaries have no row in the data: "D4"/],
      [["moran", ...common({ data: constant })], /constant/],
      [["moran", ...common({ weights: "hexagon" })], /--weights/],
      [["moran", ...common({ permutations: "50" })], /--permutations/],
      [["moran", "--object", "districts"], /Missing required option --topology/],
      [["mean", ...common()], /Unknown command "mean"/],
    ];
    const runs = await Promise.all(cases.map(([args]) => runStatsCli(args)));
    runs.forEach((run, k) => {
      expect(run.code).not.toBe(0);
      expect(run.stdout).toBe("");
      const lines = run.stderr.trim().split("\n");
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(cases[k][1]);
    });
  });
});

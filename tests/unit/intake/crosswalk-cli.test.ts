/**
 * The intake CLI's crosswalk command, spawned as a user would run it, against
 * R's sf on the North Carolina counties onto a 60 km grid (the fixtures of
 * scripts/reference/crosswalk-reference.R; tolerance 1e-9 relative as in
 * tests/unit/geometry/crosswalk-reference.test.ts: both sides clip the same
 * doubles exactly in the plane).
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { CROSSWALK_FILES, crosswalkReference } from "../../fixtures/crosswalk/fixture";

const root = path.join(__dirname, "..", "..", "..");

function run(args: string[]): { status: number | null; stdout: string; stderr: string } {
  const result = spawnSync("npx", ["tsx", "scripts/intake-cli.ts", ...args], { cwd: root, encoding: "utf8", timeout: 60_000, maxBuffer: 16 * 1024 * 1024 });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

const boundaries = [
  "--from", CROSSWALK_FILES.planarCounties, "--from-object", "regions", "--from-id", "FIPSNO",
  "--to", CROSSWALK_FILES.planarGrid, "--to-object", "regions", "--to-id", "cell",
];

jest.setTimeout(120_000);

describe("intake crosswalk", () => {
  test("prints the crosswalk and the harmonised values, matching sf's st_interpolate_aw", () => {
    const { status, stdout, stderr } = run([
      "crosswalk", ...boundaries, "--sliver-tolerance", "0",
      "--data", CROSSWALK_FILES.data, "--id-column", "FIPSNO", "--extensive", "BIR74,SID74", "--intensive", "SIDR74",
    ]);
    expect(stderr).toBe("");
    expect(status).toBe(0);
    const out = JSON.parse(stdout);
    const ref = crosswalkReference("planar");
    expect({ coordinates: out.coordinates, unmatchedFrom: out.unmatchedFrom, pairs: out.pairs.length, intensiveWeighting: out.intensiveWeighting }).toEqual({
      coordinates: "planar",
      unmatchedFrom: [],
      pairs: ref.pairs.from.length,
      intensiveWeighting: "area",
    });
    const share = new Map<string, number>(out.pairs.map((p: { from: string; to: string; share: number }) => [`${p.from}|${p.to}`, p.share]));
    ref.pairs.from.forEach((from, i) => expect(Math.abs(share.get(`${from}|${ref.pairs.to[i]}`)! - ref.pairs.share[i])).toBeLessThanOrEqual(1e-9));
    for (const column of ["BIR74", "SID74", "SIDR74"] as const) {
      ref.interpolated.cells.forEach((cell, i) => {
        const expected = ref.interpolated.st_interpolate_aw[column][i];
        expect(Math.abs(out.values[column][cell] - expected)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(expected)));
      });
    }
    // Cells no county reaches: listed once, null in every column.
    expect(out.uncoveredTo.length).toBe(ref.targets.ids.length - ref.interpolated.cells.length);
    for (const cell of out.uncoveredTo) expect(out.values.BIR74[cell]).toBeNull();
    expect(out.missing).toEqual({ BIR74: [], SID74: [], SIDR74: [] });
  });

  test("bad input: exit 2 and one line on stderr naming the problem", () => {
    const cases: [string[], RegExp][] = [
      [["crosswalk", "--from", CROSSWALK_FILES.planarCounties], /^intake: --from-object is required/],
      [["crosswalk", ...boundaries, "--coordinates", "mercator"], /^intake: --coordinates must be planar or geographic, not 'mercator'$/],
      [["crosswalk", ...boundaries.slice(0, 5), "NOPE", ...boundaries.slice(6)], /^intake: --from .*nc-km\.geojson: property 'NOPE' is missing on feature 1 of object 'regions'/],
      [["crosswalk", ...boundaries, "--data", CROSSWALK_FILES.data, "--id-column", "FIPSNO", "--extensive", "POP"], /^intake: --data .*nc-sids\.csv: no column 'POP' \(columns: FIPSNO, NAME, BIR74, SID74, SIDR74\)$/],
      [["crosswalk", ...boundaries, "--extensive", "BIR74"], /^intake: --extensive, --intensive and --denominator need --data FILE\.csv$/],
      [["crosswalk", ...boundaries, "--data", CROSSWALK_FILES.data, "--id-column", "FIPSNO", "--extensive", "NAME"], /^intake: --data .*: line 2, column 'NAME', region '37009': 'Ashe' is not a number/],
    ];
    for (const [args, message] of cases) {
      const { status, stdout, stderr } = run(args);
      expect({ status, stdout }).toEqual({ status: 2, stdout: "" });
      expect(stderr.trimEnd().split("\n")).toHaveLength(1);
      expect(stderr.trimEnd()).toMatch(message);
    }
  });

  describe("--shares: a crosswalk CSV instead of the geometry", () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), "tessera-xwalk-"));
    afterAll(() => rmSync(dir, { recursive: true, force: true }));
    const ref = crosswalkReference("planar");

    test("sf's overlay shares as a CSV reproduce st_interpolate_aw's counts, and a rate weighted by its denominator equals the ratio of the interpolated counts", () => {
      const file = path.join(dir, "sf-shares.csv");
      const lines = ref.pairs.from.map((from, i) => `${from},${ref.pairs.to[i]},${ref.pairs.share[i].toPrecision(17)}`);
      writeFileSync(file, `from,to,share\n${lines.join("\n")}\n`);
      const { status, stdout, stderr } = run([
        "crosswalk", "--shares", file, ...boundaries,
        "--data", CROSSWALK_FILES.data, "--id-column", "FIPSNO", "--extensive", "BIR74,SID74", "--intensive", "SIDR74", "--denominator", "BIR74",
      ]);
      expect(stderr).toBe("");
      expect(status).toBe(0);
      const out = JSON.parse(stdout);
      expect({ crosswalk: out.crosswalk, unmatchedFrom: out.unmatchedFrom, intensiveWeighting: out.intensiveWeighting }).toEqual({ crosswalk: "csv", unmatchedFrom: [], intensiveWeighting: { denominator: "BIR74" } });
      const sf = ref.interpolated.st_interpolate_aw;
      ref.interpolated.cells.forEach((cell, i) => {
        expect(Math.abs(out.values.BIR74[cell] - sf.BIR74[i])).toBeLessThanOrEqual(1e-9 * Math.max(1, sf.BIR74[i]));
        expect(Math.abs(out.values.SID74[cell] - sf.SID74[i])).toBeLessThanOrEqual(1e-9 * Math.max(1, sf.SID74[i]));
        // SIDR74 = 1000 · SID74 / BIR74 per county, so weighting it by births gives 1000 · (interpolated deaths / interpolated births).
        const ratio = (1000 * sf.SID74[i]) / sf.BIR74[i];
        expect(Math.abs(out.values.SIDR74[cell] - ratio)).toBeLessThanOrEqual(1e-9 * Math.max(1, ratio));
      });
    });

    test("a CSV that fails its checks: exit 1 and the report naming line and code", () => {
      const file = path.join(dir, "bad.csv");
      writeFileSync(file, "from,to,share\n37009,c061,0.9\n99999,c061,1\n");
      const { status, stdout, stderr } = run(["crosswalk", "--shares", file, ...boundaries]);
      expect({ status, stderr }).toEqual({ status: 1, stderr: "" });
      const report = JSON.parse(stdout);
      expect(report.ok).toBe(false);
      expect(report.errors.map((e: { message: string }) => e.message)).toEqual([
        "line 3: source code '99999' is not a region of the source boundaries",
        "source '37009' (line 2): shares sum to 0.9, not 1 (tolerance 0.0001)",
      ]);
    });

    test("intensive values through a CSV need a denominator", () => {
      const { status, stderr } = run(["crosswalk", "--shares", CROSSWALK_FILES.data, "--data", CROSSWALK_FILES.data, "--id-column", "FIPSNO", "--intensive", "SIDR74"]);
      expect(status).toBe(2);
      expect(stderr).toBe("intake: --intensive through --shares needs --denominator COL: a crosswalk CSV has shares, not overlap areas\n");
    });
  });
});

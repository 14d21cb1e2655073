/**
 * Spawns the real CLI (npx tsx) for its exit codes: 0 usable, 1 not usable, 2 bad arguments.
 */
import { spawnSync } from "node:child_process";
import path from "node:path";
import { fixture } from "./helpers";

const root = path.join(__dirname, "..", "..", "..");

function run(args: string[]): { status: number | null; stdout: string; stderr: string } {
  const result = spawnSync("npx", ["tsx", "scripts/intake-cli.ts", ...args], { cwd: root, encoding: "utf8", timeout: 60_000 });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

const boundaries = ["--boundaries", fixture("regions.topojson"), "--object", "regions", "--id", "code"];

jest.setTimeout(120_000);

describe("intake CLI", () => {
  test("--help prints the usage on stdout and exits 0", () => {
    const { status, stdout, stderr } = run(["--help"]);
    expect({ status, stderr }).toEqual({ status: 0, stderr: "" });
    expect(stdout).toMatch(/^usage: intake check --boundaries FILE/);
  });

  test("exit 0 and one JSON report for a usable panel", () => {
    const { status, stdout, stderr } = run(["check", ...boundaries, "--panel", fixture("long-bom.csv")]);
    expect(stderr).toBe("");
    expect(status).toBe(0);
    const report = JSON.parse(stdout);
    expect(report).toMatchObject({
      ok: true,
      rows: 8,
      regions: { matched: 4, inPanelNotInBoundaries: [], inBoundariesNotInPanel: [] },
      periods: ["2019", "2020"],
      indicators: ["unemployment_rate"],
      duplicates: { count: 0, examples: [] },
      missing: { unemployment_rate: 0 },
      errors: [],
      errorCount: 0,
      boundaries: { object: "regions", idProperty: "code", regions: 4 },
    });
  });

  test("exit 1 with the report when the panel is not usable", () => {
    const { status, stdout } = run(["check", ...boundaries, "--panel", fixture("unknown-regions.csv")]);
    expect(status).toBe(1);
    const report = JSON.parse(stdout);
    expect(report.ok).toBe(false);
    expect(report.regions.inPanelNotInBoundaries).toEqual(["r03", "X99", "TOTAL"]);
    expect(report.errorCount).toBe(3);
  });

  test("exit 1 when the boundary object is missing; the panel is still checked", () => {
    const { status, stdout } = run(["check", "--boundaries", fixture("regions.topojson"), "--object", "nope", "--id", "code", "--panel", fixture("long-bom.csv"), "--decimal", "."]);
    expect(status).toBe(1);
    const report = JSON.parse(stdout);
    expect(report.errors[0]).toEqual({ row: null, column: null, message: "boundaries: the boundary file has no object 'nope'; its objects are: regions" });
    expect(report.rows).toBe(8);
  });

  test("decimal comma and explicit columns from flags", () => {
    const { status, stdout } = run([
      "check", ...boundaries, "--panel", fixture("semicolon-decimal-comma.csv"), "--decimal", ",",
      "--region", "Region", "--period", "Jaar", "--indicator", "Indicator", "--value", "Waarde",
    ]);
    expect(status).toBe(0);
    expect(JSON.parse(stdout).missing).toEqual({ median_income: 1, output_per_head: 1 });
  });

  test.each([
    [["check", ...boundaries, "--panel", fixture("long-bom.csv"), "--decimal", ";"], 'intake: --decimal: Invalid option: expected one of "."|","'],
    [["check", "--panel", fixture("long-bom.csv")], "intake: --boundaries FILE is required"],
    [["check", ...boundaries, "--panel", "/no/such/file.csv"], "intake: cannot read --panel /no/such/file.csv: no such file or not readable"],
    [["check", "--colour", "ochre"], null],
    [["frobnicate"], null],
  ])("exit 2 and one line on stderr for bad arguments %#", (args, message) => {
    const { status, stdout, stderr } = run(args);
    expect(status).toBe(2);
    expect(stdout).toBe("");
    expect(stderr.trim().split("\n")).toHaveLength(1);
    if (message !== null) expect(stderr.trim()).toBe(message);
  });
});

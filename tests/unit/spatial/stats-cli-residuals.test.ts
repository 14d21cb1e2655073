/**
 * The statistics CLI's residuals command end to end (`npx tsx
 * scripts/stats-cli.ts`) on the North Carolina SIDS data of R's spData package:
 * boundaries tests/fixtures/nc/nc.topojson, data tests/fixtures/nc-sids/residuals.csv.
 * Every expected number is R 4.2.2's lm or spdep 1.2-7's lm.morantest /
 * lm.LMtests, read from tests/fixtures/nc-sids/residuals.json
 * (scripts/reference/residuals-reference.R); the source is named beside each check.
 */
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runStatsCli } from "@/tests/helpers/stats-cli";
import { NC_RESIDUALS_CSV, NC_TOPOLOGY, loadResiduals } from "../../fixtures/nc-sids/fixture";

jest.setTimeout(300_000);

const fixture = loadResiduals();
const TIGHT = 1e-9;

function args(options: Record<string, string>, data = NC_RESIDUALS_CSV): string[] {
  const all: Record<string, string> = { topology: NC_TOPOLOGY, object: "nc", id: "FIPSNO", data, "id-column": "FIPSNO", ...options };
  return ["residuals", ...Object.entries(all).flatMap(([k, v]) => [`--${k}`, v])];
}

function close(label: string, actual: unknown, expected: number): string | null {
  if (typeof actual !== "number" || !(Math.abs(actual - expected) <= TIGHT * Math.abs(expected))) {
    return `${label}: CLI ${String(actual)}, R ${expected}`;
  }
  return null;
}

const temporary = mkdtempSync(join(tmpdir(), "tessera-stats-residuals-"));
/** A copy of residuals.csv with an extra column computed from each row, and cells blanked: { FIPSNO: [columns] }. */
function editedCsv(name: string, extra: { column: string; of: (row: Record<string, string>) => string } | null, blank: Record<string, string[]> = {}): string {
  const [header, ...rows] = readFileSync(NC_RESIDUALS_CSV, "utf8").trim().split("\n");
  const columns = header.split(",");
  const out = rows.map((line) => {
    const cells = line.split(",");
    const row = Object.fromEntries(columns.map((c, i) => [c, cells[i]]));
    for (const column of blank[row.FIPSNO] ?? []) cells[columns.indexOf(column)] = "";
    return extra === null ? cells.join(",") : [...cells, extra.of(row)].join(",");
  });
  const path = join(temporary, name);
  writeFileSync(path, [extra === null ? header : `${header},${extra.column}`, ...out].join("\n") + "\n");
  return path;
}

describe("stats residuals vs R lm and spdep lm.morantest / lm.LMtests", () => {
  for (const [modelName, model] of Object.entries(fixture.models)) {
    for (const transform of ["W", "B"] as const) {
      test(`${model.formula}, --transform ${transform}: the documented fields, every number to 1e-9`, async () => {
        const run = await runStatsCli(args({ value: model.value, covariates: model.covariates.join(","), transform }));
        expect(run).toMatchObject({ code: 0, stderr: "" });
        const out = JSON.parse(run.stdout);
        expect(Object.keys(out).sort()).toEqual(
          [
            "n",
            "k",
            "weights",
            "coefficients",
            "standardErrors",
            "tValues",
            "pValues",
            "rSquared",
            "adjustedRSquared",
            "sigma2",
            "moran",
            "lagrange",
            "alpha",
            "suggestion",
          ].sort(),
        );
        const reference = model[transform];
        expect(out.n).toBe(reference.n);
        expect(out.k).toBe(reference.k);
        expect(Object.keys(out.coefficients)).toEqual([...reference.coefficients.names]);
        expect(Object.keys(out.moran).sort()).toEqual(["I", "expectedI", "pGreater", "pTwoSided", "variance", "z"]);
        expect(Object.keys(out.lagrange)).toEqual(["error", "lag", "robustError", "robustLag", "combined"]);
        const problems: (string | null)[] = [];
        reference.coefficients.names.forEach((name, j) => {
          // source: summary(lm)$coefficients (residuals.json models.<m>.<style>.coefficients)
          problems.push(close(`${modelName} ${name} estimate`, out.coefficients[name], reference.coefficients.estimate[j]));
          problems.push(close(`${modelName} ${name} standard error`, out.standardErrors[name], reference.coefficients.standardError[j]));
          problems.push(close(`${modelName} ${name} t`, out.tValues[name], reference.coefficients.t[j]));
          problems.push(close(`${modelName} ${name} p`, out.pValues[name], reference.coefficients.p[j]));
        });
        problems.push(close("R²", out.rSquared, reference.rSquared));
        problems.push(close("σ²", out.sigma2, reference.sigma2));
        // source: lm.morantest greater (I, expectation, variance, z, p) and two.sided (p)
        for (const key of ["I", "expectedI", "variance", "z", "pGreater", "pTwoSided"] as const) {
          problems.push(close(`moran ${key}`, out.moran[key], reference.moran[key]));
        }
        // source: lm.LMtests(test = "all"); p = pchisq(statistic, df, lower.tail = FALSE)
        for (const key of ["error", "lag", "robustError", "robustLag", "combined"] as const) {
          problems.push(close(`${key} statistic`, out.lagrange[key].statistic, reference.lagrange[key].statistic));
          problems.push(close(`${key} p`, out.lagrange[key].p, reference.lagrange[key].pUpper));
          expect(out.lagrange[key].df).toBe(reference.lagrange[key].df);
        }
        expect(problems.filter((p) => p !== null)).toEqual([]);
        expect(["error", "lag", "both", "neither"]).toContain(out.suggestion);
      });
    }
  }

  test("a region with an empty covariate is excluded and named in a note; n drops by one", async () => {
    const path = editedCsv("blank.csv", null, { "37001": ["NWP79"] });
    const run = await runStatsCli(args({ value: "SIDR79", covariates: "NWP79" }, path));
    expect(run.code).toBe(0);
    expect(run.stderr).toMatch(/^note: excluded 1 region\(s\) with an empty or non-numeric value: "37001" \(column "NWP79"\); n = 99\.\n$/);
    expect(JSON.parse(run.stdout).n).toBe(99);
  });
});

describe("stats residuals: bad input exits 2 with one line naming the problem", () => {
  const cases: [string, () => string[], RegExp][] = [
    ["an unknown covariate column", () => args({ value: "SIDR79", covariates: "NWP79,INCOME" }), /no column "INCOME"/],
    ["no --covariates", () => args({ value: "SIDR79" }), /--covariates/],
    ["a covariate given twice", () => args({ value: "SIDR79", covariates: "NWP79,NWP79" }), /"NWP79" twice/],
    ["the response as a covariate", () => args({ value: "SIDR79", covariates: "SIDR79" }), /"SIDR79", the --value column/],
    [
      "a covariate that is a linear combination of the others",
      () =>
        args(
          { value: "SIDR79", covariates: "NWP79,SIDR74,MIX" },
          editedCsv("collinear.csv", { column: "MIX", of: (row) => String(2 * Number(row.NWP79) - 0.5 * Number(row.SIDR74) + 1) }),
        ),
      /covariate "MIX" is collinear/,
    ],
    [
      "a constant covariate",
      () => args({ value: "SIDR79", covariates: "NWP79,FLAT" }, editedCsv("constant.csv", { column: "FLAT", of: () => "7" })),
      /covariate "FLAT" is collinear/,
    ],
    [
      "too few regions",
      () => {
        const blank: Record<string, string[]> = {};
        fixture.ids.slice(4).forEach((id) => (blank[String(id)] = ["SIDR79"]));
        return args({ value: "SIDR79", covariates: "NWP79,SIDR74" }, editedCsv("few.csv", null, blank));
      },
      /needs at least 5 regions for k = 3 .*n = 4/,
    ],
    ["--covariates on another command", () => ["moran", ...args({ value: "SIDR79", covariates: "NWP79" }).slice(1)], /--covariates applies only to residuals/],
  ];
  for (const [what, build, message] of cases) {
    test(what, async () => {
      const run = await runStatsCli(build());
      expect(run.code).toBe(2);
      expect(run.stdout).toBe("");
      const lines = run.stderr.split("\n").filter((line) => line !== "" && !line.startsWith("note:"));
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(message);
    });
  }
});

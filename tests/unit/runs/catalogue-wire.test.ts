import { CATALOGUE_FIELDS, CATALOGUE_FORMAT, catalogueAnswerText, catalogueRowsOf, type CatalogueAnswer, type CatalogueTuple } from "@/lib/runs/catalogue-wire";

const tuple = (indicator: string, period: string, I: number | null): CatalogueTuple => [
  7,
  indicator,
  period,
  Number(period) - 2020,
  I === null ? "not-computed" : "computed",
  I === null ? "The indicator is constant" : null,
  42,
  I,
  -1 / 41,
  I === null ? null : I * 10,
  0.01,
  0.002,
  0.03,
  I === null ? null : "clustering",
  null,
  0.8,
  0.02,
  I === null ? null : 49,
  I === null ? null : I / 3,
  I === null ? null : 0.2,
  I === null ? null : "error",
];

describe("catalogue wire format", () => {
  it("turns each tuple back into the row with every field in CATALOGUE_FIELDS order", () => {
    const answer: CatalogueAnswer = {
      format: CATALOGUE_FORMAT,
      fields: CATALOGUE_FIELDS,
      runs: [],
      indicators: [{ code: "jobless", label: "Jobless rate", unit: "%" }],
      rows: [tuple("jobless", "2021", 0.31), tuple("jobless", "2022", null)],
    };
    const rows = catalogueRowsOf(JSON.parse(JSON.stringify(answer)) as CatalogueAnswer);
    expect(rows).toHaveLength(2);
    // Every field name maps to the tuple position it names.
    rows.forEach((row, r) => CATALOGUE_FIELDS.forEach((field, k) => expect(row[field]).toEqual(answer.rows[r][k])));
    expect(rows[0]).toMatchObject({ indicatorLabel: "Jobless rate", unit: "%", I: 0.31, z: 3.1, significance: "clustering", residualI: 0.31 / 3, residualP: 0.2, modelSuggestion: "error" });
    expect(rows[1]).toMatchObject({ status: "not-computed", I: null, note: "The indicator is constant" });
  });

  it("labels an indicator with no metadata by its code, and a code like __proto__ stays an ordinary code", () => {
    const rows = catalogueRowsOf({
      indicators: [{ code: "__proto__", label: "Prototype-like code", unit: null }],
      rows: [tuple("__proto__", "2021", 0.1), tuple("constructor", "2021", 0.2)],
    });
    expect(rows.map((r) => [r.indicator, r.indicatorLabel, r.unit])).toEqual([
      ["__proto__", "Prototype-like code", null],
      ["constructor", "constructor", null],
    ]);
  });

  it("assembles the answer from each tuple's JSON text, as PostgreSQL's json_build_array writes it, into one valid document", () => {
    const tuples = [tuple("jobless", "2021", 0.1 + 0.2), tuple("jobless", "2022", null)];
    // json_build_array separates values with ", "; the text must parse to the same numbers bit for bit.
    const texts = tuples.map((t) => `[${t.map((v) => JSON.stringify(v)).join(", ")}]`);
    const indicators = [{ code: 'say "hi"', label: "</script><b>", unit: null }];
    const parsed = JSON.parse(catalogueAnswerText(indicators, texts)) as CatalogueAnswer;
    expect(parsed).toEqual({ format: CATALOGUE_FORMAT, fields: [...CATALOGUE_FIELDS], runs: [], indicators, rows: tuples });
    expect(Object.is(parsed.rows[0][7], 0.30000000000000004)).toBe(true);
    expect(JSON.parse(catalogueAnswerText([], []))).toMatchObject({ indicators: [], rows: [] });
  });

  it("notes beside a run's rows when its permutations cannot reach significance: local clusters per period, classes per run", () => {
    const runs = [
      { id: 7, permutations: 999, alpha: 0.05, correction: "bonferroni" as const, sequentialExtremes: null, globalTests: 4 },
      { id: 8, permutations: 999, alpha: 0.05, correction: "bonferroni" as const, sequentialExtremes: null, globalTests: 300 },
    ];
    const small: CatalogueTuple = [...tuple("jobless", "2021", 0.31)];
    small[17] = 20;
    const other: CatalogueTuple = [...tuple("jobless", "2022", 0.2)];
    other[0] = 8;
    const answer = JSON.parse(catalogueAnswerText([], [tuple("jobless", "2021", 0.31), small, tuple("jobless", "2022", null), other].map((t) => JSON.stringify(t)), runs)) as CatalogueAnswer;
    expect(answer.runs).toEqual(runs);
    const [lone, few, notComputed, many] = catalogueRowsOf(answer);
    expect(lone.clusterReachability).toBe(
      "Not reachable: with 999 permutations no region can pass Bonferroni over 49 regions (needs p ≤ 0.00102, smallest p 0.002); 9,999 permutations needed.",
    );
    expect(lone.classReachability).toBeNull(); // 0.05 / 4 tests is above 0.002
    expect(few.clusterReachability).toBeNull(); // 0.05 / 20 = 0.0025 ≥ 0.002
    expect(notComputed.clusterReachability).toBeNull();
    expect(notComputed.classReachability).toBeNull();
    expect(many.classReachability).toContain("no indicator-period can pass Bonferroni over 300 indicator-periods");
    expect(many.classReachability).toContain("99,999 permutations needed");
    // An answer without runs (older clients' fixtures) says nothing rather than guessing.
    expect(catalogueRowsOf({ indicators: [], rows: [tuple("jobless", "2021", 0.31)] })[0].clusterReachability).toBeNull();
  });
});

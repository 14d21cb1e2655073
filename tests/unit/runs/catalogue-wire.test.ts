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
];

describe("catalogue wire format", () => {
  it("turns each tuple back into the row with every field in CATALOGUE_FIELDS order", () => {
    const answer: CatalogueAnswer = {
      format: CATALOGUE_FORMAT,
      fields: CATALOGUE_FIELDS,
      indicators: [{ code: "jobless", label: "Jobless rate", unit: "%" }],
      rows: [tuple("jobless", "2021", 0.31), tuple("jobless", "2022", null)],
    };
    const rows = catalogueRowsOf(JSON.parse(JSON.stringify(answer)) as CatalogueAnswer);
    expect(rows).toHaveLength(2);
    // Every field name maps to the tuple position it names.
    rows.forEach((row, r) => CATALOGUE_FIELDS.forEach((field, k) => expect(row[field]).toEqual(answer.rows[r][k])));
    expect(rows[0]).toMatchObject({ indicatorLabel: "Jobless rate", unit: "%", I: 0.31, z: 3.1, significance: "clustering" });
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
    expect(parsed).toEqual({ format: CATALOGUE_FORMAT, fields: [...CATALOGUE_FIELDS], indicators, rows: tuples });
    expect(Object.is(parsed.rows[0][7], 0.30000000000000004)).toBe(true);
    expect(JSON.parse(catalogueAnswerText([], []))).toMatchObject({ indicators: [], rows: [] });
  });
});

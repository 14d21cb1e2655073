import { Readable } from "node:stream";
import fc from "fast-check";
import {
  columnMappingSchema,
  fileIndicatorCodes,
  headerPeriod,
  indicatorFromFileName,
  parsePeriod,
  suggestMapping,
  validatePanel,
  type Observation,
  type PanelOptionsInput,
} from "@/lib/intake";

async function check(csv: string, options: PanelOptionsInput = {}, boundaryIds: string[] | undefined = ["R1", "R2", "R3"]) {
  const observations: Observation[] = [];
  const report = await validatePanel({
    source: Readable.from([Buffer.from(csv, "utf8")]),
    options,
    boundaryIds,
    onObservations: (batch) => {
      observations.push(...batch);
    },
  });
  return { report, observations };
}

/** Observations without the row they came from, sorted: what a layout must agree on. */
function cells(observations: readonly Observation[]) {
  return observations.map(({ region, periodKey, indicator, value }) => ({ region, periodKey, indicator, value })).sort((a, b) => `${a.indicator}|${a.periodKey}|${a.region}`.localeCompare(`${b.indicator}|${b.periodKey}|${b.region}`));
}

describe("headerPeriod reads an indicator and a period out of a header name", () => {
  test.each([
    ["unemployment_rate_2019", "unemployment_rate", "2019"],
    ["unemployment_rate 2019", "unemployment_rate", "2019"],
    ["2019_unemployment_rate", "unemployment_rate", "2019"],
    ["Unemployment rate - 2019", "Unemployment rate", "2019"],
    ["gdp 2019-Q3", "gdp", "2019-Q3"],
    ["gdp_2019Q3", "gdp", "2019Q3"],
    ["gdp Q3 2019", "gdp", "Q3 2019"],
    ["2019-Q3 gdp", "gdp", "2019-Q3"],
    ["Q3 2019 gdp", "gdp", "Q3 2019"],
    ["income.2019-07", "income", "2019-07"],
    ["income 2019M07", "income", "2019M07"],
    ["income:2019/07", "income", "2019/07"],
  ])("%s → indicator %s, period %s", (header, indicator, period) => {
    expect(headerPeriod(header)).toEqual({ indicator, period });
  });

  test.each(["2019", "2019-Q3", "Q3 2019", "2019-07", "2019M07", " 2020 "])("a bare period %s has no indicator", (header) => {
    expect(headerPeriod(header)).toEqual({ indicator: null, period: header.trim() });
  });

  test.each(["region", "unemployment_rate", "gdp_2015_prices", "201907", "income_1700", "var_2019_07", "", "income_2019_2020_ratio"])("%s names no period", (header) => {
    expect(headerPeriod(header)).toBeNull();
  });
});

describe("suggestMapping detects a wide-by-period header", () => {
  test("indicator and year in every column header", () => {
    expect(suggestMapping(["region", "unemployment_rate_2019", "unemployment_rate_2020", "income_2019", "income_2020"])).toEqual({
      mapping: {
        layout: "wide-period",
        region: "region",
        columns: [
          { column: "unemployment_rate_2019", indicator: "unemployment_rate", period: "2019" },
          { column: "unemployment_rate_2020", indicator: "unemployment_rate", period: "2020" },
          { column: "income_2019", indicator: "income", period: "2019" },
          { column: "income_2020", indicator: "income", period: "2020" },
        ],
      },
      notes: [],
    });
  });

  test("spaces and the period first are read the same way", () => {
    const spaced = suggestMapping(["Region code", "unemployment_rate 2019", "2020_unemployment_rate"]).mapping;
    expect(spaced).toEqual({
      layout: "wide-period",
      region: "Region code",
      columns: [
        { column: "unemployment_rate 2019", indicator: "unemployment_rate", period: "2019" },
        { column: "2020_unemployment_rate", indicator: "unemployment_rate", period: "2020" },
      ],
    });
  });

  test("bare period headers need an indicator code from the user, and take the one given", () => {
    const without = suggestMapping(["region", "2019", "2020"]);
    expect(without.mapping).toBeNull();
    expect(without.notes.join(" ")).toMatch(/'2019', '2020' name only a period; give the indicator code/);
    expect(suggestMapping(["region", "2019", "2020"], undefined, { periodIndicator: "jobless" }).mapping).toEqual({
      layout: "wide-period",
      region: "region",
      columns: [
        { column: "2019", indicator: "jobless", period: "2019" },
        { column: "2020", indicator: "jobless", period: "2020" },
      ],
    });
  });

  test("a label column without a period is left out and named in a note", () => {
    const suggestion = suggestMapping(["region", "name", "2019", "2020"], undefined, { periodIndicator: "x" });
    expect(suggestion.mapping?.layout).toBe("wide-period");
    expect(suggestion.mapping?.layout === "wide-period" && suggestion.mapping.columns.map((c) => c.column)).toEqual(["2019", "2020"]);
    expect(suggestion.notes).toEqual(["column(s) 'name' name no period and are not read"]);
  });

  test("a period column by name keeps the ordinary wide layout, and an indicator/value pair keeps long", () => {
    expect(suggestMapping(["region", "year", "income_2015_prices", "gdp"]).mapping?.layout).toBe("wide");
    expect(suggestMapping(["region", "year", "gdp_2019"]).mapping?.layout).toBe("wide");
    expect(suggestMapping(["region", "period", "indicator", "value"]).mapping?.layout).toBe("long");
  });

  test("asked for explicitly, a header without period columns says so", () => {
    expect(suggestMapping(["region", "gdp"], "wide-period")).toEqual({
      mapping: null,
      notes: ["no column header names a period (such as income_2019 or 2019)", "column(s) 'gdp' name no period and are not read"],
    });
  });

  // Any spelling parsePeriod accepts, one granularity, any count.
  const year = fc.integer({ min: 1800, max: 2200 });
  const spelledPeriod = fc.oneof(
    year.map((y) => String(y)),
    fc.tuple(year, fc.integer({ min: 1, max: 4 }), fc.constantFrom("-Q", "Q", " Q", "_Q")).map(([y, q, sep]) => `${y}${sep}${q}`),
    fc.tuple(year, fc.integer({ min: 1, max: 4 })).map(([y, q]) => `Q${q} ${y}`),
    fc.tuple(year, fc.integer({ min: 1, max: 12 }), fc.constantFrom("-", "/", "M")).map(([y, m, sep]) => `${y}${sep}${String(m).padStart(2, "0")}`),
  );
  const indicatorCode = fc.stringMatching(/^[a-z][a-z_]{0,14}[a-z]$/).filter((code) => headerPeriod(code) === null);

  test("property: a header of a region and N period columns is detected as wide-by-period, each column read back", () => {
    fc.assert(
      fc.property(
        fc.uniqueArray(spelledPeriod, { minLength: 1, maxLength: 30, selector: (p) => p }),
        fc.option(indicatorCode, { nil: undefined }),
        fc.constantFrom("_", " ", "-", "."),
        fc.boolean(),
        (periods, indicator, separator, periodFirst) => {
          const headers = ["region", ...periods.map((p) => (indicator === undefined ? p : periodFirst ? `${p}${separator}${indicator}` : `${indicator}${separator}${p}`))];
          const suggestion = suggestMapping(headers, undefined, { periodIndicator: "asked" });
          expect(suggestion.mapping?.layout).toBe("wide-period");
          if (suggestion.mapping?.layout !== "wide-period") return;
          expect(suggestion.mapping.region).toBe("region");
          expect(suggestion.mapping.columns.map((c) => c.column)).toEqual(headers.slice(1));
          suggestion.mapping.columns.forEach((column, i) => {
            expect(column.indicator).toBe(indicator ?? "asked");
            const read = parsePeriod(column.period);
            const expected = parsePeriod(periods[i]);
            expect(read.ok && expected.ok && read.period.key === expected.period.key).toBe(true);
          });
        },
      ),
      { seed: 20261211, numRuns: 300 },
    );
  });
});

describe("the mapping schema", () => {
  test("old long and wide mappings still parse (remembered mappings keep working)", () => {
    const long = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const wide = { layout: "wide", region: "code", period: "year", indicators: ["a", "b"] };
    expect(columnMappingSchema.parse(long)).toEqual(long);
    expect(columnMappingSchema.parse(wide)).toEqual(wide);
  });

  test("a wide-period mapping needs columns, each with an indicator and a period", () => {
    expect(columnMappingSchema.safeParse({ layout: "wide-period", region: "region", columns: [] }).success).toBe(false);
    const bad = columnMappingSchema.safeParse({ layout: "wide-period", region: "region", columns: [{ column: "2019", indicator: " ", period: "2019" }] });
    expect(bad.success).toBe(false);
    expect(bad.error?.issues[0]?.message).toBe("name the indicator of the column");
  });
});

describe("validatePanel reads a wide-by-period file like the long file it stands for", () => {
  const long = ["region,period,indicator,value", "R1,2019,jobless,5.5", "R1,2020,jobless,6", "R2,2019,jobless,NA", "R2,2020,jobless,7.25", "R3,2019,jobless,4", "R3,2020,jobless,4.5", "R1,2019,income,100", "R1,2020,income,110", "R2,2019,income,90", "R2,2020,income,", "R3,2019,income,80", "R3,2020,income,85"].join("\n");

  test("indicator and period in the header: same observations, missing values counted", async () => {
    const wide = ["region,jobless_2019,jobless_2020,income_2019,income_2020", "R1,5.5,6,100,110", "R2,NA,7.25,90,", "R3,4,4.5,80,85"].join("\n");
    const a = await check(long);
    const b = await check(wide);
    expect(a.report.ok).toBe(true);
    expect(b.report.ok).toBe(true);
    expect(b.report.layout).toBe("wide-period");
    expect(cells(b.observations)).toEqual(cells(a.observations));
    expect(b.report.missing).toEqual({ jobless: 1, income: 1 });
    expect(b.report.periods).toEqual(["2019", "2020"]);
    expect([...b.report.indicators].sort()).toEqual(["income", "jobless"]);
    expect(b.report.granularity).toBe("year");
  });

  test("bare periods with the indicator the user named; semicolons and decimal commas", async () => {
    const wide = ["region;2019;2020", "R1;5,5;6", "R2;NA;7,25", "R3;4;4,5"].join("\n");
    const mapping = {
      layout: "wide-period" as const,
      region: "region",
      columns: [
        { column: "2019", indicator: "jobless", period: "2019" },
        { column: "2020", indicator: "jobless", period: "2020" },
      ],
    };
    const b = await check(wide, { mapping, decimal: "," });
    expect(b.report.ok).toBe(true);
    const a = await check(long);
    expect(cells(b.observations)).toEqual(cells(a.observations).filter((o) => o.indicator === "jobless"));
    // Without a mapping, the indicator code comes from the option.
    expect((await check(wide, { decimal: ",", periodIndicator: "jobless" })).report.ok).toBe(true);
    const unnamed = await check(wide, { decimal: "," });
    expect(unnamed.report.ok).toBe(false);
    expect(unnamed.report.errors[0]?.message).toMatch(/name only a period; give the indicator code/);
  });

  test("cell errors name the file's row and the header column", async () => {
    const wide = ["region,jobless_2019,jobless_2020", "R1,5.5,lots", "R9,1,2", ",3,4", "R2,12 %,1"].join("\n");
    const { report } = await check(wide);
    expect(report.ok).toBe(false);
    expect(report.errors).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ row: 1, column: "jobless_2020" }),
        expect.objectContaining({ row: 3, column: "region", message: "region code is empty" }),
        expect.objectContaining({ row: 4, column: "jobless_2019" }),
        expect.objectContaining({ row: 2, column: "region", message: expect.stringMatching(/'R9' is not among the boundary ids/) }),
      ]),
    );
  });

  test("header problems are reported on the header row, naming the column", async () => {
    const mixed = await check(["region,jobless_2019,jobless_2020-Q1", "R1,1,2"].join("\n"));
    expect(mixed.report.errors).toEqual([expect.objectContaining({ row: 0, column: "jobless_2020-Q1", message: expect.stringMatching(/is a quarter but this panel's periods are years/) })]);

    const twice = await check(["region,jobless_2019,2019 jobless", "R1,1,2"].join("\n"));
    expect(twice.report.errors).toEqual([expect.objectContaining({ row: 0, column: "2019 jobless", message: "header columns 'jobless_2019' and '2019 jobless' both hold indicator 'jobless' for period 2019" })]);

    const notAPeriod = await check(["region,x", "R1,1"].join("\n"), { mapping: { layout: "wide-period", region: "region", columns: [{ column: "x", indicator: "jobless", period: "201907" }] } });
    expect(notAPeriod.report.errors).toEqual([expect.objectContaining({ row: 0, column: "x", message: expect.stringMatching(/header column 'x': period '201907' is not a year/) })]);

    const absent = await check(["region,jobless_2019", "R1,1"].join("\n"), { mapping: { layout: "wide-period", region: "region", columns: [{ column: "jobless_2020", indicator: "jobless", period: "2020" }] } });
    expect(absent.report.errors[0]).toMatchObject({ row: 0, column: "jobless_2020", message: expect.stringMatching(/required 'jobless' 2020 column 'jobless_2020' is not in the header/) });
  });

  test("a region given on two rows is a duplicate naming the first row", async () => {
    const { report } = await check(["region,jobless_2019", "R1,1", "R1,2"].join("\n"));
    expect(report.duplicates).toEqual({ count: 1, examples: [{ region: "R1", period: "2019", indicator: "jobless", firstRow: 1, row: 2 }] });
    expect(report.errors).toEqual([expect.objectContaining({ row: 2, column: "region", message: "duplicate: region 'R1' was already given on row 1 (1 cell(s))" })]);
  });
});

describe("indicator codes of a file, and from a file name", () => {
  test("fileIndicatorCodes per layout", () => {
    expect(fileIndicatorCodes({ layout: "wide", region: "r", period: "p", indicators: ["a", "b"] }, [], [])).toEqual(["a", "b"]);
    expect(fileIndicatorCodes({ layout: "wide-period", region: "r", columns: [{ column: "a_2019", indicator: "a", period: "2019" }, { column: "a_2020", indicator: "a", period: "2020" }] }, [], [])).toEqual(["a"]);
    expect(fileIndicatorCodes({ layout: "long", region: "r", period: "p", indicator: "i", value: "v" }, ["r", "p", "i", "v"], [["R1", "2019", "x", "1"], ["R1", "2019", "y", "1"], ["R2", "2019", "x", "1"]])).toEqual(["x", "y"]);
    expect(fileIndicatorCodes(null, [], [])).toEqual([]);
  });

  test.each([
    ["Unemployment rate.csv", "unemployment_rate"],
    ["C:\\data\\jobless-2019.CSV", "jobless_2019"],
    ["///.csv", "indicator"],
  ])("%s → %s", (name, code) => {
    expect(indicatorFromFileName(name)).toBe(code);
  });
});

import { Readable } from "node:stream";
import { validatePanel, validatePanelStream, ROW_NUMBERING } from "@/lib/intake";
import { checkFixture } from "./helpers";

const noRegionProblems = {
  matched: 4,
  inPanel: 4,
  inPanelNotInBoundaries: [],
  inPanelNotInBoundariesCount: 0,
  inBoundariesNotInPanel: [],
  inBoundariesNotInPanelCount: 0,
};

describe("validatePanel on fixtures", () => {
  test("UTF-8 with BOM, CRLF, long layout: usable, every field exact", async () => {
    const { report, observations } = await checkFixture("long-bom.csv");
    expect(report).toEqual({
      ok: true,
      rowNumbering: ROW_NUMBERING,
      encoding: { name: "utf-8", bom: true, invalidByteSequences: 0 },
      delimiter: ",",
      delimiterDetected: true,
      decimal: ".",
      layout: "long",
      mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
      header: ["region", "period", "indicator", "value"],
      rows: 8,
      blankRows: 0,
      observations: 8,
      granularity: "year",
      regions: noRegionProblems,
      periods: ["2019", "2020"],
      indicators: ["unemployment_rate"],
      duplicates: { count: 0, examples: [] },
      missing: { unemployment_rate: 0 },
      missingByPeriod: { unemployment_rate: {} },
      absent: { unemployment_rate: 0 },
      errors: [],
      errorCount: 0,
      warnings: [],
      warningCount: 0,
      rates: { declarations: [], problems: [], problemCount: 0 },
    });
    expect(observations[0]).toEqual({ region: "R01", periodKey: "2019", indicator: "unemployment_rate", value: 5.2, row: 1 });
    expect(observations.map((o) => o.value)).toEqual([5.2, 6.1, 4.8, 7.0, 5.9, 6.4, 5.1, 7.7]);
  });

  test("semicolon with decimal comma: the header is not guessable, an explicit mapping reads it", async () => {
    const guessed = await checkFixture("semicolon-decimal-comma.csv", { decimal: "," });
    expect(guessed.report.ok).toBe(false);
    expect(guessed.report.delimiter).toBe(";");
    expect(guessed.report.errors).toEqual([
      {
        row: 0,
        column: null,
        message: "could not map the header [Region, Jaar, Indicator, Waarde]: no period column found among [Region, Jaar, Indicator, Waarde]; name it 'period' or 'year' or choose it",
      },
    ]);

    const { report, observations } = await checkFixture("semicolon-decimal-comma.csv", {
      decimal: ",",
      mapping: { layout: "long", region: "Region", period: "Jaar", indicator: "Indicator", value: "Waarde" },
    });
    expect(report.ok).toBe(true);
    expect(report.delimiter).toBe(";");
    expect(report.rows).toBe(8);
    expect(report.indicators).toEqual(["median_income", "output_per_head"]);
    expect(report.missing).toEqual({ median_income: 1, output_per_head: 1 });
    expect(report.missingByPeriod).toEqual({ median_income: { "2021": 1 }, output_per_head: { "2021": 1 } });
    expect(observations.map((o) => o.value)).toEqual([31250.5, 29980, 33100.25, null, 41.5, null, 44, 39.75]);
    expect(report.warnings).toEqual([
      {
        row: 1,
        column: "Waarde",
        message: "3 value(s) such as '31.250,5' were read with '.' as a thousands separator; if '.' is the decimal separator, choose decimal '.'",
      },
    ]);
  });

  test("tab-separated; NA is missing, never zero", async () => {
    const { report, observations } = await checkFixture("tab.tsv");
    expect(report.ok).toBe(true);
    expect(report.delimiter).toBe("\t");
    expect(report.periods).toEqual(["2018"]);
    expect(report.missing).toEqual({ broadband_coverage: 1 });
    expect(report.missingByPeriod).toEqual({ broadband_coverage: { "2018": 1 } });
    expect(observations.find((o) => o.region === "R03")?.value).toBeNull();
    expect(observations.map((o) => o.value)).toEqual([88.5, 91, null, 79.25]);
  });

  test("wide layout: one observation per indicator cell, quoted thousands", async () => {
    const { report, observations } = await checkFixture("wide.csv");
    expect(report.ok).toBe(true);
    expect(report.layout).toBe("wide");
    expect(report.mapping).toEqual({ layout: "wide", region: "region", period: "year", indicators: ["unemployment_rate", "median_income", "broadband_coverage"] });
    expect(report.rows).toBe(8);
    expect(report.observations).toBe(24);
    expect(report.indicators).toEqual(["unemployment_rate", "median_income", "broadband_coverage"]);
    expect(report.missing).toEqual({ unemployment_rate: 0, median_income: 0, broadband_coverage: 2 });
    expect(report.missingByPeriod.broadband_coverage).toEqual({ "2019": 1, "2020": 1 });
    expect(observations.filter((o) => o.indicator === "median_income").map((o) => o.value)).toEqual([31250, 29980, 33100, 28400, 31900, 30410, 33800, 28950]);
    expect(report.warningCount).toBe(1);
    expect(report.warnings[0].column).toBe("median_income");
  });

  test("quarters in several spellings are ordered in time; a gap is a warning", async () => {
    const { report, observations } = await checkFixture("quarters.csv");
    expect(report.ok).toBe(true);
    expect(report.granularity).toBe("quarter");
    expect(report.periods).toEqual(["2019-Q1", "2019-Q3", "2019-Q4"]);
    expect(observations.map((o) => o.periodKey)).toEqual(["2019-Q3", "2019-Q3", "2019-Q4", "2019-Q4", "2019-Q1", "2019-Q1"]);
    expect(report.regions).toEqual({
      matched: 2,
      inPanel: 2,
      inPanelNotInBoundaries: [],
      inPanelNotInBoundariesCount: 0,
      inBoundariesNotInPanel: ["R03", "R04"],
      inBoundariesNotInPanelCount: 2,
    });
    expect(report.absent).toEqual({ unemployment_rate: 6 });
    expect(report.warnings).toEqual([
      { row: null, column: "region", message: "2 boundary region(s) have no rows in the panel (e.g. R03, R04); their values will be missing" },
      { row: null, column: "period", message: "periods jump from 2019-Q1 to 2019-Q3: 1 period(s) in between have no rows" },
    ]);
  });

  test("months in several spellings", async () => {
    const { report } = await checkFixture("months.csv");
    expect(report.ok).toBe(true);
    expect(report.granularity).toBe("month");
    expect(report.periods).toEqual(["2019-12", "2020-01", "2020-02"]);
    expect(report.indicators).toEqual(["claimant_rate"]);
  });

  test("duplicates are errors naming both rows, with examples and a count", async () => {
    const { report, observations } = await checkFixture("duplicates.csv");
    expect(report.ok).toBe(false);
    expect(report.duplicates).toEqual({
      count: 3,
      examples: [
        { region: "R01", period: "2019", indicator: "unemployment_rate", firstRow: 1, row: 3 },
        { region: "R02", period: "2019", indicator: "unemployment_rate", firstRow: 2, row: 6 },
        { region: "R01", period: "2019", indicator: "unemployment_rate", firstRow: 1, row: 7 },
      ],
    });
    expect(report.errors).toEqual([
      { row: 3, column: "indicator", message: "duplicate: region 'R01', period 2019, indicator 'unemployment_rate' was already given on row 1" },
      { row: 6, column: "indicator", message: "duplicate: region 'R02', period 2019, indicator 'unemployment_rate' was already given on row 2" },
      { row: 7, column: "indicator", message: "duplicate: region 'R01', period 2019, indicator 'unemployment_rate' was already given on row 1" },
    ]);
    expect(report.errorCount).toBe(3);
    // Only the first occurrence is emitted.
    expect(observations).toHaveLength(4);
  });

  test("unknown region codes are listed both ways, one error per code with a hint", async () => {
    const { report, observations } = await checkFixture("unknown-regions.csv");
    expect(report.ok).toBe(false);
    expect(report.regions).toEqual({
      matched: 2,
      inPanel: 5,
      inPanelNotInBoundaries: ["r03", "X99", "TOTAL"],
      inPanelNotInBoundariesCount: 3,
      inBoundariesNotInPanel: ["R03", "R04"],
      inBoundariesNotInPanelCount: 2,
    });
    expect(report.errors).toEqual([
      { row: 3, column: "region", message: "region code 'r03' is not among the boundary ids (did you mean 'R03'?); 1 row(s) use it" },
      { row: 4, column: "region", message: "region code 'X99' is not among the boundary ids; 2 row(s) use it" },
      { row: 6, column: "region", message: "region code 'TOTAL' is not among the boundary ids; 1 row(s) use it" },
    ]);
    expect(observations.map((o) => o.region)).toEqual(["R01", "R02"]);
  });

  test("unknown region codes can be dropped with a warning instead", async () => {
    const { report } = await checkFixture("unknown-regions.csv", { unknownRegions: "drop" });
    expect(report.ok).toBe(true);
    expect(report.errorCount).toBe(0);
    expect(report.warnings.map((w) => w.message)).toContain("region code 'X99' is not among the boundary ids; 2 row(s) use it; they were dropped");
  });

  test("bad numbers are errors naming row and column; empty and n/a are missing", async () => {
    const { report, observations } = await checkFixture("bad-numbers.csv");
    expect(report.ok).toBe(false);
    expect(report.errors).toEqual([
      { row: 2, column: "value", message: "'6,1' is not a number with '.' as the decimal separator; it looks like ',' is the decimal separator (choose decimal ',')" },
      { row: 3, column: "value", message: "'12%' is not a number: remove the % sign (give 12.5 for 12.5 %)" },
      { row: 4, column: "value", message: "'abc' is not a number (decimal separator '.'; missing values may be empty, NA, '..' or '-')" },
      { row: 7, column: "value", message: "'4 EUR' is not a number: remove the unit or currency from the value" },
    ]);
    expect(report.errorCount).toBe(4);
    expect(report.missing).toEqual({ unemployment_rate: 2 });
    expect(report.missingByPeriod).toEqual({ unemployment_rate: { "2020": 2 } });
    expect(observations.map((o) => [o.row, o.value])).toEqual([
      [1, 5.2],
      [5, null],
      [6, null],
      [8, -0.5],
    ]);
  });

  test("mixed period granularities are errors; the first granularity wins", async () => {
    const { report } = await checkFixture("mixed-periods.csv");
    expect(report.ok).toBe(false);
    expect(report.granularity).toBe("year");
    expect(report.periods).toEqual(["2019", "2020"]);
    expect(report.errors).toEqual([
      { row: 3, column: "period", message: "period '2019-Q3' is a quarter but this panel's periods are years (first: '2019' on row 1); a panel holds one granularity" },
      { row: 4, column: "period", message: "period '2019-07' is a month but this panel's periods are years (first: '2019' on row 1); a panel holds one granularity" },
      { row: 5, column: "period", message: "period '19' is not a year (2019), a quarter (2019-Q3) or a month (2019-07)" },
    ]);
  });

  test("an empty file", async () => {
    const { report } = await checkFixture("empty.csv");
    expect(report.ok).toBe(false);
    expect(report.rows).toBe(0);
    expect(report.delimiter).toBeNull();
    expect(report.errors).toEqual([{ row: null, column: null, message: "the file is empty" }]);
    expect(report.errorCount).toBe(1);
  });

  test("a header without data rows", async () => {
    const { report } = await checkFixture("header-only.csv");
    expect(report.ok).toBe(false);
    expect(report.rows).toBe(0);
    expect(report.header).toEqual(["region", "period", "indicator", "value"]);
    expect(report.errors).toEqual([{ row: null, column: null, message: "the file has a header but no data rows" }]);
  });

  test("invalid UTF-8 names the byte, its offset and the line", async () => {
    const { report } = await checkFixture("invalid-utf8.csv");
    expect(report.ok).toBe(false);
    expect(report.encoding).toEqual({ name: "utf-8", bom: false, invalidByteSequences: 1 });
    expect(report.errors[0]).toEqual({
      row: 3,
      column: null,
      message: "invalid UTF-8: byte 0xE9 at byte offset 99 (file line 4); the file is probably Windows-1252 or Latin-1 — save it as UTF-8 (CSV UTF-8)",
    });
  });

  test("rows with too few or too many fields are skipped with an error", async () => {
    const { report } = await checkFixture("ragged.csv");
    expect(report.ok).toBe(false);
    expect(report.errors).toEqual([
      { row: 3, column: null, message: "the row has 3 field(s) but the header has 4; it was skipped" },
      { row: 4, column: null, message: "the row has 5 field(s) but the header has 4; it was skipped" },
    ]);
  });

  test("a required column missing from the header is named", async () => {
    const { report } = await checkFixture("long-bom.csv", { mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "Value" } });
    expect(report.ok).toBe(false);
    expect(report.errors).toEqual([
      { row: 0, column: "Value", message: "required value column 'Value' is not in the header [region, period, indicator, value] (did you mean 'value'?)" },
    ]);
  });

  test("without boundary ids, regions are not matched", async () => {
    const { report } = await checkFixture("long-bom.csv", {}, null);
    expect(report.ok).toBe(true);
    expect(report.regions.matched).toBeNull();
    expect(report.regions.inPanel).toBe(4);
  });
});

describe("streaming", () => {
  function chunked(text: string, size: number): Readable {
    const bytes = Buffer.from(text, "utf8");
    const chunks: Buffer[] = [];
    for (let i = 0; i < bytes.length; i += size) chunks.push(bytes.subarray(i, i + size));
    return Readable.from(chunks);
  }

  test("chunk boundaries inside multi-byte characters and rows change nothing", async () => {
    const lines = ["region,period,indicator,value"];
    for (let r = 0; r < 300; r += 1) lines.push(`Ré-${r},2020,taux_été,${r}.5`);
    const text = `${lines.join("\n")}\n`;
    const whole = await validatePanel({ source: chunked(text, 1 << 20) });
    const tiny = await validatePanel({ source: chunked(text, 7) });
    expect(tiny).toEqual(whole);
    expect(whole.ok).toBe(true);
    expect(whole.rows).toBe(300);
    expect(whole.encoding.invalidByteSequences).toBe(0);
  });

  test("the generator yields batches and returns the report; errors are capped with a full count", async () => {
    const lines = ["region,period,indicator,value"];
    for (let r = 0; r < 10_000; r += 1) lines.push(`R${r},2020,u,${r % 2 === 0 ? "bad" : "1"}`);
    const iterator = validatePanelStream({ source: chunked(lines.join("\n"), 4096), options: { maxErrors: 10 } });
    let emitted = 0;
    let step = await iterator.next();
    while (!step.done) {
      emitted += step.value.length;
      step = await iterator.next();
    }
    const report = step.value;
    expect(emitted).toBe(5000);
    expect(report.observations).toBe(5000);
    expect(report.errors).toHaveLength(10);
    expect(report.errorCount).toBe(5000);
    expect(report.errors[0]).toEqual({ row: 1, column: "value", message: "'bad' is not a number (decimal separator '.'; missing values may be empty, NA, '..' or '-')" });
  });

  test("a slow consumer applies back-pressure without losing rows", async () => {
    const lines = ["region,period,indicator,value"];
    for (let r = 0; r < 40_000; r += 1) lines.push(`R${r % 400},${2000 + Math.floor(r / 400) % 25},i${Math.floor(r / 10_000)},${r}`);
    let seen = 0;
    const report = await validatePanel({
      source: chunked(lines.join("\n"), 16 * 1024),
      onObservations: async (batch) => {
        seen += batch.length;
        await new Promise((resolve) => setImmediate(resolve));
      },
    });
    expect(report.errorCount).toBe(0);
    expect(seen).toBe(40_000);
    expect(report.indicators).toEqual(["i0", "i1", "i2", "i3"]);
  });
});

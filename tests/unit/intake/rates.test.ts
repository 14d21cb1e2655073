/**
 * Rates in intake: the `# rate:` line of a panel file, the checks of a
 * version's rate cells (named by region, period and indicator, never dropping
 * a row) and the rate values derived when a file has events and population only.
 */
import { Readable } from "node:stream";
import { validatePanel, readPanelHeader, type Observation, type PanelOptionsInput } from "@/lib/intake";
import { parseComment, rateAgrees, rateSpecSchema, splitLeadingComments, declarationProblem, multiplierLabel } from "@/lib/intake/rates";

const ids = ["R1", "R2", "R3", "R4", "R5"];

async function check(csv: string, options: PanelOptionsInput = {}, boundaryIds: string[] = ids) {
  const observations: Observation[] = [];
  const report = await validatePanel({
    source: Readable.from([Buffer.from(csv)]),
    boundaryIds,
    options,
    onObservations: (batch) => {
      observations.push(...batch);
    },
  });
  return { report, observations };
}

describe("the # rate: line", () => {
  test("reads RATE = EVENTS / POPULATION * MULTIPLIER, with × and grouped digits", () => {
    expect(parseComment("rate: closures_per_1000 = closures / workforce * 1000")).toEqual({
      kind: "rate",
      declaration: { indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000 },
    });
    expect(parseComment("Rate:r=e/p×100,000")).toEqual({ kind: "rate", declaration: { indicator: "r", events: "e", population: "p", multiplier: 100000 } });
    expect(parseComment("rate: share = e / p * 1")).toEqual({ kind: "rate", declaration: { indicator: "share", events: "e", population: "p", multiplier: 1 } });
  });

  test("other comments are not declarations; a rate line that cannot be read says why", () => {
    expect(parseComment("exported 2024-05-01 by the statistics office")).toEqual({ kind: "other" });
    expect(parseComment("rate: r = e / p * 50")).toEqual({ kind: "invalid", message: "the multiplier '50' must be one of 1, 100, 1000, 10000, 100000" });
    expect(parseComment("rate: r = e / p")).toEqual({ kind: "invalid", message: "'rate: r = e / p' does not read as # rate: RATE = EVENTS / POPULATION * MULTIPLIER" });
    expect(parseComment("rate: r = r / p * 100")).toEqual({ kind: "invalid", message: "a rate cannot be its own events or population ('r')" });
    expect(parseComment("rate: r = p / p * 100")).toEqual({ kind: "invalid", message: "the events and the population must be two different indicators" });
  });

  test("comment lines at the top come off the text, undoing spreadsheet quoting and padding; later # lines stay", () => {
    const text = '# rate: r = e / p * 1000,,,\r\n"# rate: q = e, or / p * 100";;\n\n# note\nregion,period\n# not a comment here\n';
    const { comments, rest } = splitLeadingComments(text);
    expect(comments).toEqual([
      { line: 1, text: "rate: r = e / p * 1000" },
      { line: 2, text: "rate: q = e, or / p * 100" },
      { line: 4, text: "note" },
    ]);
    expect(rest).toBe("region,period\n# not a comment here\n");
    // Without comments nothing is taken, not even leading blank lines.
    expect(splitLeadingComments("\nregion,period\n")).toEqual({ comments: [], rest: "\nregion,period\n" });
    // A last line without a line break is a comment only when the text is the whole file.
    expect(splitLeadingComments("# rate: r = e / p * 1", false).comments).toEqual([]);
    expect(splitLeadingComments("# rate: r = e / p * 1", true).comments).toEqual([{ line: 1, text: "rate: r = e / p * 1" }]);
  });

  test("a declaration must not chain rates", () => {
    const base = { indicator: "r", events: "e", population: "p", multiplier: 1000 as const };
    expect(declarationProblem({ ...base, indicator: "s", events: "r" }, [base])).toBe("'r' is itself a rate; a rate's events and population are counts");
    expect(declarationProblem({ ...base, indicator: "e", events: "x", population: "y" }, [base])).toBe("'e' is the events or population of the rate 'r'; it cannot be a rate too");
    expect(declarationProblem({ ...base, indicator: "s" }, [base])).toBeNull();
  });

  test("the steward's declaration is checked by zod: two different codes, a known multiplier", () => {
    expect(rateSpecSchema.safeParse({ events: "e", population: "p", multiplier: 1000 }).success).toBe(true);
    const same = rateSpecSchema.safeParse({ events: "e", population: "e", multiplier: 1000 });
    expect(same.success).toBe(false);
    expect(same.error?.issues[0]?.message).toBe("the events and the population must be two different indicators");
    const odd = rateSpecSchema.safeParse({ events: "e", population: "p", multiplier: 250 });
    expect(odd.error?.issues[0]?.message).toMatch(/^the multiplier must be one of 1, 100, 1000, 10000, 100000/);
    expect([1, 100, 1000, 100000].map(multiplierLabel)).toEqual(["proportion", "per cent", "per 1,000", "per 100,000"]);
  });
});

describe("rateAgrees: a rate in a file agrees at the precision it is given", () => {
  test.each([
    [4.3, 3 / 700 * 1000, true], // 4.2857… shown with one decimal
    [4.2, 3 / 700 * 1000, false],
    [4.29, 3 / 700 * 1000, true],
    [4.28, 3 / 700 * 1000, false],
    [4, 3 / 700 * 1000, true], // a whole number: half a unit either side
    [5, 5, true],
    [0.1 + 0.2, 0.3, true], // floating-point slack
    [1.5e-7, 1.5e-7, true],
    [1.6e-7, 1.5e-7, false],
  ])("given %p, expected %p → %p", (given, expected, agrees) => {
    expect(rateAgrees(given, expected)).toBe(agrees);
  });
});

describe("validating a panel with a declared rate", () => {
  const declared = [
    "# rate: closures_per_1000 = closures / workforce * 1000",
    "region,period,indicator,value",
    "R1,2020,closures,5",
    "R1,2020,workforce,1000",
    "R2,2020,closures,12",
    "R2,2020,workforce,10",
    "R3,2020,closures,3",
    "R3,2020,workforce,0",
    "R4,2020,closures,2",
    "R5,2020,closures,-1",
    "R5,2020,workforce,100",
    "R1,2021,closures,",
    "R1,2021,workforce,900",
    "R2,2021,closures,0",
    "R2,2021,workforce,40",
    "",
  ].join("\n");

  test("each problem is named by region, period and indicator; the version stays usable and keeps every row", async () => {
    const { report, observations } = await check(declared);
    expect(report.ok).toBe(true);
    expect(report.errors).toEqual([]);
    // The comment line is not a row: row 1 is still the first line after the header.
    expect(report.rows).toBe(13);
    expect(report.rates?.problems).toEqual([
      {
        kind: "events-exceed-population",
        region: "R2",
        period: "2020",
        indicator: "closures_per_1000",
        row: 3,
        message: "region 'R2', period 2020, indicator 'closures_per_1000': closures (12) exceeds workforce (10); no rate derived",
      },
      { kind: "zero-population", region: "R3", period: "2020", indicator: "closures_per_1000", row: 6, message: "region 'R3', period 2020, indicator 'closures_per_1000': closures is 3 but workforce is 0; no rate derived" },
      {
        kind: "missing-population",
        region: "R4",
        period: "2020",
        indicator: "closures_per_1000",
        row: 7,
        message: "region 'R4', period 2020, indicator 'closures_per_1000': closures is 2 but workforce is not in the file; no rate derived",
      },
      { kind: "negative-events", region: "R5", period: "2020", indicator: "closures_per_1000", row: 8, message: "region 'R5', period 2020, indicator 'closures_per_1000': closures is negative (-1); no rate derived" },
    ]);
    expect(report.rates?.problemCount).toBe(4);
    expect(report.warnings.map((w) => w.message)).toEqual([
      "4 region-period(s) of the rate 'closures_per_1000' (closures_per_1000 = closures / workforce × 1000 (per 1,000)) have a problem; each is listed under Rates by region and period, and no row was dropped",
    ]);
    // Every row of the file is kept: 13 given cells, plus the derived rate cells.
    const given = observations.filter((o) => o.indicator !== "closures_per_1000");
    expect(given).toHaveLength(13);
    expect(report.rates?.declarations).toEqual([
      { indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000, source: "file", derived: true, values: 2, missing: 5, problems: 4 },
    ]);
  });

  test("the rate is derived where events and population allow, missing (never zero) elsewhere, and listed as an indicator", async () => {
    const { report, observations } = await check(declared);
    const derived = observations.filter((o) => o.indicator === "closures_per_1000").map((o) => [o.region, o.periodKey, o.value]);
    expect(derived).toEqual([
      ["R1", "2020", (5 / 1000) * 1000],
      ["R2", "2020", null],
      ["R3", "2020", null],
      ["R4", "2020", null],
      ["R5", "2020", null],
      ["R1", "2021", null], // closures missing in 2021
      ["R2", "2021", 0],
    ]);
    expect(report.indicators).toEqual(["closures", "workforce", "closures_per_1000"]);
    expect(report.observations).toBe(observations.length);
    expect(report.missing.closures_per_1000).toBe(5);
    expect(report.missingByPeriod.closures_per_1000).toEqual({ "2020": 4, "2021": 1 });
    // Five regions × two periods, seven derived cells.
    expect(report.absent.closures_per_1000).toBe(3);
  });

  test("a rate given in the file is compared with events / population × multiplier, not derived (workspace declaration, wide layout)", async () => {
    const csv = ["region,year,closures,workforce,closures_per_1000", "R1,2020,5,1000,5.0", "R2,2020,3,700,4.3", "R3,2020,3,700,4.2", "R4,2020,3,,4.2", "R5,2020,1,2,"].join("\n");
    const rates = [{ indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000 }];
    const { report, observations } = await check(csv, { rates });
    expect(report.ok).toBe(true);
    expect(report.rates?.declarations).toEqual([{ ...rates[0], source: "workspace", derived: false, values: 3, missing: 0, problems: 2 }]);
    expect(report.rates?.problems.map((p) => [p.kind, p.region, p.row, p.message])).toEqual([
      ["rate-disagrees", "R3", 3, "region 'R3', period 2020, indicator 'closures_per_1000': the file gives 4.2 but closures / workforce × 1000 is 4.2857143"],
      ["missing-population", "R4", 4, "region 'R4', period 2020, indicator 'closures_per_1000': closures is 3 but workforce is missing"],
    ]);
    // Nothing derived: the file's own rate cells are what is stored.
    expect(observations.filter((o) => o.indicator === "closures_per_1000").map((o) => o.value)).toEqual([5, 4.3, 4.2, 4.2, null]);
  });

  test("a workspace declaration whose events or population the file lacks is not applied", async () => {
    const rates = [{ indicator: "r", events: "closures", population: "workforce", multiplier: 1000 }];
    const { report, observations } = await check("region,period,indicator,value\nR1,2020,closures,5\n", { rates });
    expect(report.ok).toBe(true);
    expect(report.rates).toEqual({ declarations: [], problems: [], problemCount: 0 });
    expect(observations).toHaveLength(1);
  });

  test("the file's declaration wins over the workspace's for this version, with a warning", async () => {
    const rates = [{ indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 100 }];
    const { report } = await check(declared, { rates });
    expect(report.rates?.declarations.map((d) => [d.source, d.multiplier])).toEqual([["file", 1000]]);
    expect(report.warnings[0]?.message).toBe(
      "the file declares closures_per_1000 = closures / workforce × 1000 (per 1,000) but the workspace's indicator record says closures_per_1000 = closures / workforce × 100 (per cent); this version is checked with the file's declaration",
    );
  });

  test("a declaration naming an indicator the file does not have, or a rate line that cannot be read, is an error naming the file line", async () => {
    const missing = await check("# rate: r = closures / people * 1000\nregion,period,indicator,value\nR1,2020,closures,5\n");
    expect(missing.report.ok).toBe(false);
    expect(missing.report.errors).toEqual([{ row: null, column: null, message: "the file declares the rate r = closures / people × 1000 (per 1,000) but has no indicator 'people'" }]);

    const unreadable = await check("# a note\n# rate: r = closures / people * 7\n# rate: s = a / b * 1\n# rate: s = a / c * 1\nregion,period,indicator,value\nR1,2020,a,5\nR1,2020,b,6\n", {}, ["R1"]);
    expect(unreadable.report.errors.map((e) => e.message)).toEqual([
      "file line 2: the multiplier '7' must be one of 1, 100, 1000, 10000, 100000",
      "file line 4: the rate 's' is declared twice",
    ]);
    expect(unreadable.report.warnings.map((w) => w.message)).toEqual(["file line 1: the comment '# a note' above the header was not read (only '# rate: …' lines are)"]);
  });

  test("a file of comment lines only has no header", async () => {
    const { report } = await check("# rate: r = e / p * 1000\n\n");
    expect(report.ok).toBe(false);
    expect(report.errors[0]?.message).toBe("the file holds only comment lines (#) and no header");
  });

  test("the preview reads past the comment lines and lists the declared rates", async () => {
    const preview = await readPanelHeader(Readable.from([Buffer.from(declared)]));
    expect(preview.header).toEqual(["region", "period", "indicator", "value"]);
    expect(preview.delimiter.delimiter).toBe(",");
    expect(preview.delimiter.confident).toBe(true);
    expect(preview.rates).toEqual([{ indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000 }]);
  });
});

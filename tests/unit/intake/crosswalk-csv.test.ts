import { CROSSWALK_SHARE_TOLERANCE, validateCrosswalkCsv, ROW_NUMBERING } from "@/lib/intake";

const codes = { fromIds: ["D1", "D2", "D3"], toIds: ["N1", "N2"] };

describe("validateCrosswalkCsv", () => {
  test("a clean file: links in file order, no problems", () => {
    const report = validateCrosswalkCsv("\uFEFFFrom,To,Share\nD1,N1,1\nD2,N1,0.4\nD2,N2,0.6\n\nD3,N2,1\n", codes);
    expect(report).toMatchObject({ ok: true, rowNumbering: ROW_NUMBERING, rows: 4, sources: 3, targets: 2, errors: [], errorCount: 0, warnings: [], warningCount: 0, tolerance: CROSSWALK_SHARE_TOLERANCE });
    expect(report.links).toEqual([
      { from: "D1", to: "N1", share: 1, row: 1 },
      { from: "D2", to: "N1", share: 0.4, row: 2 },
      { from: "D2", to: "N2", share: 0.6, row: 3 },
      // The blank line is counted: row 5, file line 6.
      { from: "D3", to: "N2", share: 1, row: 5 },
    ]);
  });

  test("unknown codes, bad shares and repeated pairs: each message names the line and the code", () => {
    const text = ["from,to,share", "D1,N1,1", "X9,N1,1", "D2,N7,0.5", "D2,N1,abc", "D3,N1,-0.2", "D3,N2,1.5", "D1,N1,1", "D2,N2,0"].join("\n");
    const report = validateCrosswalkCsv(text, codes);
    expect(report.ok).toBe(false);
    expect(report.errors).toEqual([
      { code: "unknown-from", row: 2, column: "from", message: "line 3: source code 'X9' is not a region of the source boundaries" },
      { code: "unknown-to", row: 3, column: "to", message: "line 4: target code 'N7' is not a region of the target boundaries (source 'D2')" },
      { code: "bad-share", row: 4, column: "share", message: "line 5: share 'abc' of 'D2' → 'N1' is not a number" },
      { code: "bad-share", row: 5, column: "share", message: "line 6: share -0.2 of 'D3' → 'N1' is negative" },
      { code: "bad-share", row: 6, column: "share", message: "line 7: share 1.5 of 'D3' → 'N2' is greater than 1 (beyond the tolerance 0.0001)" },
      { code: "duplicate-pair", row: 7, column: null, message: "line 8: the pair 'D1' → 'N1' repeats line 2" },
      { code: "bad-share", row: 8, column: "share", message: "line 9: share 0 of 'D2' → 'N2' is zero (leave the row out)" },
    ]);
    expect(report.errorCount).toBe(7);
  });

  test("shares of a source must sum to 1 within the tolerance", () => {
    const text = "from,to,share\nD1,N1,0.5\nD1,N2,0.4\nD2,N1,0.33333\nD2,N2,0.66666\nD3,N2,1\n";
    const report = validateCrosswalkCsv(text, codes);
    // D2 sums to 0.99999: inside the default tolerance of 1e-4.
    expect(report.errors).toEqual([{ code: "shares-sum", row: 1, column: "share", message: "source 'D1' (lines 2, 3): shares sum to 0.9, not 1 (tolerance 0.0001)" }]);
    const strict = validateCrosswalkCsv(text, { ...codes, tolerance: 1e-6 });
    expect(strict.errors.map((e) => e.message)).toEqual([
      "source 'D1' (lines 2, 3): shares sum to 0.9, not 1 (tolerance 0.000001)",
      "source 'D2' (lines 4, 5): shares sum to 0.99999, not 1 (tolerance 0.000001)",
    ]);
  });

  test("a share just above 1 from rounding is accepted within the tolerance", () => {
    expect(validateCrosswalkCsv("from,to,share\nD1,N1,1.0000000000000002\n").ok).toBe(true);
    expect(validateCrosswalkCsv("from,to,share\nD1,N1,1.001\n").errors[0].message).toBe("line 2: share 1.001 of 'D1' → 'N1' is greater than 1 (beyond the tolerance 0.0001)");
  });

  test("codes without a row are warnings; a header without the three columns is an error on line 1", () => {
    const report = validateCrosswalkCsv("from,to,share\nD1,N1,1\n", codes);
    expect(report.ok).toBe(true);
    expect(report.warnings).toEqual([
      { code: "unmatched-from", row: null, column: "from", message: "2 source code(s) have no row, so their values reach no target: 'D2', 'D3'" },
      { code: "uncovered-to", row: null, column: "to", message: "1 target code(s) have no row, so nothing maps to them: 'N2'" },
    ]);
    expect(report.unmatchedFrom).toEqual(["D2", "D3"]);
    expect(report.uncoveredTo).toEqual(["N2"]);
    const bad = validateCrosswalkCsv("old,new,weight\nD1,N1,1\n", codes);
    expect(bad.ok).toBe(false);
    expect(bad.errors).toEqual([{ code: "header", row: 0, column: null, message: "line 1: the header must name the columns from, to and share; missing: from, to, share (header: old,new,weight)" }]);
  });

  test("a semicolon- or tab-separated file reads like a comma-separated one", () => {
    for (const sep of [";", "\t"]) {
      const report = validateCrosswalkCsv(["share", "to", "from"].join(sep) + "\n" + ["0.25", "N1", "D1"].join(sep) + "\n" + ["0.75", "N2", "D1"].join(sep) + "\n");
      expect(report.errors).toEqual([]);
      expect(report.links.map((l) => [l.from, l.to, l.share])).toEqual([
        ["D1", "N1", 0.25],
        ["D1", "N2", 0.75],
      ]);
    }
  });

  test("without code lists, codes are not checked but shares still are", () => {
    const report = validateCrosswalkCsv("from,to,share\nanything,else,0.5\n");
    expect(report.errors.map((e) => e.message)).toEqual(["source 'anything' (line 2): shares sum to 0.5, not 1 (tolerance 0.0001)"]);
  });
});

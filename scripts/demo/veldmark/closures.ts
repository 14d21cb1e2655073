/**
 * Invented business closures in Veldmark, a count over a population: the
 * demo's rate. Each district has a working-age population (residents aged
 * 15–64) and a number of businesses closed in the year, drawn as Poisson
 * counts around a closure rate of about 4 per 1,000 that rises in the
 * north-east in the years after the invented 2013 shipyard closure.
 *
 * The island districts are tiny (a few hundred working-age residents), so one
 * or two closures more or less swing their raw rate from 0 to well above any
 * mainland district: the small-bases case that raw rates overstate.
 *
 * Drawn from a random stream of its own, so the seven older indicators keep
 * every value they had.
 */
import type { SeededRandom } from "./random";
import type { SpatialContext } from "./indicators";
import { YEARS } from "./indicators";

const SOURCE = "Invented demo data (Veldmark)";

export const CLOSURES = "business_closures";
export const WORKING_AGE = "working_age_population";
export const CLOSURE_RATE = "business_closures_per_1000";

/** The rate's declaration, as the panel file's `# rate:` line states it. */
export const CLOSURE_RATE_DECLARATION = { events: CLOSURES, population: WORKING_AGE, multiplier: 1000 } as const;

export interface CountMeta {
  code: string;
  label: string;
  unit: string;
  description: string;
  source: string;
  higherIsBetter: boolean | null;
  rate?: { events: string; population: string; multiplier: number };
}

export const CLOSURE_INDICATORS: CountMeta[] = [
  {
    code: CLOSURES,
    label: "Business closures",
    unit: "enterprises",
    description: "Enterprises that closed in the year (a count). Read it as a rate: see business closures per 1,000 working-age residents.",
    source: SOURCE,
    higherIsBetter: false,
  },
  {
    code: WORKING_AGE,
    label: "Working-age population",
    unit: "residents aged 15–64",
    description: "Residents aged 15–64 at the middle of the year; the island districts have only a few hundred.",
    source: SOURCE,
    higherIsBetter: null,
  },
  {
    code: CLOSURE_RATE,
    label: "Business closures per 1,000",
    unit: "per 1,000 residents aged 15–64",
    description:
      "Business closures over the working-age population, per 1,000; derived at intake from the two counts. Rises in the north-east after the invented 2013 shipyard closure. The tiny island districts swing from 0 to extreme values on one or two closures.",
    source: SOURCE,
    higherIsBetter: false,
    rate: { ...CLOSURE_RATE_DECLARATION },
  },
];

/** A Poisson draw: multiplication of uniforms for small means, a rounded normal for large ones. */
function poisson(random: SeededRandom, mean: number): number {
  if (mean < 30) {
    const limit = Math.exp(-mean);
    let k = 0;
    let product = random.uniform();
    while (product > limit) {
      k += 1;
      product *= random.uniform();
    }
    return k;
  }
  return Math.max(0, Math.round(mean + Math.sqrt(mean) * random.normal()));
}

/** Working-age population and business closures per district and year (integers). */
export function generateClosures(
  random: SeededRandom,
  context: SpatialContext,
  island: readonly boolean[],
): { population: Record<number, number[]>; closures: Record<number, number[]> } {
  const n = context.neighbours.length;
  // Base populations: a few thousand to over a hundred thousand on the mainland, larger near the capital; a few hundred on the islands.
  const base = Array.from({ length: n }, (_, i) =>
    island[i] ? random.between(180, 650) : Math.exp(random.between(Math.log(6_000), Math.log(40_000))) * (1 + 3 * context.capital[i]),
  );
  const growth = Array.from({ length: n }, (_, i) => 0.004 + 0.008 * context.capital[i] + 0.003 * random.normal());
  const population: Record<number, number[]> = {};
  const closures: Record<number, number[]> = {};
  for (const year of YEARS) {
    const t = year - YEARS[0];
    population[year] = base.map((b, i) => {
      // The north-east loses working-age residents after the 2013 closure.
      const exodus = year >= 2014 ? 1 - 0.02 * context.shipyard[i] * Math.min(year - 2013, 6) : 1;
      return Math.max(50, Math.round(b * (1 + growth[i]) ** t * exodus));
    });
    closures[year] = population[year].map((p, i) => {
      const shock = year >= 2013 && year <= 2017 ? 5 * context.shipyard[i] * (1 - (year - 2013) / 5) : 0;
      const ratePer1000 = Math.max(0.5, 4 + shock + 0.4 * random.normal());
      return poisson(random, (p * ratePer1000) / 1000);
    });
  }
  return { population, closures };
}

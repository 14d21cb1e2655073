/**
 * An invented covariate for Veldmark: the share of employment in heavy
 * industry per district and year. High along the north-east coast around the
 * invented shipyard (yards, suppliers, steel), lower around the capital, with
 * spatially smooth local variation (a spatial autoregressive draw, ρ = 0.5,
 * persistent in time). The 2013 closure takes about a third of the coast's
 * heavy-industry share away, but the north-east stays the most industrial
 * part of the country.
 *
 * Why it is here: unemployment's clustering after 2013 comes largely from the
 * shipyard shock, which this share tracks, so a run that controls for it shows
 * Moran's I of the residuals well below Moran's I of unemployment itself in
 * those years (and little difference before 2013).
 *
 * Drawn from a random stream of its own, so every other indicator keeps its
 * values.
 */
import type { SeededRandom } from "./random";
import { solveSar, type SpatialContext, YEARS } from "./indicators";

export const HEAVY_INDUSTRY = "heavy_industry_share";

export const HEAVY_INDUSTRY_META = {
  code: HEAVY_INDUSTRY,
  label: "Heavy industry employment share",
  unit: "% of employment",
  description:
    "Jobs in shipbuilding, metals and heavy engineering as a share of all jobs in the district. Highest on the north-east coast around the invented shipyard; falls there after its 2013 closure but stays above the rest of the country.",
  source: "Invented demo data (Veldmark)",
  higherIsBetter: null,
};

/** value[year][district], one decimal, never missing. */
export function generateHeavyIndustry(random: SeededRandom, context: SpatialContext): Record<number, number[]> {
  const n = context.neighbours.length;
  const phi = 0.9;
  let innovation = Array.from({ length: n }, () => random.normal());
  const out: Record<number, number[]> = {};
  for (const year of YEARS) {
    if (year > YEARS[0]) innovation = innovation.map((e) => phi * e + Math.sqrt(1 - phi * phi) * random.normal());
    const local = solveSar(context.neighbours, 0.5, innovation);
    const coast = year < 2013 ? 24 : 16;
    out[year] = local.map((e, i) => {
      const share = 7 + coast * context.shipyard[i] - 3 * context.capital[i] + 1.2 * e;
      return Math.round(Math.min(60, Math.max(0.5, share)) * 10) / 10;
    });
  }
  return out;
}

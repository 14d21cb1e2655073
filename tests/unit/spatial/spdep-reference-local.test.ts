/**
 * Outside check of lib/spatial against R's spdep (issue 3): local statistics.
 *
 * Every expected number is read from tests/fixtures/spdep/nc-local.json,
 * written by scripts/reference/spdep-reference.R. Weights are built from
 * spdep's own neighbour lists (nc-neighbours.json).
 *
 * Conventions compared (differences are stated, not hidden):
 * - localmoran(): mlvar = TRUE (m2 = Σz²/n); conditional = TRUE is spdep's
 *   default (meta.defaults.localmoran_conditional) and gives the conditional
 *   randomisation moments; conditional = FALSE gives total randomisation. Both
 *   are compared, with the engine's `moments: "conditional" | "total"`.
 * - localG(): values are z-scores; G, E, V and p come from return_internals.
 *   Gi* uses include.self(nb); with style W the self link is inside the row
 *   standardisation (w_ij = 1/(k_i + 1) including j = i).
 * - localmoran_perm() in this spdep draws the k_i neighbour values WITH
 *   replacement; Tessera draws without replacement (docs/statistics.md). The engine's
 *   permutation variance is therefore compared with the exact conditional
 *   (without-replacement) variance from localmoran(), and the with-replacement
 *   inflation of spdep's draws, (n − 2)/(n − 1 − k_i), is checked as a fact of
 *   the fixture. Pseudo p is compared within sampling tolerance plus an
 *   allowance for that inflation.
 */
import {
  binaryWeights,
  createRandomSource,
  localGetisOrd,
  localMoran,
  normalUpperTail,
  rowStandardisedWeights,
  weightsFromNeighbourLists,
  type LocalMoments,
  type SpatialWeights,
} from "@/lib/spatial";
import {
  Comparison,
  VARIABLE_KEYS,
  WEIGHTS_KEYS,
  indexLists,
  loadData,
  loadLocal,
  loadNeighbours,
  type LocalGKey,
  type NeighbourKey,
  type WeightsKey,
} from "../../fixtures/spdep/fixtures";

const data = loadData();
const nbFixture = loadNeighbours();
const localFixture = loadLocal();
const ids = nbFixture.ids;
const idStrings = ids.map(String);
const n = ids.length;
const SPDEP = `spdep ${localFixture.meta.spdep}`;
const SEED = localFixture.meta.seed;

function spdepBinary(nbKey: NeighbourKey): SpatialWeights {
  const lists = nbKey === "k4" ? nbFixture.k4.variants[nbFixture.k4.statsVariant].neighbours : nbFixture[nbKey].neighbours;
  return binaryWeights(
    weightsFromNeighbourLists(idStrings, indexLists(ids, lists), { rule: nbKey === "k4" ? "knn:4" : nbKey }),
  );
}

function spdepWeights(key: WeightsKey): SpatialWeights {
  const [nbKey, style] = key.split("_") as [NeighbourKey, "W" | "B"];
  const binary = spdepBinary(nbKey);
  return style === "W" ? rowStandardisedWeights(binary) : binary;
}

const QUADRANT: Readonly<Record<string, string>> = {
  "High-High": "HH",
  "Low-Low": "LL",
  "High-Low": "HL",
  "Low-High": "LH",
};

describe(`local Moran vs ${SPDEP} localmoran()`, () => {
  test("spdep's default is the conditional variant, and so is the engine's", () => {
    // source: formals(spdep::localmoran), fixture nc-local.json meta.defaults
    expect(localFixture.meta.defaults.localmoran_conditional).toBe("TRUE");
    expect(localFixture.meta.defaults.localmoran_mlvar).toBe("TRUE");
    const r = localMoran(data.variables.sid74.x, spdepWeights("queen_W"));
    expect(r.moments).toBe("conditional");
  });

  for (const key of WEIGHTS_KEYS) {
    for (const moments of ["conditional", "total"] as const satisfies readonly LocalMoments[]) {
      test(`${key}, ${moments} randomisation: Ii, E[Ii], Var[Ii], Z, p, quadrant for every county`, () => {
        const weights = spdepWeights(key);
        const c = new Comparison();
        for (const v of VARIABLE_KEYS) {
          // source: spdep localmoran(x, listw, conditional = ${moments === "conditional"}, alternative = "two.sided"/"greater"),
          // fixture tests/fixtures/spdep/nc-local.json localmoran.<key>.variables.<v>.localmoran.<moments>
          const f = localFixture.localmoran[key].variables[v].localmoran[moments];
          const r = localMoran(data.variables[v].x, weights, { moments, permutations: 0 });
          expect(r.regions).toHaveLength(n);
          expect(r.moments).toBe(moments);
          r.regions.forEach((region, i) => {
            const label = `${key} ${moments} ${v} ${ids[i]}`;
            c.equal(`${label} id`, region.id, idStrings[i]);
            c.close(`${label} Ii`, region.Ii, f.Ii[i]);
            c.close(`${label} E.Ii`, region.expectedIi, f.EIi[i]);
            c.close(`${label} Var.Ii`, region.varianceIi, f.VarIi[i]);
            c.close(`${label} Z.Ii`, region.z, f.ZIi[i]);
            c.close(`${label} p two-sided (${f.pTwoSidedColumn})`, region.p, f.pTwoSided[i]);
            // one-sided p from the engine's normal tail, against spdep alternative = "greater"
            c.close(`${label} p greater (${f.pGreaterColumn})`, region.z === null ? null : normalUpperTail(region.z), f.pGreater[i]);
            // quadrant: sign of z_i and of its lag (spdep's "pysal" quadrant)
            c.equal(`${label} quadrant`, region.quadrant, QUADRANT[f.quadrantPysal[i]]);
          });
        }
        c.assertAll(3 * n * 8);
      });
    }
  }
});

describe(`local Getis–Ord vs ${SPDEP} localG(return_internals = TRUE)`, () => {
  const cases: { key: LocalGKey; nbKey: NeighbourKey; style: "B" | "W"; star: boolean }[] = [];
  for (const nbKey of ["queen", "rook", "k4"] as const) {
    for (const style of ["B", "W"] as const) {
      for (const star of [true, false]) {
        cases.push({ key: `${nbKey}_${style}_${star ? "star" : "nostar"}`, nbKey, style, star });
      }
    }
  }

  for (const { key, nbKey, style, star } of cases) {
    test(`${key}: G, E[G], Var[G], z, p (${star ? "Gi* with include.self" : "Gi"}, style ${style})`, () => {
      const binary = spdepBinary(nbKey);
      // spdep: nb2listw(include.self(nb), style) for Gi*, nb2listw(nb, style) for Gi.
      // The engine takes weights WITHOUT self-links and adds the self term for Gi*:
      // weight 1 for binary weights; for row-standardised weights it re-standardises
      // the row with the self link, w_ii = w_ij = 1/(k_i + 1) — spdep's include.self + "W".
      const weights = style === "B" ? binary : rowStandardisedWeights(binary);
      const name = star ? "G*i" : "Gi";
      const c = new Comparison();
      for (const v of VARIABLE_KEYS) {
        // source: spdep localG(x, listw, return_internals = TRUE), fixture nc-local.json localG.<key>.variables.<v>
        const f = localFixture.localG[key].variables[v];
        const columns = [name, `E(${name})`, `V(${name})`, `Pr(z != E(${name}))`, "z"];
        for (const col of columns) if (f[col] === undefined) throw new Error(`fixture ${key} ${v} lacks column ${col}`);
        const r = localGetisOrd(data.variables[v].x, weights, { star });
        expect(r.star).toBe(star);
        expect(r.regions).toHaveLength(n);
        r.regions.forEach((region, i) => {
          const label = `${key} ${v} ${ids[i]}`;
          c.equal(`${label} id`, region.id, idStrings[i]);
          c.close(`${label} ${name}`, region.G, f[name][i]);
          c.close(`${label} E(${name})`, region.expectedG, f[`E(${name})`][i]);
          c.close(`${label} V(${name})`, region.varianceG, f[`V(${name})`][i]);
          c.close(`${label} z`, region.z, f.z[i]);
          c.close(`${label} p two-sided`, region.p, f[`Pr(z != E(${name}))`][i]);
        });
      }
      c.assertAll(3 * n * 6);
    });
  }

  test("Gi* z-scores do not depend on scaling a row, so binary and W Gi* z agree in spdep too", () => {
    // source: spdep localG() with include.self, styles B and W; fixture nc-local.json localG.queen_{B,W}_star
    const c = new Comparison();
    const zB = localFixture.localG.queen_B_star.variables.sid79.z;
    const zW = localFixture.localG.queen_W_star.variables.sid79.z;
    zB.forEach((z, i) => c.close(`queen Gi* sid79 ${ids[i]} z B vs W (spdep)`, zW[i], z, 1e-9));
    // …while an explicit self-weight that differs from the neighbours' weight changes z.
    const r = localGetisOrd(data.variables.sid79.x, rowStandardisedWeights(spdepBinary("queen")), { star: true, selfWeight: 1 });
    const differing = r.regions.filter((region, i) => region.z !== null && Math.abs(region.z - zB[i]) > 1e-6 * Math.abs(zB[i]));
    expect(differing.length).toBeGreaterThan(50);
    c.assertAll(n);
  });
});

describe(`conditional permutation local Moran vs ${SPDEP} localmoran() / localmoran_perm() (sampling tolerance)`, () => {
  const R = 9999;
  for (const key of ["queen_W", "queen_B"] as const) {
    test(`${key}: permutation mean/variance match the exact conditional moments; pseudo p matches spdep's folded p`, () => {
      const weights = spdepWeights(key);
      const perm = localFixture.localmoranPerm[key];
      expect(perm.nsim).toBe(R);
      const c = new Comparison();
      let engineRatioSum = 0;
      let spdepRatioSum = 0;
      let inflationSum = 0;
      let count = 0;
      for (const v of VARIABLE_KEYS) {
        // sources: spdep localmoran(conditional = TRUE) (exact moments) and
        // localmoran_perm(nsim = 9999) after set.seed(meta.seed); fixture nc-local.json
        const exact = localFixture.localmoran[key].variables[v].localmoran.conditional;
        const sim = perm.variables[v].values;
        const folded = sim["Pr(folded) Sim"];
        const simVar = sim["Var.Ii"];
        const kurtosis = sim["Kurtosis"];
        if (folded === undefined || simVar === undefined || kurtosis === undefined) {
          throw new Error(`fixture localmoranPerm.${key}.${v} lacks a column`);
        }
        const r = localMoran(data.variables[v].x, weights, {
          moments: "conditional",
          permutations: R,
          random: createRandomSource(SEED),
        });
        r.regions.forEach((region, i) => {
          const label = `${key} ${v} ${ids[i]}`;
          const k = region.neighbours;
          const variance = exact.VarIi[i];
          const mean = region.permutationMean;
          const sd = region.permutationSd;
          const pG = region.pseudoPGreater;
          const pL = region.pseudoPLess;
          const p2 = region.pseudoP;
          if (mean === null || sd === null || pG === null || pL === null || p2 === null) {
            c.mismatches.push(`${label}: engine returned no permutation results`);
            return;
          }
          // Mean of R draws around the exact conditional expectation: 5.5 sd of the mean.
          c.close(`${label} permutation mean vs E.Ii`, mean, exact.EIi[i], 0, 5.5 * Math.sqrt(variance / R));
          // Sample variance around the exact variance: relative sd ≈ sqrt((kurt − 1)/R), kurt = excess + 3.
          const relSd = Math.sqrt((kurtosis[i] + 2) / R);
          c.close(`${label} permutation variance vs Var.Ii`, sd * sd, variance, 6 * relSd);
          engineRatioSum += (sd * sd) / variance;
          spdepRatioSum += simVar[i] / variance;
          inflationSum += (n - 2) / (n - 1 - k);
          count++;
          // Engine p forms.
          c.close(`${label} pseudoP form`, p2, Math.min(1, 2 * Math.min(pG, pL)), 1e-12);
          expect(Math.min(pG, pL)).toBeGreaterThanOrEqual(1 / (R + 1));
          // spdep folded p = (min(M, R − M) + 1)/(R + 1) ≈ min(pGreater, pLess); allowance 0.01 for
          // spdep's with-replacement draws (a ~2 % wider null for k ≈ 5 of n − 1 = 99).
          const q = folded[i];
          c.close(`${label} min(pGreater, pLess) vs spdep Pr(folded) Sim`, Math.min(pG, pL), q, 0, 5 * Math.sqrt((2 * q * (1 - q)) / R) + 0.01);
        });
      }
      c.assertAll(3 * n * 4);
      // Averaged over all counties: the engine draws without replacement (ratio ≈ 1);
      // spdep 1.2-7's draws are inflated by (n − 2)/(n − 1 − k_i) (with replacement).
      const engineRatio = engineRatioSum / count;
      const spdepRatio = spdepRatioSum / count;
      const inflation = inflationSum / count;
      expect(Math.abs(engineRatio - 1)).toBeLessThan(0.01);
      expect(Math.abs(spdepRatio / inflation - 1)).toBeLessThan(0.01);
      expect(inflation - 1).toBeGreaterThan(0.03); // the two conventions are distinguishable here
    });
  }
});

/**
 * Outside check of lib/spatial against R's spdep (issue 3): global statistics.
 *
 * Every expected number is read from tests/fixtures/spdep/nc-global.json,
 * written by scripts/reference/spdep-reference.R. The weights are built from
 * spdep's own neighbour lists (tests/fixtures/spdep/nc-neighbours.json) so that
 * these tests isolate the statistics; spdep-reference.test.ts shows that the
 * engine's own queen/rook/k4 lists are identical.
 *
 * Conventions compared (and differences that are expected, not hidden):
 * - Geary: spdep's geary.test reports z = (E[C] − C)/sd and calls positive
 *   autocorrelation (C < 1) "greater". The engine reports z = (C − E[C])/sd
 *   and pGreater = P(C ≥ observed). So engine z = −spdep z, engine pGreater =
 *   spdep "less" p, engine pLess = spdep "greater" p.
 * - General G: spdep globalG.test defaults (B1correct = TRUE), binary weights.
 * - Monte Carlo p: spdep moran.mc "greater" is max(M, 1)/(R + 1) with M the
 *   number of simulated values ≥ the observed one — one fewer in the numerator
 *   than the textbook (M + 1)/(R + 1) the engine uses whenever M ≥ 1. spdep's
 *   "less" p is min(L + 1, R)/(R + 1) with L the number of simulated values ≤
 *   observed, i.e. the textbook form except when every draw lies below.
 *   The engine's permutation p is compared with the textbook form of spdep's
 *   own draws, within sampling tolerance (different random streams).
 */
import {
  binaryWeights,
  createRandomSource,
  gearyC,
  generalG,
  globalMoran,
  globalStatistics,
  rowStandardisedWeights,
  weightsFromNeighbourLists,
  type SpatialWeights,
} from "@/lib/spatial";
import {
  Comparison,
  VARIABLE_KEYS,
  WEIGHTS_KEYS,
  indexLists,
  loadData,
  loadGlobal,
  loadNeighbours,
  type McSummary,
  type NullHypothesis,
  type WeightsKey,
} from "../../fixtures/spdep/fixtures";

const data = loadData();
const nbFixture = loadNeighbours();
const globalFixture = loadGlobal();
const ids = nbFixture.ids;
const idStrings = ids.map(String);
const SPDEP = `spdep ${globalFixture.meta.spdep}`;
const SEED = globalFixture.meta.seed;
const HYPOTHESES: readonly NullHypothesis[] = ["normality", "randomisation"];

/** Weights exactly as spdep built them: nb2listw(nb, style = "W" | "B"). */
function spdepWeights(key: WeightsKey): SpatialWeights {
  const [nbKey, style] = key.split("_") as ["queen" | "rook" | "k4", "W" | "B"];
  const lists = nbKey === "k4" ? nbFixture.k4.variants[nbFixture.k4.statsVariant].neighbours : nbFixture[nbKey].neighbours;
  const binary = weightsFromNeighbourLists(idStrings, indexLists(ids, lists), { rule: nbKey === "k4" ? "knn:4" : nbKey });
  return style === "W" ? rowStandardisedWeights(binary) : binaryWeights(binary);
}

const textbookGreater = (mc: McSummary): number => (mc.countSimGreaterOrEqual + 1) / (mc.nsim + 1);
const textbookLess = (mc: McSummary): number => (mc.countSimLessOrEqual + 1) / (mc.nsim + 1);

/**
 * Two independent Monte Carlo estimates of the same tail probability p, each
 * from R draws, differ with sd ≈ sqrt(2 p (1 − p) / R). Allow 5 sd plus the
 * 1/(R+1) granularity.
 */
function permutationTolerance(p: number, R: number): number {
  return 5 * Math.sqrt((2 * p * (1 - p)) / R) + 2 / (R + 1);
}

describe(`Moran's I vs ${SPDEP} moran() / moran.test()`, () => {
  for (const key of WEIGHTS_KEYS) {
    test(`${key}: I, E[I], kurtosis, variance / z / p under normality and randomisation`, () => {
      const weights = spdepWeights(key);
      const c = new Comparison();
      for (const v of VARIABLE_KEYS) {
        // source: spdep moran() and moran.test(randomisation = TRUE/FALSE, alternative = greater/less/two.sided),
        // fixture tests/fixtures/spdep/nc-global.json weights.<key>.variables.<v>
        const f = globalFixture.weights[key].variables[v];
        const r = globalMoran(data.variables[v].x, weights);
        const label = `${key} ${v}`;
        c.equal(`${label} n`, r.n, 100);
        c.close(`${label} I`, r.I, f.moran.I);
        c.close(`${label} I (moran.test estimate)`, r.I, f.moranTest.randomisation.greater.estimate["Moran I statistic"]);
        c.close(`${label} E[I]`, r.expectedI, f.moranTest.randomisation.greater.estimate["Expectation"]);
        c.close(`${label} kurtosis b2`, r.kurtosis, f.moran.K);
        for (const h of HYPOTHESES) {
          const t = f.moranTest[h];
          c.close(`${label} ${h} variance`, r[h].variance, t.greater.estimate["Variance"]);
          c.close(`${label} ${h} z`, r[h].z, t.greater.statistic);
          c.close(`${label} ${h} pGreater`, r[h].pGreater, t.greater.pValue);
          c.close(`${label} ${h} pLess`, r[h].pLess, t.less.pValue);
          c.close(`${label} ${h} pTwoSided`, r[h].pTwoSided, t["two.sided"].pValue);
        }
      }
      c.assertAll(3 * 15);
    });
  }
});

describe(`Geary's C vs ${SPDEP} geary() / geary.test()`, () => {
  for (const key of WEIGHTS_KEYS) {
    test(`${key}: C, E[C], variance / z / p under normality and randomisation (sign convention mapped)`, () => {
      const weights = spdepWeights(key);
      const c = new Comparison();
      for (const v of VARIABLE_KEYS) {
        // source: spdep geary() and geary.test(randomisation = TRUE/FALSE), fixture nc-global.json
        const f = globalFixture.weights[key].variables[v];
        const r = gearyC(data.variables[v].x, weights);
        const label = `${key} ${v}`;
        c.close(`${label} C`, r.C, f.geary.C);
        c.close(`${label} C (geary.test estimate)`, r.C, f.gearyTest.randomisation.greater.estimate["Geary C statistic"]);
        c.close(`${label} E[C]`, r.expectedC, f.gearyTest.randomisation.greater.estimate["Expectation"]);
        c.close(`${label} kurtosis b2`, r.kurtosis, f.moran.K);
        for (const h of HYPOTHESES) {
          const t = f.gearyTest[h];
          c.close(`${label} ${h} variance`, r[h].variance, t.greater.estimate["Variance"]);
          // spdep: z = (1 − C)/sd; engine: z = (C − 1)/sd.
          c.close(`${label} ${h} z (= −spdep z)`, r[h].z, -t.greater.statistic);
          // spdep "greater" = positive autocorrelation = C small = engine pLess.
          c.close(`${label} ${h} pLess (= spdep greater)`, r[h].pLess, t.greater.pValue);
          c.close(`${label} ${h} pGreater (= spdep less)`, r[h].pGreater, t.less.pValue);
          c.close(`${label} ${h} pTwoSided`, r[h].pTwoSided, t["two.sided"].pValue);
        }
      }
      c.assertAll(3 * 14);
    });
  }
});

describe(`General G vs ${SPDEP} globalG.test() (binary weights)`, () => {
  for (const key of WEIGHTS_KEYS.filter((k) => k.endsWith("_B"))) {
    test(`${key}: G, E[G], variance, z, p`, () => {
      const weights = spdepWeights(key);
      const c = new Comparison();
      for (const v of VARIABLE_KEYS) {
        // source: spdep globalG.test(x, nb2listw(nb, style = "B"), alternative = greater/less/two.sided),
        // defaults B1correct = TRUE, adjust.x = TRUE; fixture nc-global.json
        const t = globalFixture.weights[key].variables[v].globalGTest;
        if (t === undefined) throw new Error(`fixture lacks globalGTest for ${key} ${v}`);
        const r = generalG(data.variables[v].x, weights);
        const label = `${key} ${v}`;
        c.close(`${label} G`, r.G, t.greater.estimate["Global G statistic"]);
        c.close(`${label} E[G]`, r.expectedG, t.greater.estimate["Expectation"]);
        c.close(`${label} variance`, r.randomisation.variance, t.greater.estimate["Variance"]);
        c.close(`${label} z`, r.randomisation.z, t.greater.statistic);
        c.close(`${label} pGreater`, r.randomisation.pGreater, t.greater.pValue);
        c.close(`${label} pLess`, r.randomisation.pLess, t.less.pValue);
        c.close(`${label} pTwoSided`, r.randomisation.pTwoSided, t["two.sided"].pValue);
      }
      c.assertAll(3 * 7);
    });
  }

  test("the B1correct = FALSE variance (the uncorrected B1 term) differs from the default, so the check above is specific", () => {
    // source: spdep globalG.test(..., B1correct = FALSE), fixture nc-global.json
    const f = globalFixture.weights.queen_B.variables.sid74;
    const corrected = f.globalGTest?.greater.estimate["Variance"];
    const uncorrected = f.globalGTestB1correctFALSE?.estimate["Variance"];
    expect(typeof corrected).toBe("number");
    expect(typeof uncorrected).toBe("number");
    expect(Math.abs((corrected as number) - (uncorrected as number))).toBeGreaterThan(1e-6 * Math.abs(corrected as number));
  });
});

describe(`Monte Carlo conventions in ${SPDEP} moran.mc (fixture facts, checked against spdep's own counts)`, () => {
  test("spdep 'greater' p = max(M, 1)/(R + 1), one fewer than the textbook (M + 1)/(R + 1) whenever M ≥ 1", () => {
    // source: spdep moran.mc(nsim = 999 / 9999) after set.seed(meta.seed), fixture nc-global.json moranMc
    let withPositiveM = 0;
    const c = new Comparison();
    for (const key of WEIGHTS_KEYS) {
      for (const v of VARIABLE_KEYS) {
        for (const nsim of ["nsim999", "nsim9999"] as const) {
          const g = globalFixture.weights[key].variables[v].moranMc[nsim].greater;
          const l = globalFixture.weights[key].variables[v].moranMc[nsim].less;
          const R = g.nsim;
          const M = g.countSimGreaterOrEqual;
          const L = g.countSimLessOrEqual;
          c.close(`${key} ${v} ${nsim} greater`, g.pValue, Math.max(M, 1) / (R + 1), 1e-12);
          c.close(`${key} ${v} ${nsim} less`, l.pValue, Math.min(L + 1, R) / (R + 1), 1e-12);
          if (M >= 1) {
            withPositiveM++;
            c.close(`${key} ${v} ${nsim} textbook − spdep`, textbookGreater(g) - g.pValue, 1 / (R + 1), 1e-9);
          }
        }
      }
    }
    c.assertAll(72);
    expect(withPositiveM).toBeGreaterThan(0); // the difference actually occurs in these data
  });
});

describe(`Permutation inference vs ${SPDEP} moran.mc / geary.mc (within sampling tolerance)`, () => {
  const R = 9999;
  for (const key of WEIGHTS_KEYS) {
    test(`${key}: Moran and Geary permutation p, mean and sd (R = ${R}, engine seed = fixture seed)`, () => {
      const weights = spdepWeights(key);
      const c = new Comparison();
      for (const v of VARIABLE_KEYS) {
        const x = data.variables[v].x;
        // source: spdep moran.mc(nsim = 9999) and geary.mc(nsim = 9999), set.seed(meta.seed); fixture nc-global.json
        const fm = globalFixture.weights[key].variables[v].moranMc.nsim9999.greater;
        const fg = globalFixture.weights[key].variables[v].gearyMc.nsim9999.greater;
        expect(fm.nsim).toBe(R);
        const moran = globalMoran(x, weights, { permutations: R, random: createRandomSource(SEED) });
        const geary = gearyC(x, weights, { permutations: R, random: createRandomSource(SEED) });
        for (const [name, perm, f] of [
          ["Moran", moran.permutation, fm],
          ["Geary", geary.permutation, fg],
        ] as const) {
          const label = `${key} ${v} ${name}`;
          if (perm === null) {
            c.mismatches.push(`${label}: engine returned no permutation summary`);
            continue;
          }
          // Engine convention, exactly: p = (count + 1)/(R + 1).
          c.close(`${label} engine pGreater form`, perm.pGreater, (perm.countAtLeast + 1) / (R + 1), 1e-12);
          c.close(`${label} engine pLess form`, perm.pLess, (perm.countAtMost + 1) / (R + 1), 1e-12);
          c.close(`${label} engine pTwoSided form`, perm.pTwoSided, Math.min(1, 2 * Math.min(perm.pGreater, perm.pLess)), 1e-12);
          // Against spdep's draws, in the textbook form.
          const pg = textbookGreater(f);
          const pl = textbookLess(f);
          c.close(`${label} pGreater vs spdep (M+1)/(R+1)`, perm.pGreater, pg, 0, permutationTolerance(pg, R));
          c.close(`${label} pLess vs spdep (L+1)/(R+1)`, perm.pLess, pl, 0, permutationTolerance(pl, R));
          // Mean of R draws: sd of the difference of two means ≈ sqrt(2) · sd / sqrt(R).
          c.close(`${label} permutation mean`, perm.mean, f.simMean, 0, (5 * Math.SQRT2 * f.simSd) / Math.sqrt(R));
          c.close(`${label} permutation sd`, perm.sd, f.simSd, 0.05);
          c.equal(`${label} permutations`, perm.permutations, R);
        }
      }
      c.assertAll(3 * 2 * 8);
    });
  }

  for (const key of WEIGHTS_KEYS) {
    test(`${key}: the shared test of globalStatistics (one shuffle per draw for I, C and G) is as valid a draw (R = ${R})`, () => {
      const weights = spdepWeights(key);
      const c = new Comparison();
      for (const v of VARIABLE_KEYS) {
        const x = data.variables[v].x;
        const label = `${key} ${v}`;
        const shared = globalStatistics(x, weights, { permutations: R, random: createRandomSource(SEED) });
        // Moran's test is globalMoran's with the same seed, number for number.
        expect(shared.moran).toEqual(globalMoran(x, weights, { permutations: R, random: createRandomSource(SEED) }));
        // Analytic C and G are untouched by the sharing.
        const geary = gearyC(x, weights);
        const g = generalG(x, weights);
        c.equal(`${label} C`, shared.geary.C, geary.C);
        c.equal(`${label} Geary randomisation z`, shared.geary.randomisation.z, geary.randomisation.z);
        c.equal(`${label} G`, shared.generalG?.G ?? NaN, g.G);
        c.equal(`${label} General G z`, shared.generalG?.randomisation.z ?? NaN, g.randomisation.z);
        // source: spdep geary.mc(nsim = 9999), set.seed(meta.seed); fixture nc-global.json (engine pLess = spdep "greater")
        const fg = globalFixture.weights[key].variables[v].gearyMc.nsim9999.greater;
        const gearyPerm = shared.geary.permutation;
        const gPerm = shared.generalG?.permutation;
        if (!gearyPerm || !gPerm) {
          c.mismatches.push(`${label}: a shared permutation summary is missing`);
          continue;
        }
        c.close(`${label} Geary pGreater vs spdep geary.mc`, gearyPerm.pGreater, textbookGreater(fg), 0, permutationTolerance(textbookGreater(fg), R));
        c.close(`${label} Geary pLess vs spdep geary.mc`, gearyPerm.pLess, textbookLess(fg), 0, permutationTolerance(textbookLess(fg), R));
        // No General G Monte Carlo in the fixtures: compare with generalG on a stream of its own (seed + 2).
        const own = generalG(x, weights, { permutations: R, random: createRandomSource(SEED + 2) }).permutation;
        if (!own) throw new Error("generalG returned no permutation summary");
        c.close(`${label} General G pGreater, shared vs own stream`, gPerm.pGreater, own.pGreater, 0, permutationTolerance(own.pGreater, R));
        c.close(`${label} General G pLess, shared vs own stream`, gPerm.pLess, own.pLess, 0, permutationTolerance(own.pLess, R));
      }
      c.assertAll(3 * 8);
    });
  }

  test("permutation p never falls below 1/(R + 1), even where spdep's observed value exceeds every draw", () => {
    const weights = spdepWeights("queen_W");
    const f = globalFixture.weights.queen_W.variables.nwbir74.moranMc.nsim999.greater;
    // source: spdep moran.mc(nsim = 999), NWBIR74/BIR74 on queen W: no simulated I reaches the observed one
    expect(f.countSimGreaterOrEqual).toBe(0);
    expect(f.pValue).toBeCloseTo(1 / 1000, 12);
    const r = globalMoran(data.variables.nwbir74.x, weights, { permutations: 999, random: createRandomSource(SEED) });
    expect(r.permutation?.pGreater).toBeCloseTo(1 / 1000, 12);
  });
});

/**
 * Outside check of lib/spatial's rates and hot spots against R's spdep 1.2-7 on
 * the North Carolina SIDS data of the spData package (SID74 deaths over BIR74
 * births, 100 counties, queen contiguity). Every expected number is read from
 * tests/fixtures/nc-sids/rates-hotspots.json, written by
 * scripts/reference/rates-hotspots-reference.R; the source is named beside
 * each check. Deterministic values agree to 1e-10 relative; the permutation
 * distribution (one stream of R's generator against one of Tessera's) only
 * within sampling error.
 */
import {
  binaryWeights,
  createRandomSource,
  empiricalBayesMoran,
  empiricalBayesStandardise,
  globalEmpiricalBayesRates,
  hotSpotClasses,
  localEmpiricalBayesRates,
  localGetisOrd,
  rowStandardisedWeights,
  type Correction,
  type SpatialWeights,
} from "@/lib/spatial";
import { Comparison } from "../../fixtures/spdep/fixtures";
import { loadRatesHotspots, type LocalGCase } from "../../fixtures/nc-sids/fixture";
import { ncQueen } from "./nc-queen";

const fixture = loadRatesHotspots();
const SPDEP = `spdep ${fixture.meta.spdep}`;
const TIGHT = 1e-10;
// Fixture arrays follow fixture.ids; the weights follow the topology. Align by id.
const { queen, aligned } = ncQueen(fixture.ids);
const events = aligned(fixture.events);
const births = aligned(fixture.population);
const W: SpatialWeights = rowStandardisedWeights(queen);
const B: SpatialWeights = binaryWeights(queen);

test(`the topology's queen links are ${SPDEP}'s poly2nb(queen = TRUE) lists on spData's sids.shp`, () => {
  // source: rates-hotspots.json neighbours (poly2nb)
  expect(queen.ids.length).toBe(fixture.ids.length);
  for (let i = 0; i < queen.ids.length; i++) {
    const mine = Array.from(queen.neighbours.subarray(queen.offsets[i], queen.offsets[i + 1]), (j) => Number(queen.ids[j])).sort((a, b) => a - b);
    expect({ id: queen.ids[i], neighbours: mine }).toEqual({ id: queen.ids[i], neighbours: [...fixture.neighbours[queen.ids[i]]] });
  }
});

describe(`empirical-Bayes Moran (Assunção & Reis 1999) vs ${SPDEP} EBImoran.mc`, () => {
  test("the standardised rates z_i equal spdep's (a > 0 here, so both variance rules agree)", () => {
    const c = new Comparison();
    // source: EBImoran.mc(SID74, BIR74, queen W)$z; a > 0 from EBest (rates-hotspots.json EBest.a)
    expect(fixture.EBest.a).toBeGreaterThan(0);
    const z = empiricalBayesStandardise(events, births).standardised;
    const expected = aligned(fixture.EBImoran.W.z);
    expected.forEach((e, i) => c.close(`z[${queen.ids[i]}]`, z[i], e, TIGHT, 1e-14));
    c.assertAll(100);
  });

  for (const [style, weights] of [
    ["W", W],
    ["B", B],
  ] as const) {
    test(`style ${style}: observed I to 1e-10; the permutation distribution's mean and sd within sampling error`, () => {
      const reference = fixture.EBImoran[style];
      const R = fixture.EBImoran.nsim;
      const r = empiricalBayesMoran(events, births, weights, { permutations: R, random: createRandomSource(fixture.EBImoran.seed) });
      // source: EBImoran.mc(...)$statistic (rates-hotspots.json EBImoran.<style>.observed)
      expect(Math.abs(r.I - reference.observed)).toBeLessThanOrEqual(TIGHT * Math.abs(reference.observed));
      const p = r.permutation;
      if (p === null) throw new Error("no permutation summary");
      // source: mean and sd of EBImoran.mc(...)$res[1:nsim]. Two independent streams of R draws:
      // the means differ by less than 4 standard errors of their difference, the sds by less than 10 %.
      const se = Math.sqrt((2 * reference.simulatedSd ** 2) / R);
      expect(Math.abs(p.mean - reference.simulatedMean)).toBeLessThan(4 * se);
      expect(Math.abs(p.sd / reference.simulatedSd - 1)).toBeLessThan(0.1);
      // source: spdep's countSimGreaterOrEqual (1 or 2 of 9,999): the observed I is far in the upper tail
      // in both, so Tessera's (M + 1)/(R + 1) is small too (at most 10 exceedances expected here).
      expect(reference.countSimGreaterOrEqual).toBeLessThanOrEqual(2);
      expect(p.pGreater).toBeLessThanOrEqual(11 / (R + 1));
    });
  }
});

describe(`empirical-Bayes rates (Marshall 1991) vs ${SPDEP}`, () => {
  test("global: raw rates, b, a and the smoothed rates equal EBest(family = 'poisson')", () => {
    const c = new Comparison();
    const r = globalEmpiricalBayesRates(events, births);
    // source: EBest(SID74, BIR74): attr "parameters" a, b; columns raw, estmm
    c.close("b", r.globalRate, fixture.EBest.b, TIGHT);
    c.close("a", r.priorVariance, fixture.EBest.a, TIGHT);
    const raw = aligned(fixture.EBest.raw);
    const estmm = aligned(fixture.EBest.estmm);
    for (let i = 0; i < raw.length; i++) {
      c.close(`raw[${queen.ids[i]}]`, r.raw[i], raw[i], TIGHT, 1e-300);
      c.close(`estmm[${queen.ids[i]}]`, r.smoothed[i], estmm[i], TIGHT);
    }
    c.assertAll(202);
  });

  test("local over each county and its queen neighbours: m_i, a_i and the estimates equal EBlocal (both variance centres)", () => {
    for (const [mode, key] of [
      ["local-rate", "localRate"],
      ["each-local-rate", "eachLocalRate"],
    ] as const) {
      const c = new Comparison();
      const r = localEmpiricalBayesRates(events, births, queen, { deviationsFrom: mode });
      // source: EBlocal(SID74, BIR74, poly2nb(queen), centre per <key>): est and attr "parameters" a, m
      const reference = fixture.EBlocal[key];
      const [est, a, m] = [aligned(reference.est), aligned(reference.a), aligned(reference.m)];
      for (let i = 0; i < est.length; i++) {
        c.close(`${key} m[${queen.ids[i]}]`, r.localRates[i], m[i], TIGHT, 1e-300);
        c.close(`${key} a[${queen.ids[i]}]`, r.priorVariances[i], a[i], TIGHT, 1e-20);
        c.close(`${key} est[${queen.ids[i]}]`, r.smoothed[i], est[i], TIGHT, 1e-300);
      }
      c.assertAll(300);
    }
    // The two centres are different estimators on this data (a known difference, documented):
    // source: EBlocal's two centres in the same fixture.
    const differing = fixture.EBlocal.localRate.est.filter((e, k) => Math.abs(e - fixture.EBlocal.eachLocalRate.est[k]) > 1e-6 * Math.abs(e)).length;
    expect(differing).toBeGreaterThan(0);
  });
});

describe(`hot spots: local Getis–Ord vs ${SPDEP} localG on SIDR74 = 1000 · SID74 / BIR74`, () => {
  const rate = aligned(fixture.rate);
  const cases: { key: LocalGCase; star: boolean; weights: SpatialWeights }[] = [
    { key: "star_B", star: true, weights: B },
    { key: "nostar_B", star: false, weights: B },
    { key: "star_W", star: true, weights: W },
    { key: "nostar_W", star: false, weights: W },
  ];
  for (const { key, star, weights } of cases) {
    test(`${key}: G, E[G], Var[G], z and p to 1e-10 (${star ? "Gi*, include.self" : "Gi"})`, () => {
      const c = new Comparison();
      const r = localGetisOrd(rate, weights, { star });
      // source: localG(SIDR74, nb2listw(<include.self>(nb), style), return_internals = TRUE), rates-hotspots.json localG.<key>
      const f = fixture.localG[key];
      const [G, E, V, z, p] = [aligned(f.G), aligned(f.E), aligned(f.V), aligned(f.z), aligned(f.p)];
      r.regions.forEach((region, i) => {
        c.close(`G[${region.id}]`, region.G, G[i], TIGHT, 1e-300);
        c.close(`E[${region.id}]`, region.expectedG, E[i], TIGHT);
        c.close(`V[${region.id}]`, region.varianceG, V[i], TIGHT);
        c.close(`z[${region.id}]`, region.z, z[i], TIGHT, 1e-14);
        c.close(`p[${region.id}]`, region.p, p[i], TIGHT);
      });
      c.assertAll(500);
    });
  }

  for (const key of ["star_B", "nostar_B"] as const) {
    test(`${key}: hot, cold and not-significant classes equal R's p.adjust(none, bonferroni, BH) of 2·pnorm(−|z|) at 0.05`, () => {
      const r = localGetisOrd(rate, B, { star: key === "star_B" });
      for (const [correction, method] of [
        ["none", "none"],
        ["bonferroni", "bonferroni"],
        ["fdr", "BH"],
      ] as const satisfies readonly (readonly [Correction, string])[]) {
        // source: rates-hotspots.json hotspotClasses.<key>.<method> (R's p.adjust)
        const expected = aligned(fixture.hotspotClasses[key][method]);
        const classes = hotSpotClasses(r, { alpha: fixture.hotspotClasses.alpha, correction, pValueSource: "analytical" });
        expect({ correction, classes: classes.classes }).toEqual({ correction, classes: expected });
      }
    });
  }
});

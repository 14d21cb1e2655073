/**
 * Outside check of lib/spatial's regression diagnostics (regression.ts) against
 * R 4.2.2's lm and spdep 1.2-7's lm.morantest and lm.LMtests on the North
 * Carolina SIDS data of the spData package: SIDS deaths per 1,000 births 1979-84
 * (SIDR79) on the non-white share of those births (NWP79), and on NWP79 and the
 * 1974-78 rate (SIDR74); queen contiguity, styles W and B. Every expected number
 * is read from tests/fixtures/nc-sids/residuals.json, written by
 * scripts/reference/residuals-reference.R; the source is named beside each check.
 * Agreement: 1e-9 relative.
 */
import { binaryWeights, olsFit, regressionDiagnostics, rowStandardisedWeights, type SpatialWeights } from "@/lib/spatial";
import { Comparison } from "../../fixtures/spdep/fixtures";
import { loadResiduals } from "../../fixtures/nc-sids/fixture";
import { ncQueen } from "./nc-queen";

const fixture = loadResiduals();
const SOURCE = `${fixture.meta.R} / spdep ${fixture.meta.spdep}`;
const TIGHT = 1e-9;
// Fixture arrays follow fixture.ids; the weights follow the topology. Align by id.
const { queen, aligned } = ncQueen(fixture.ids);
const styles: Record<"W" | "B", SpatialWeights> = { W: rowStandardisedWeights(queen), B: binaryWeights(queen) };
const variable = (name: string): number[] => aligned(fixture.data[name as keyof typeof fixture.data]);

for (const [modelName, model] of Object.entries(fixture.models)) {
  const y = variable(model.value);
  const covariates = model.covariates.map((name) => ({ name, values: variable(name) }));

  describe(`${model.formula} (${modelName}) vs ${SOURCE}`, () => {
    test("OLS: coefficients, standard errors, t, p, R², adjusted R², σ², residuals and fitted values equal lm's", () => {
      const c = new Comparison();
      const fit = olsFit(y, covariates);
      const reference = model.W.coefficients; // lm does not depend on the weights; W and B hold the same fit
      // source: summary(lm(formula))$coefficients (residuals.json models.<m>.W.coefficients)
      expect(fit.coefficients.map((r) => r.name)).toEqual([...reference.names]);
      expect(fit.n).toBe(model.W.n);
      expect(fit.k).toBe(model.W.k);
      fit.coefficients.forEach((r, j) => {
        c.close(`${r.name} estimate`, r.estimate, reference.estimate[j], TIGHT);
        c.close(`${r.name} standard error`, r.standardError, reference.standardError[j], TIGHT);
        c.close(`${r.name} t`, r.t, reference.t[j], TIGHT);
        c.close(`${r.name} p (Student t, n − k df)`, r.p, reference.p[j], TIGHT);
      });
      // source: summary(lm)$r.squared, $adj.r.squared, $sigma^2
      c.close("R²", fit.rSquared, model.W.rSquared, TIGHT);
      c.close("adjusted R²", fit.adjustedRSquared, model.W.adjustedRSquared, TIGHT);
      c.close("σ² = e'e/(n − k)", fit.sigma2, model.W.sigma2, TIGHT);
      // source: residuals(lm), fitted(lm); residuals near zero get an absolute allowance of 1e-12
      const residuals = aligned(model.W.residuals);
      const fitted = aligned(model.W.fitted);
      residuals.forEach((e, i) => c.close(`residual ${queen.ids[i]}`, fit.residuals[i], e, TIGHT, 1e-12));
      fitted.forEach((f, i) => c.close(`fitted ${queen.ids[i]}`, fit.fitted[i], f, TIGHT));
      c.assertAll(4 * fit.k + 3 + 200);
    });

    for (const style of ["W", "B"] as const) {
      test(`style ${style}: Moran's I of the residuals, its exact moments, z and both p equal lm.morantest's`, () => {
        const reference = model[style];
        const d = regressionDiagnostics(y, covariates, styles[style]);
        const c = new Comparison();
        // source: lm.morantest(model, listw, "greater")$estimate (I, Expectation, Variance), $statistic, $p.value
        c.close("I", d.moran.I, reference.moran.I, TIGHT);
        c.close("E[I]", d.moran.expectedI, reference.moran.expectedI, TIGHT);
        c.close("Var[I]", d.moran.variance, reference.moran.variance, TIGHT);
        c.close("z", d.moran.z, reference.moran.z, TIGHT);
        c.close("p greater", d.moran.pGreater, reference.moran.pGreater, TIGHT);
        // source: lm.morantest(model, listw, alternative = "two.sided")$p.value
        c.close("p two-sided", d.moran.pTwoSided, reference.moran.pTwoSided, TIGHT);
        c.assertAll(6);
      });

      test(`style ${style}: the five LM tests equal lm.LMtests(test = "all")`, () => {
        const reference = model[style].lagrange;
        const d = regressionDiagnostics(y, covariates, styles[style]);
        const c = new Comparison();
        for (const key of ["error", "lag", "robustError", "robustLag", "combined"] as const) {
          // source: lm.LMtests(...)$<LMerr|LMlag|RLMerr|RLMlag|SARMA>$statistic and $parameter;
          // p: pchisq(statistic, df, lower.tail = FALSE) (residuals.json pUpper)
          c.close(`${key} statistic`, d.lagrange[key].statistic, reference[key].statistic, TIGHT);
          c.equal(`${key} df`, d.lagrange[key].df, reference[key].df);
          c.close(`${key} p`, d.lagrange[key].p, reference[key].pUpper, TIGHT);
          // spdep's own 1 − pchisq agrees to its cancellation error
          c.close(`${key} p vs spdep's 1 − pchisq`, d.lagrange[key].p, reference[key].pSpdep, 1e-12, 1e-15);
        }
        c.assertAll(20);
      });
    }
  });
}

test("the suggestion follows the common-practice rule on spdep's p-values (SIDR79 ~ NWP79, style W: only LMerr significant at 0.05)", () => {
  const reference = fixture.models.simple.W.lagrange;
  // source: lm.LMtests p-values in residuals.json; the case this test documents must hold there
  expect(reference.error.pUpper).toBeLessThanOrEqual(0.05);
  expect(reference.lag.pUpper).toBeGreaterThan(0.05);
  const y = variable("SIDR79");
  const d = regressionDiagnostics(y, [{ name: "NWP79", values: variable("NWP79") }], styles.W);
  expect(d.suggestion).toBe("error");
  // At alpha = 0.01 neither LMerr (p ≈ 0.045) nor LMlag (p ≈ 0.053) is significant.
  expect(reference.error.pUpper).toBeGreaterThan(0.01);
  expect(regressionDiagnostics(y, [{ name: "NWP79", values: variable("NWP79") }], styles.W, { alpha: 0.01 }).suggestion).toBe("neither");
});

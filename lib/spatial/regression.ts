/**
 * Ordinary least squares with an intercept and the spatial diagnostics of its
 * residuals: Moran's I of the residuals with its moments under the
 * regression null, and the Lagrange multiplier tests for a spatial error and
 * a spatial lag dependence.
 *
 * Sources: OLS by Householder-free modified Gram–Schmidt (Golub & Van Loan,
 * "Matrix Computations", §5.2.8); residual Moran's I moments from Cliff & Ord
 * (1981, "Spatial Processes", §8.3): with M = I − X(X'X)⁻¹X',
 *   E[I] = (n/S0) tr(MW)/(n−k),
 *   Var[I] = (n/S0)² [tr(MWMW') + tr(MWMW) + tr(MW)²]/((n−k)(n−k+2)) − E[I]²;
 * Lagrange multiplier tests from Anselin (1988, "Spatial Econometrics",
 * §6.4) and their robust forms from Anselin, Bera, Florax & Yoon (1996,
 * Regional Science and Urban Economics 26, 77–104), with σ² = e'e/n,
 * T = tr(W'W + WW) and nJ = (WXb)'M(WXb)/σ² + T.
 */
import { chiSquareUpperTail, logGamma, normalTailProbabilities } from "./distributions";
import type { SpatialWeights } from "./types";

export interface RegressionCoefficient {
  name: string;
  estimate: number;
  standardError: number;
  t: number;
  p: number;
}

export interface OlsFit {
  n: number;
  k: number;
  /** The first is "intercept", then the covariates in the order given. */
  coefficients: RegressionCoefficient[];
  rSquared: number;
  adjustedRSquared: number;
  /** e'e/(n − k). */
  sigma2: number;
  residuals: Float64Array;
  fitted: Float64Array;
}

/** The covariates (with the intercept) are linearly dependent: X'X is singular. */
export class SingularDesignError extends Error {
  readonly covariates: readonly string[];
  constructor(message: string, covariates: readonly string[]) {
    super(message);
    this.name = "SingularDesignError";
    this.covariates = covariates;
  }
}

/** Fewer regions than the regression needs for its coefficients and their errors. */
export class TooFewRegionsError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "TooFewRegionsError";
  }
}

const COLLINEAR_TOLERANCE = 1e-10;

/**
 * OLS of y on an intercept and the covariates.
 *
 * @throws TooFewRegionsError when n − k < 2; SingularDesignError naming the
 *   covariates involved when the design is (numerically) singular; Error on
 *   non-finite values or mismatched lengths.
 * Cost: O(n k²).
 */
export function olsFit(y: ArrayLike<number>, covariates: readonly { name: string; values: ArrayLike<number> }[]): OlsFit {
  const n = y.length;
  const k = covariates.length + 1;
  for (const c of covariates) {
    if (c.values.length !== n) throw new Error(`Covariate "${c.name}" has ${c.values.length} values; the response has ${n}.`);
  }
  if (n - k < 2) {
    throw new TooFewRegionsError(`${n} regions are too few for an intercept and ${covariates.length} covariate(s): at least ${k + 2} are needed.`);
  }
  const names = ["intercept", ...covariates.map((c) => c.name)];
  const columns: Float64Array[] = [Float64Array.from({ length: n }, () => 1), ...covariates.map((c) => Float64Array.from(c.values))];
  const yv = Float64Array.from(y);
  for (const [j, col] of [...columns, yv].entries()) {
    for (let i = 0; i < n; i++) if (!Number.isFinite(col[i])) throw new Error(`${j < k ? `"${names[j]}"` : "The response"} has a value that is not a finite number.`);
  }
  // Modified Gram–Schmidt: X = QR, R upper triangular k×k.
  const q = columns.map((c) => Float64Array.from(c));
  const r: number[][] = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let j = 0; j < k; j++) {
    const original = Math.sqrt(dot(columns[j], columns[j]));
    for (let i = 0; i < j; i++) {
      const rij = dot(q[i], q[j]);
      r[i][j] = rij;
      for (let t = 0; t < n; t++) q[j][t] -= rij * q[i][t];
    }
    const norm = Math.sqrt(dot(q[j], q[j]));
    if (!(norm > COLLINEAR_TOLERANCE * Math.max(original, 1e-300))) {
      // Column j is a combination of the earlier ones: name it and the covariates it depends on.
      const involved = [names[j], ...names.slice(1, j).filter((_, i) => Math.abs(r[i + 1][j]) > COLLINEAR_TOLERANCE * Math.max(original, 1e-300))];
      const covariatesNamed = involved.filter((name) => name !== "intercept");
      throw new SingularDesignError(
        j > 0 && covariatesNamed.length === 1 && Math.abs(r[0][j]) > 0
          ? `Covariate "${names[j]}" is constant (collinear with the intercept).`
          : `Covariates ${covariatesNamed.map((c) => `"${c}"`).join(", ")} are collinear (one is a linear combination of the others and the intercept).`,
        covariatesNamed,
      );
    }
    r[j][j] = norm;
    for (let t = 0; t < n; t++) q[j][t] /= norm;
  }
  // b = R⁻¹ Q'y; (X'X)⁻¹ = R⁻¹ R⁻ᵀ.
  const qty = q.map((col) => dot(col, yv));
  const rInv = upperInverse(r);
  const beta = new Array<number>(k).fill(0);
  for (let i = 0; i < k; i++) for (let j = i; j < k; j++) beta[i] += rInv[i][j] * qty[j];
  const fitted = new Float64Array(n);
  for (let j = 0; j < k; j++) for (let t = 0; t < n; t++) fitted[t] += beta[j] * columns[j][t];
  const residuals = new Float64Array(n);
  let sse = 0;
  let mean = 0;
  for (let t = 0; t < n; t++) mean += yv[t];
  mean /= n;
  let sst = 0;
  for (let t = 0; t < n; t++) {
    residuals[t] = yv[t] - fitted[t];
    sse += residuals[t] * residuals[t];
    sst += (yv[t] - mean) ** 2;
  }
  const df = n - k;
  const sigma2 = sse / df;
  const coefficients = names.map((name, i) => {
    let xtxInvII = 0;
    for (let j = i; j < k; j++) xtxInvII += rInv[i][j] * rInv[i][j];
    const standardError = Math.sqrt(sigma2 * xtxInvII);
    const t = beta[i] / standardError;
    return { name, estimate: beta[i], standardError, t, p: studentTwoSided(t, df) };
  });
  const rSquared = sst > 0 ? 1 - sse / sst : NaN;
  return { n, k, coefficients, rSquared, adjustedRSquared: 1 - (1 - rSquared) * ((n - 1) / df), sigma2, residuals, fitted };
}

export interface ResidualMoranResult {
  I: number;
  expectedI: number;
  variance: number;
  z: number;
  pTwoSided: number;
  pGreater: number;
}

export interface LagrangeTest {
  statistic: number;
  df: number;
  p: number;
}

export interface LagrangeMultiplierTests {
  error: LagrangeTest;
  lag: LagrangeTest;
  robustError: LagrangeTest;
  robustLag: LagrangeTest;
  combined: LagrangeTest;
}

export type ModelSuggestion = "error" | "lag" | "both" | "neither";

export interface RegressionDiagnostics {
  fit: OlsFit;
  moran: ResidualMoranResult;
  lagrange: LagrangeMultiplierTests;
  suggestion: ModelSuggestion;
}

/**
 * OLS of y on the covariates and the spatial diagnostics of its residuals
 * under `weights` (rows aligned with y).
 *
 * @throws as {@link olsFit}; Error when the weights have no link or do not match y.
 * Cost: O(n k² + links·k).
 */
export function regressionDiagnostics(
  y: ArrayLike<number>,
  covariates: readonly { name: string; values: ArrayLike<number> }[],
  weights: SpatialWeights,
  options: { alpha?: number } = {},
): RegressionDiagnostics {
  const alpha = options.alpha ?? 0.05;
  const n = y.length;
  if (weights.ids.length !== n) throw new Error(`The weights have ${weights.ids.length} rows; the response has ${n} values.`);
  const fit = olsFit(y, covariates);
  const k = fit.k;
  const X: Float64Array[] = [Float64Array.from({ length: n }, () => 1), ...covariates.map((c) => Float64Array.from(c.values))];
  const { offsets, neighbours } = weights;
  const w = weights.weights;
  let S0 = 0;
  let sumSquares = 0; // Σ w_ij² = tr(WW')
  let sumCross = 0; // Σ w_ij w_ji = tr(WW)
  for (let i = 0; i < n; i++) {
    for (let p = offsets[i]; p < offsets[i + 1]; p++) {
      S0 += w[p];
      sumSquares += w[p] * w[p];
      sumCross += w[p] * weightAt(weights, neighbours[p], i);
    }
  }
  if (!(S0 > 0)) throw new Error("The residual diagnostics need at least one link between regions (S0 = 0).");
  const lag = (v: Float64Array): Float64Array => {
    const out = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let p = offsets[i]; p < offsets[i + 1]; p++) s += w[p] * v[neighbours[p]];
      out[i] = s;
    }
    return out;
  };
  const lagTransposed = (v: Float64Array): Float64Array => {
    const out = new Float64Array(n);
    for (let i = 0; i < n; i++) for (let p = offsets[i]; p < offsets[i + 1]; p++) out[neighbours[p]] += w[p] * v[i];
    return out;
  };
  const Z = X.map(lag); // WX
  const Zt = X.map(lagTransposed); // W'X
  const A = inverse(gram(X, X)); // (X'X)⁻¹
  const C1 = gram(X, Z); // X'WX
  const trace = (m: number[][]): number => m.reduce((s, row, i) => s + row[i], 0);
  const AC1 = multiply(A, C1);
  const trPW = trace(AC1);
  const trMW = -trPW; // tr(W) = 0
  const trPWPW = trace(multiply(AC1, AC1));
  const trPWPWt = trace(multiply(AC1, multiply(A, transpose(C1))));
  const trMWMWt = sumSquares - trace(multiply(A, gram(Zt, Zt))) - trace(multiply(A, gram(Z, Z))) + trPWPWt;
  const trMWMW = sumCross - 2 * trace(multiply(A, gram(Zt, Z))) + trPWPW;
  const e = fit.residuals;
  const We = lag(e);
  const ee = dot(e, e);
  const eWe = dot(e, We);
  const I = ((n / S0) * eWe) / ee;
  const dfR = n - k;
  const expectedI = ((n / S0) * trMW) / dfR;
  const variance = ((n / S0) ** 2 * (trMWMWt + trMWMW + trMW * trMW)) / (dfR * (dfR + 2)) - expectedI * expectedI;
  const z = (I - expectedI) / Math.sqrt(variance);
  const tails = normalTailProbabilities(z);
  const moran: ResidualMoranResult = { I, expectedI, variance, z, pTwoSided: tails.pTwoSided, pGreater: tails.pGreater };

  // Lagrange multiplier tests.
  const sigma2ML = ee / n;
  const yv = Float64Array.from(y);
  const Wy = lag(yv);
  const T = sumSquares + sumCross;
  const WXb = lag(fit.fitted);
  // (WXb)'M(WXb) = |WXb|² − (X'WXb)'(X'X)⁻¹(X'WXb)
  const xtWXb = X.map((col) => dot(col, WXb));
  let projected = 0;
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) projected += xtWXb[i] * A[i][j] * xtWXb[j];
  const nJ = (dot(WXb, WXb) - projected) / sigma2ML + T;
  const dErr = eWe / sigma2ML;
  const dLag = dot(e, Wy) / sigma2ML;
  const chi = (statistic: number, df: number): LagrangeTest => ({ statistic, df, p: statistic >= 0 && Number.isFinite(statistic) ? chiSquareUpperTail(statistic, df) : NaN });
  const error = chi((dErr * dErr) / T, 1);
  const lagTest = chi((dLag * dLag) / nJ, 1);
  const robustError = chi((dErr - (T / nJ) * dLag) ** 2 / (T - (T * T) / nJ), 1);
  const robustLag = chi((dLag - dErr) ** 2 / (nJ - T), 1);
  const combined = chi(robustLag.statistic + error.statistic, 2);
  const lagrange: LagrangeMultiplierTests = { error, lag: lagTest, robustError, robustLag, combined };
  return { fit, moran, lagrange, suggestion: suggestModel(lagrange, alpha) };
}

/**
 * The usual decision rule (Anselin 2005, "Exploring Spatial Data with
 * GeoDa: A Workbook", §23.6): neither simple test significant → "neither";
 * one → that one; both → the one whose robust form is significant, "both"
 * when both robust forms are (or neither is).
 */
export function suggestModel(tests: LagrangeMultiplierTests, alpha: number): ModelSuggestion {
  const sig = (t: LagrangeTest) => Number.isFinite(t.p) && t.p < alpha;
  const e = sig(tests.error);
  const l = sig(tests.lag);
  if (!e && !l) return "neither";
  if (e && !l) return "error";
  if (l && !e) return "lag";
  const re = sig(tests.robustError);
  const rl = sig(tests.robustLag);
  if (re && !rl) return "error";
  if (rl && !re) return "lag";
  return "both";
}

// ——— helpers ———

function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

function weightAt(w: SpatialWeights, row: number, column: number): number {
  for (let p = w.offsets[row]; p < w.offsets[row + 1]; p++) if (w.neighbours[p] === column) return w.weights[p];
  return 0;
}

function gram(a: Float64Array[], b: Float64Array[]): number[][] {
  return a.map((x) => b.map((y) => dot(x, y)));
}

function multiply(a: number[][], b: number[][]): number[][] {
  return a.map((row) => b[0].map((_, j) => row.reduce((s, v, t) => s + v * b[t][j], 0)));
}

function transpose(a: number[][]): number[][] {
  return a[0].map((_, j) => a.map((row) => row[j]));
}

function upperInverse(r: number[][]): number[][] {
  const k = r.length;
  const inv = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let j = k - 1; j >= 0; j--) {
    inv[j][j] = 1 / r[j][j];
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let t = i + 1; t <= j; t++) s += r[i][t] * inv[t][j];
      inv[i][j] = -s / r[i][i];
    }
  }
  return inv;
}

/** Gauss–Jordan with partial pivoting (small symmetric positive definite matrices). */
function inverse(m: number[][]): number[][] {
  const k = m.length;
  const a = m.map((row, i) => [...row, ...Array.from({ length: k }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < k; c++) {
    let pivot = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(a[r][c]) > Math.abs(a[pivot][c])) pivot = r;
    [a[c], a[pivot]] = [a[pivot], a[c]];
    const d = a[c][c];
    for (let j = 0; j < 2 * k; j++) a[c][j] /= d;
    for (let r = 0; r < k; r++) {
      if (r === c) continue;
      const f = a[r][c];
      if (f !== 0) for (let j = 0; j < 2 * k; j++) a[r][j] -= f * a[c][j];
    }
  }
  return a.map((row) => row.slice(k));
}

/** Two-sided p of Student's t with df degrees of freedom: I_{df/(df+t²)}(df/2, ½). */
function studentTwoSided(t: number, df: number): number {
  if (!Number.isFinite(t)) return Number.isNaN(t) ? NaN : 0;
  return regularisedBeta(df / (df + t * t), df / 2, 0.5);
}

/** Regularised incomplete beta I_x(a, b) by Lentz's continued fraction (Numerical Recipes, §6.4). */
function regularisedBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const front = Math.exp(logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x));
  if (x > (a + 1) / (a + b + 2)) return 1 - regularisedBeta(1 - x, b, a);
  const tiny = 1e-300;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let f = d;
  for (let m = 1; m <= 500; m++) {
    const m2 = 2 * m;
    let num = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + num * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + num / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    f *= d * c;
    num = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + num * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + num / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-15) break;
  }
  return (front * f) / a;
}

/**
 * Ordinary least squares and the spatial diagnostics of its residuals: Moran's I
 * of the residuals with its exact moments (Cliff & Ord 1981) and the five
 * Lagrange multiplier tests (Anselin 1988; Anselin, Bera, Florax & Yoon 1996),
 * with the common-practice choice between a spatial error and a spatial lag model.
 *
 * The least-squares solve, the rank checks and (X'X)⁻¹ use ml-matrix's QR
 * decomposition (Householder); nothing here forms or inverts X'X by hand.
 * Everything n × n is avoided: the weights stay sparse and every trace is
 * reduced to k × k products (see {@link regressionDiagnostics} for the cost).
 */
import { Matrix, QrDecomposition, inverse } from "ml-matrix";
import type { SpatialWeights } from "./types";
import { chiSquareUpperTail, normalTailProbabilities, studentTTwoSided } from "./distributions";

/** One row of the coefficient table. */
export interface RegressionCoefficient {
  /** "intercept", or the covariate's name. */
  name: string;
  estimate: number;
  standardError: number;
  /** estimate / standardError. */
  t: number;
  /** Two-sided p of t under Student's t with n − k degrees of freedom. */
  p: number;
}

/** Result of {@link olsFit}. */
export interface OlsFit {
  /** Observations (regions). */
  n: number;
  /** Columns of the design, the intercept included. */
  k: number;
  /** The intercept first, then the covariates in the order given. */
  coefficients: RegressionCoefficient[];
  /** 1 − e'e / Σ(y − ȳ)². */
  rSquared: number;
  /** 1 − (1 − R²)(n − 1)/(n − k). */
  adjustedRSquared: number;
  /** e'e / (n − k). */
  sigma2: number;
  /** e = y − ŷ. */
  residuals: Float64Array;
  /** ŷ = Xβ̂. */
  fitted: Float64Array;
}

/** One covariate: its name and one value per observation. */
export interface Covariate {
  name: string;
  values: ArrayLike<number>;
}

/**
 * The design matrix is (numerically) rank deficient. `covariates` names every
 * column that is a linear combination of the intercept and the columns before it
 * (a constant covariate is one with the intercept; an all-zero one too).
 */
export class SingularDesignError extends Error {
  readonly covariates: readonly string[];
  constructor(covariates: readonly string[]) {
    const named = covariates.map((c) => `"${c}"`).join(", ");
    super(
      covariates.length === 1
        ? `The covariate ${named} is collinear: it is a linear combination of the intercept and the covariates before it; leave it out.`
        : `The covariates ${named} are collinear: each is a linear combination of the intercept and the covariates before it; leave them out.`,
    );
    this.name = "SingularDesignError";
    this.covariates = covariates;
  }
}

/** Fewer observations than the fit or its diagnostics need. */
export class TooFewRegionsError extends Error {
  readonly n: number;
  readonly k: number;
  constructor(n: number, k: number, needed: number, what: string) {
    super(`${what} needs at least ${needed} regions for k = ${k} columns (intercept and ${k - 1} covariate(s)); got n = ${n}.`);
    this.name = "TooFewRegionsError";
    this.n = n;
    this.k = k;
  }
}

/** A value that is not a finite number; `variable` and `index` (0-based) say where. */
export class NonFiniteValueError extends Error {
  readonly variable: string;
  readonly index: number;
  constructor(variable: string, index: number, value: unknown) {
    super(`The value of "${variable}" at position ${index} (0-based) is not a finite number (${String(value)}); leave that region out first.`);
    this.name = "NonFiniteValueError";
    this.variable = variable;
    this.index = index;
  }
}

/**
 * Relative tolerance of the rank check: column j is collinear when the norm of
 * its residual after projection on the accepted columns before it is at most
 * RANK_TOLERANCE · ‖x_j‖ (or ‖x_j‖ = 0). 1e-7 is the tolerance R's lm() passes to
 * its QR (dqrdc2), which uses the same relative-norm criterion.
 */
export const RANK_TOLERANCE = 1e-7;

/** The response's name in error messages. */
const RESPONSE = "y";

function finiteCopy(values: ArrayLike<number>, n: number, variable: string): Float64Array {
  if (values.length !== n) throw new Error(`"${variable}" has ${values.length} values; expected ${n} (one per value of ${RESPONSE}).`);
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (typeof v !== "number" || !Number.isFinite(v)) throw new NonFiniteValueError(variable, i, v);
    out[i] = v;
  }
  return out;
}

function norm(v: ArrayLike<number>): number {
  // Scaled to avoid overflow or underflow of the squares.
  let scale = 0;
  for (let i = 0; i < v.length; i++) scale = Math.max(scale, Math.abs(v[i]));
  if (scale === 0) return 0;
  let s = 0;
  for (let i = 0; i < v.length; i++) s += (v[i] / scale) ** 2;
  return scale * Math.sqrt(s);
}

/** The fit with what the diagnostics reuse. */
interface FitParts {
  fit: OlsFit;
  /** The design, n × k, intercept first. */
  X: Matrix;
  /** (X'X)⁻¹ = R⁻¹R⁻ᵀ from the QR of X. */
  xtxInverse: Matrix;
  qr: QrDecomposition;
  y: Float64Array;
}

/** Column names of the design: "intercept", then the covariates. */
function checkNames(covariates: readonly Covariate[]): string[] {
  const names = ["intercept"];
  for (const c of covariates) {
    if (typeof c.name !== "string" || c.name.trim() === "") throw new Error("Every covariate needs a non-empty name.");
    if (c.name === "intercept") throw new Error(`A covariate cannot be named "intercept"; the intercept is always included.`);
    if (names.includes(c.name)) throw new Error(`The covariate "${c.name}" is given twice.`);
    names.push(c.name);
  }
  return names;
}

/**
 * The columns that are linear combinations of the accepted columns before them:
 * for each column in order, the least-squares residual (QR solve) of x_j on the
 * accepted columns, collinear when ‖residual‖ ≤ {@link RANK_TOLERANCE}·‖x_j‖.
 * Cost: O(n k³) (one QR per column; k is small).
 */
function collinearColumns(columns: readonly Float64Array[], names: readonly string[]): string[] {
  const n = columns[0].length;
  const accepted: number[] = [];
  const collinear: string[] = [];
  columns.forEach((x, j) => {
    const size = norm(x);
    if (size === 0) {
      collinear.push(names[j]);
      return;
    }
    if (accepted.length > 0) {
      const A = new Matrix(n, accepted.length);
      accepted.forEach((c, a) => {
        for (let i = 0; i < n; i++) A.set(i, a, columns[c][i]);
      });
      const b = Matrix.columnVector(Array.from(x));
      const beta = new QrDecomposition(A).solve(b);
      const residual = b.sub(A.mmul(beta)).to1DArray();
      if (norm(residual) <= RANK_TOLERANCE * size) {
        collinear.push(names[j]);
        return;
      }
    }
    accepted.push(j);
  });
  return collinear;
}

function fitParts(y: ArrayLike<number>, covariates: readonly Covariate[]): FitParts {
  const n = y.length;
  const names = checkNames(covariates);
  const k = names.length;
  const response = finiteCopy(y, n, RESPONSE);
  const columns = [new Float64Array(n).fill(1), ...covariates.map((c) => finiteCopy(c.values, n, c.name))];
  if (n <= k) throw new TooFewRegionsError(n, k, k + 1, "A regression");
  const collinear = collinearColumns(columns, names);
  if (collinear.length > 0) throw new SingularDesignError(collinear);

  const X = new Matrix(n, k);
  columns.forEach((column, j) => {
    for (let i = 0; i < n; i++) X.set(i, j, column[i]);
  });
  const qr = new QrDecomposition(X);
  const beta = qr.solve(Matrix.columnVector(Array.from(response))).to1DArray();
  const fittedMatrix = X.mmul(Matrix.columnVector(beta));
  const fitted = new Float64Array(n);
  const residuals = new Float64Array(n);
  let mean = 0;
  for (let i = 0; i < n; i++) mean += response[i];
  mean /= n;
  let sse = 0;
  let sst = 0;
  for (let i = 0; i < n; i++) {
    fitted[i] = fittedMatrix.get(i, 0);
    residuals[i] = response[i] - fitted[i];
    sse += residuals[i] * residuals[i];
    sst += (response[i] - mean) ** 2;
  }
  if (!(sst > 0)) throw new Error(`Every value of ${RESPONSE} is ${response[0]}; a constant has nothing to explain.`);
  // (X'X)⁻¹ = (R'R)⁻¹ = R⁻¹ R⁻ᵀ, R the k × k triangle of the QR (ml-matrix).
  const rInverse = inverse(qr.upperTriangularMatrix);
  const xtxInverse = rInverse.mmul(rInverse.transpose());
  const sigma2 = sse / (n - k);
  const coefficients = names.map((name, j) => {
    const standardError = Math.sqrt(sigma2 * xtxInverse.get(j, j));
    const t = beta[j] / standardError;
    return { name, estimate: beta[j], standardError, t, p: studentTTwoSided(t, n - k) };
  });
  const rSquared = 1 - sse / sst;
  return {
    fit: { n, k, coefficients, rSquared, adjustedRSquared: 1 - ((1 - rSquared) * (n - 1)) / (n - k), sigma2, residuals, fitted },
    X,
    xtxInverse,
    qr,
    y: response,
  };
}

/**
 * Ordinary least squares of y on an intercept and the covariates, solved through
 * the QR decomposition of the design X = [1, x_1, …] (ml-matrix); standard errors
 * from σ̂²(X'X)⁻¹ with σ̂² = e'e/(n − k) and (X'X)⁻¹ = R⁻¹R⁻ᵀ, t = β̂/se and the
 * two-sided p from Student's t with n − k degrees of freedom (as R's summary.lm).
 *
 * Rank: a column is collinear when its residual on the columns before it is at
 * most {@link RANK_TOLERANCE} (1e-7, relative to its norm); then
 * {@link SingularDesignError} names every such covariate.
 *
 * @param y the response, one value per region.
 * @param covariates names (unique, not "intercept") and values aligned with y.
 * @throws NonFiniteValueError naming the variable and position of a value that is
 *   not finite; TooFewRegionsError when n ≤ k; SingularDesignError; Error when y
 *   is constant or names are bad.
 * Cost: O(n k³) for the rank check, O(n k²) for the fit.
 * @example
 *   olsFit([1, 3, 2, 5], [{ name: "x", values: [0, 1, 2, 3] }]).coefficients[1].estimate; // 1.1
 */
export function olsFit(y: ArrayLike<number>, covariates: readonly Covariate[]): OlsFit {
  return fitParts(y, covariates).fit;
}

/** Moran's I of regression residuals with its exact moments. */
export interface ResidualMoranResult {
  /** I = (n/S0) e'We / e'e. */
  I: number;
  /** E[I] = (n/S0) tr(MW)/(n − k). */
  expectedI: number;
  /** Var[I] = (n/S0)² [tr(MWMW') + tr(MWMW) + tr(MW)²]/((n−k)(n−k+2)) − E[I]². */
  variance: number;
  /** (I − E[I]) / √Var[I]. */
  z: number;
  /** 2·P(Z ≥ |z|). */
  pTwoSided: number;
  /** P(Z ≥ z). */
  pGreater: number;
}

/** A Lagrange multiplier test: statistic, degrees of freedom and chi-square p. */
export interface LagrangeTest {
  statistic: number;
  df: number;
  /** P(χ²_df ≥ statistic). */
  p: number;
}

/** The five LM tests: LMerr, LMlag, their robust forms, and SARMA (`combined`, 2 df). */
export interface LagrangeMultiplierTests {
  error: LagrangeTest;
  lag: LagrangeTest;
  robustError: LagrangeTest;
  robustLag: LagrangeTest;
  combined: LagrangeTest;
}

/** Which spatial model the LM tests point to (see {@link suggestModel}). */
export type ModelSuggestion = "error" | "lag" | "both" | "neither";

/** Result of {@link regressionDiagnostics}. */
export interface RegressionDiagnostics {
  fit: OlsFit;
  moran: ResidualMoranResult;
  lagrange: LagrangeMultiplierTests;
  suggestion: ModelSuggestion;
}

/** out = W v (row i: Σ_j w_ij v_j). */
function lag(weights: SpatialWeights, v: ArrayLike<number>): Float64Array {
  const n = weights.ids.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) s += weights.weights[p] * v[weights.neighbours[p]];
    out[i] = s;
  }
  return out;
}

/** out = W' v (out_j = Σ_i w_ij v_i). */
function transposedLag(weights: SpatialWeights, v: ArrayLike<number>): Float64Array {
  const n = weights.ids.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) out[weights.neighbours[p]] += weights.weights[p] * v[i];
  }
  return out;
}

/** w_ji by binary search in row j (neighbours sorted), 0 when there is no link. */
function weightAt(weights: SpatialWeights, j: number, i: number): number {
  let lo = weights.offsets[j];
  let hi = weights.offsets[j + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const c = weights.neighbours[mid];
    if (c === i) return weights.weights[mid];
    if (c < i) lo = mid + 1;
    else hi = mid - 1;
  }
  return 0;
}

/** Each column of X through `apply` (W or W'), as an n × k matrix. */
function lagColumns(X: Matrix, apply: (v: ArrayLike<number>) => Float64Array): Matrix {
  const out = new Matrix(X.rows, X.columns);
  for (let c = 0; c < X.columns; c++) {
    const lagged = apply(X.getColumn(c));
    for (let i = 0; i < X.rows; i++) out.set(i, c, lagged[i]);
  }
  return out;
}

const trace = (m: Matrix): number => m.trace();

function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

function lagrangeTest(statistic: number, df: number): LagrangeTest {
  return { statistic, df, p: chiSquareUpperTail(Math.max(0, statistic), df) };
}

/**
 * The common-practice decision rule between a spatial error and a spatial lag
 * model (Anselin's rule, as taught with the LM tests; a convention, not a
 * theorem): neither LMerr nor LMlag significant → "neither"; only one → that one;
 * both → the robust forms decide: only RLMerr significant → "error", only RLMlag
 * → "lag", both (or, rarely, neither) → "both". Significant means p ≤ alpha.
 *
 * @throws Error when alpha is not in (0, 1).
 * Cost: O(1).
 * @example
 *   suggestModel(regressionDiagnostics(y, covariates, w).lagrange, 0.05);
 */
export function suggestModel(tests: LagrangeMultiplierTests, alpha: number): ModelSuggestion {
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1; got ${String(alpha)}.`);
  const significant = (t: LagrangeTest) => t.p <= alpha;
  const error = significant(tests.error);
  const lagged = significant(tests.lag);
  if (!error && !lagged) return "neither";
  if (error && !lagged) return "error";
  if (lagged && !error) return "lag";
  const robustError = significant(tests.robustError);
  const robustLag = significant(tests.robustLag);
  if (robustError && !robustLag) return "error";
  if (robustLag && !robustError) return "lag";
  return "both";
}

/**
 * OLS of y on the covariates, then the spatial diagnostics of its residuals e:
 *
 * Moran's I of the residuals (Cliff & Ord 1981, §8.3; spdep lm.morantest), with
 * M = I − X(X'X)⁻¹X', S0 = ΣΣ w_ij:
 *   I = (n/S0) e'We / e'e,  E[I] = (n/S0) tr(MW)/(n − k),
 *   Var[I] = (n/S0)² [tr(MWMW') + tr(MWMW) + tr(MW)²]/((n − k)(n − k + 2)) − E[I]²,
 *   z = (I − E[I])/√Var[I], normal p. W need not be symmetric.
 *
 * Lagrange multiplier tests (Anselin 1988; Anselin, Bera, Florax & Yoon 1996;
 * spdep lm.LMtests), with σ̃² = e'e/n, T = tr(W'W + WW) and
 * NJ = [‖M W ŷ‖² + T σ̃²]/σ̃²:
 *   LMerr = (e'We/σ̃²)²/T,  LMlag = (e'Wy/σ̃²)²/NJ,
 *   RLMerr = (e'We/σ̃² − T/NJ · e'Wy/σ̃²)² / (T(1 − T/NJ)),
 *   RLMlag = (e'Wy/σ̃² − e'We/σ̃²)² / (NJ − T),  SARMA = RLMlag + LMerr (2 df),
 * each with its chi-square upper-tail p. `suggestion` is {@link suggestModel}.
 *
 * No n × n matrix is formed. With A = (X'X)⁻¹ (k × k), WX and W'X (n × k, sparse
 * products) and C = X'WX, the traces are k × k: tr(MW) = tr(W) − tr(AC);
 * tr(MWMW') + tr(MWMW) = tr(WW') + tr(WW) − tr(A(WX)'(WX)) − tr(A(W'X)'(W'X))
 * − 2 tr(A(W'X)'(WX)) + tr(ACAC') + tr(ACAC).
 *
 * @param weights rows aligned with y (as prepareAnalysis gives), any transform.
 * @param options alpha for the suggestion, default 0.05.
 * @throws as {@link olsFit}; TooFewRegionsError when n < k + 2 (with n − k = 1
 *   the residuals are fixed up to sign and Var[I] = 0); Error when the weights
 *   have another length, no links (S0 = 0), or the covariates fit y exactly.
 * Cost: O(nnz·k + n·k² + k³) time and O(n·k + nnz) memory besides the fit
 *   (nnz = links; the trace tr(WW) looks w_ji up by binary search, O(nnz·log d)).
 * @example
 *   const d = regressionDiagnostics(prepared.values, [{ name: "x", values: x }], prepared.weights);
 *   d.moran.z; d.lagrange.robustLag.p; d.suggestion;
 */
export function regressionDiagnostics(
  y: ArrayLike<number>,
  covariates: readonly Covariate[],
  weights: SpatialWeights,
  options: { alpha?: number } = {},
): RegressionDiagnostics {
  const alpha = options.alpha ?? 0.05;
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1; got ${String(alpha)}.`);
  const n = weights.ids.length;
  if (y.length !== n) throw new Error(`Expected ${n} values of ${RESPONSE} (one per region of the weights); got ${y.length}.`);
  const parts = fitParts(y, covariates);
  const { fit, X, xtxInverse: A, qr } = parts;
  const k = fit.k;
  if (n < k + 2) throw new TooFewRegionsError(n, k, k + 2, "Moran's I of regression residuals");
  const e = fit.residuals;

  let S0 = 0;
  let traceW = 0;
  let traceWWt = 0; // Σ w_ij² = tr(WW') = tr(W'W)
  let traceWW = 0; // Σ w_ij w_ji = tr(WW)
  for (let i = 0; i < n; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      const w = weights.weights[p];
      S0 += w;
      traceWWt += w * w;
      traceWW += w * (j === i ? w : weightAt(weights, j, i));
      if (j === i) traceW += w;
    }
  }
  if (!(S0 > 0)) throw new Error("The weights have no links (S0 = 0); no region has a neighbour.");
  const ee = dot(e, e);
  const yy = dot(parts.y, parts.y);
  if (!(ee > 1e-24 * yy)) throw new Error(`The covariates fit ${RESPONSE} exactly (every residual is zero); there is no residual pattern to test.`);

  // Moran's I of the residuals and its exact moments.
  const We = lag(weights, e);
  const eWe = dot(e, We);
  const I = ((n / S0) * eWe) / ee;
  const WX = lagColumns(X, (v) => lag(weights, v));
  const WtX = lagColumns(X, (v) => transposedLag(weights, v));
  const Xt = X.transpose();
  const C = Xt.mmul(WX); // X'WX
  const AC = A.mmul(C);
  const ACt = A.mmul(C.transpose());
  const traceMW = traceW - trace(AC);
  const sumTraces =
    traceWWt +
    traceWW -
    trace(A.mmul(WX.transpose().mmul(WX))) -
    trace(A.mmul(WtX.transpose().mmul(WtX))) -
    2 * trace(A.mmul(WtX.transpose().mmul(WX))) +
    trace(AC.mmul(ACt)) +
    trace(AC.mmul(AC));
  const scale = n / S0;
  const expectedI = (scale * traceMW) / (n - k);
  const variance = (scale * scale * (sumTraces + traceMW * traceMW)) / ((n - k) * (n - k + 2)) - expectedI * expectedI;
  const z = (I - expectedI) / Math.sqrt(variance);
  const tails = normalTailProbabilities(z);
  const moran: ResidualMoranResult = { I, expectedI, variance, z, pTwoSided: tails.pTwoSided, pGreater: tails.pGreater };

  // Lagrange multiplier tests.
  const sigma2 = ee / n;
  const T = traceWWt + traceWW;
  const Wy = lag(weights, parts.y);
  const Wfitted = Matrix.columnVector(Array.from(lag(weights, fit.fitted)));
  // ‖M Wŷ‖²: the residual sum of squares of Wŷ on X, through the same QR.
  const residualOfLag = Wfitted.sub(X.mmul(qr.solve(Wfitted))).to1DArray();
  const NJ = (dot(residualOfLag, residualOfLag) + T * sigma2) / sigma2;
  const dError = eWe / sigma2;
  const dLag = dot(e, Wy) / sigma2;
  const lmError = (dError * dError) / T;
  const robustLag = ((dLag - dError) * (dLag - dError)) / (NJ - T);
  const lagrange: LagrangeMultiplierTests = {
    error: lagrangeTest(lmError, 1),
    lag: lagrangeTest((dLag * dLag) / NJ, 1),
    robustError: lagrangeTest((dError - (T / NJ) * dLag) ** 2 / (T * (1 - T / NJ)), 1),
    robustLag: lagrangeTest(robustLag, 1),
    combined: lagrangeTest(robustLag + lmError, 2),
  };
  return { fit, moran, lagrange, suggestion: suggestModel(lagrange, alpha) };
}

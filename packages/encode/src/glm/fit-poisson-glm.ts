import { TuningforkError, checkBoolean, checkFinite, checkInteger, checkNonNegative, checkPositive, resolveOptions, toFloat64 } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { hessianInverse, irls } from './poisson-irls.js';
import type { PoissonProblem } from './poisson-irls.js';
import { logFactorial } from '../internal/log-factorial.js';

/** Options of {@link fitPoissonGLM}. */
export interface FitPoissonGLMOptions {
  /** Ridge penalty λ in Σ(μ − y·log μ) + (λ/2)‖β‖² (slopes only; standardised scale when `standardize`). @defaultValue 0 */
  penalty?: number;
  /** Penalise coefficients of columns scaled to unit SD (divisor n); estimates stay in raw units. @defaultValue true */
  standardize?: boolean;
  /** Log exposure added to every linear predictor (e.g. log bin width in s, so exp(intercept) is a rate in Hz). @defaultValue 0 */
  offset?: number;
  /** Convergence: relative change of the penalised deviance. @defaultValue 1e-8 */
  tol?: number;
  /** @defaultValue 50 */
  maxIterations?: number;
}

/** Result of {@link fitPoissonGLM}: log-link coefficients in raw column units. */
export interface PoissonGLMResult {
  readonly intercept: number;
  readonly coefficients: Float64Array;
  /** Wald standard errors from the inverse penalised Fisher information. */
  readonly standardErrors: Float64Array;
  readonly interceptStandardError: number;
  /** Poisson deviance 2Σ[y log(y/μ) − (y − μ)], and that of the intercept-only model. */
  readonly deviance: number;
  readonly nullDeviance: number;
  /**
   * −2·log-likelihood + 2(p + 1) (with p + 1 parameters, as for an unpenalised fit). The
   * log-likelihood uses log Γ(y + 1) = log y!, so non-integer counts get its continuous extension
   * (as statsmodels' Poisson family; common practice).
   */
  readonly aic: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly penalty: number;
  readonly nUsed: number;
}

const DEFAULTS = Object.freeze({ penalty: 0, standardize: true, offset: 0, tol: 1e-8, maxIterations: 50 });


/**
 * Poisson regression with log link (optionally ridge-penalised) by IRLS, for a dense design.
 *
 * Columns are centred internally for conditioning (the intercept absorbs it; results are
 * reported for the raw columns). IRLS starts at β₀ = log(ȳ) − offset, halves steps that raise
 * the penalised objective, caps |η| at 30, and stops when the relative change of the penalised
 * deviance is below `tol` (INFERENCE.md §4.5).
 *
 * @param x - n × p design without intercept column.
 * @param y - Counts (non-negative; NaN rows are dropped).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH; TF_BAD_VALUE (negative count, naming the row);
 *   TF_DEGENERATE_SIGNAL (all counts zero: the intercept would be −∞); TF_FIT_FAILED (no
 *   convergence, or a singular Fisher information with penalty 0).
 *
 * References
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed., §2.5. Chapman & Hall.
 * - Dobson, A. J. (1990). An Introduction to Generalized Linear Models. Chapman & Hall.
 */
export function fitPoissonGLM(x: Matrix, y: ArrayLike<number>, options: FitPoissonGLMOptions = {}): PoissonGLMResult {
  const fn = 'fitPoissonGLM';
  const o = resolveOptions(fn, DEFAULTS, options);
  const lam = checkNonNegative(fn, 'penalty', o.penalty);
  const std = checkBoolean(fn, 'standardize', o.standardize);
  const off = checkFinite(fn, 'offset', o.offset);
  const tol = checkPositive(fn, 'tol', o.tol);
  const maxIt = checkInteger(fn, 'maxIterations', o.maxIterations, 1);
  const yy = toFloat64(y);
  const { rows: n0, cols: p, data } = x;
  if (yy.length !== n0 || data.length !== n0 * p) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: X is ${n0} × ${p} but y has ${yy.length} values.`, { rows: n0, cols: p, y: yy.length });
  }
  const keep: number[] = [];
  let ySum = 0;
  for (let i = 0; i < n0; i++) {
    const v = yy[i]!;
    if (Number.isNaN(v)) continue;
    if (!(v >= 0) || !Number.isFinite(v)) throw new TuningforkError('TF_BAD_VALUE', `${fn}: count at row ${i} is ${v}; counts must be finite and ≥ 0.`, { row: i, value: v });
    let ok = true;
    for (let j = 0; ok && j < p; j++) ok = Number.isFinite(data[i * p + j]);
    if (!ok) continue;
    keep.push(i);
    ySum += v;
  }
  const n = keep.length;
  if (n <= p + 1) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${n} usable rows for ${p + 1} parameters.`, { nUsed: n });
  if (!(ySum > 0)) throw new TuningforkError('TF_DEGENERATE_SIGNAL', `${fn}: all ${n} counts are zero; the log rate is −∞ and no model can be fitted.`, { nUsed: n });
  const mean = new Float64Array(p);
  const sq = new Float64Array(p);
  for (const i of keep) for (let j = 0; j < p; j++) mean[j] = mean[j]! + data[i * p + j]! / n;
  for (const i of keep) for (let j = 0; j < p; j++) sq[j] = sq[j]! + (data[i * p + j]! - mean[j]!) ** 2 / n;
  const rowPtr = new Int32Array(n + 1);
  const colIdx = new Int32Array(n * p);
  const values = new Float64Array(n * p);
  const yk = new Float64Array(n);
  keep.forEach((i, r) => {
    rowPtr[r + 1] = (r + 1) * p;
    yk[r] = yy[i]!;
    for (let j = 0; j < p; j++) {
      colIdx[r * p + j] = j;
      values[r * p + j] = data[i * p + j]! - mean[j]!;
    }
  });
  const pen = Float64Array.from(sq, (v) => lam * (std ? v : 1));
  const prob: PoissonProblem = { n, p, rowPtr, colIdx, values, y: yk, offset: off, rowValid: null };
  const ranges = Int32Array.from([0, n]);
  const eta = new Float64Array(n);
  const fit = irls(prob, ranges, pen, { tol, maxIterations: maxIt }, eta, new Float64Array(n));
  if (!fit.converged) throw new TuningforkError('TF_FIT_FAILED', `${fn}: IRLS did not converge in ${maxIt} iterations (relative deviance change ≥ ${tol}). Try a penalty > 0.`, { iterations: fit.iterations });
  const cov = hessianInverse(fit.hessian, p + 1);
  if (!cov) throw new TuningforkError('TF_FIT_FAILED', `${fn}: the Fisher information is singular (collinear or empty columns); use a penalty > 0.`, {});
  const coef = fit.beta.slice(1);
  let icpt = fit.beta[0]!;
  for (let j = 0; j < p; j++) icpt -= mean[j]! * coef[j]!;
  const q1 = p + 1;
  const se = new Float64Array(p);
  for (let j = 0; j < p; j++) se[j] = Math.sqrt(cov[(j + 1) * q1 + j + 1]!);
  // Var(b0 − mᵀb) with the full covariance
  const a = new Float64Array(q1);
  a[0] = 1;
  for (let j = 0; j < p; j++) a[j + 1] = -mean[j]!;
  let v0 = 0;
  for (let i = 0; i < q1; i++) for (let j = 0; j < q1; j++) v0 += a[i]! * cov[i * q1 + j]! * a[j]!;
  // null deviance and log-likelihood
  const mu0 = ySum / n;
  let nullDev = 0;
  let ll = 0;
  for (let r = 0; r < n; r++) {
    const yr = yk[r]!;
    nullDev += 2 * ((yr > 0 ? yr * Math.log(yr / mu0) : 0) - (yr - mu0));
    const mu = Math.exp(eta[r]!);
    ll += yr * eta[r]! - mu - logFactorial(yr);
  }
  return {
    intercept: icpt, coefficients: coef, standardErrors: se, interceptStandardError: Math.sqrt(v0),
    deviance: fit.deviance, nullDeviance: nullDev, aic: -2 * ll + 2 * q1, iterations: fit.iterations, converged: fit.converged, penalty: lam, nUsed: n,
  };
}

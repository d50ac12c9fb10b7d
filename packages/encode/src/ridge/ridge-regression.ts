import { TuningforkError, checkBoolean, checkNonNegative, resolveOptions, toFloat64 } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { symmetricEigen } from '../linalg/symmetric-eigen.js';

/** Options of {@link ridgeRegression}. */
export interface RidgeRegressionOptions {
  /** Penalty λ ≥ 0 in ‖y − b₀ − Xβ‖² + λ‖β‖² (β on the standardised scale when `standardize`). @defaultValue 0 */
  penalty?: number;
  /** Fit an unpenalised intercept (columns and y are centred). @defaultValue true */
  intercept?: boolean;
  /** Scale columns to unit SD (divisor n) before penalising; estimates are returned in raw units. @defaultValue true */
  standardize?: boolean;
}

/** Result of {@link ridgeRegression}; coefficients in the units of the raw columns. */
export interface RidgeRegressionResult {
  readonly coefficients: Float64Array;
  /** NaN when `intercept` is false. */
  readonly intercept: number;
  /** Standard errors under independent homoscedastic errors: σ̂²(A+λ)⁻¹A(A+λ)⁻¹ (OLS: σ̂²A⁻¹). */
  readonly standardErrors: Float64Array;
  readonly interceptStandardError: number;
  readonly residualSS: number;
  /** σ̂ = √(RSS / (n − df − [intercept])). */
  readonly residualSD: number;
  /** 1 − RSS/TSS (TSS about the mean with an intercept, about 0 without). */
  readonly rSquared: number;
  /** Effective degrees of freedom Σ Λᵢ/(Λᵢ + λ) of the slopes. */
  readonly df: number;
  readonly penalty: number;
  readonly nUsed: number;
}

const DEFAULTS = Object.freeze({ penalty: 0, intercept: true, standardize: true });

/**
 * Ordinary least squares (penalty 0) or ridge regression of y on the columns of X, with an
 * unpenalised intercept, by one eigendecomposition of the centred and scaled Gram matrix.
 *
 * Method: columns are centred (two-pass means) and scaled to unit SD, so cond(ZᵀZ) is that of
 * the correlation matrix (Longley: 1.2·10⁴ instead of 2.4·10¹⁹ for raw XᵀX); ZᵀZ = VΛVᵀ gives
 * β = V·diag(1/(Λ + λ))·VᵀZᵀy, df = ΣΛ/(Λ + λ) (INFERENCE.md §4.2). Reaches ≥ 11 significant
 * digits on NIST StRD Longley.
 *
 * @param x - n × p row-major design (without an intercept column).
 * @param y - n responses. Rows where y or any x is NaN are dropped (counted in `nUsed`).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (y length ≠ rows); TF_TOO_FEW_SAMPLES (n ≤ p with
 *   penalty 0, or fewer than 2 usable rows); TF_FIT_FAILED when penalty is 0 and the columns are
 *   collinear (smallest eigenvalue ≤ 1e-13 of the largest) or a column is constant.
 *
 * References
 * - Hoerl, A. E. & Kennard, R. W. (1970). Ridge regression: biased estimation for nonorthogonal
 *   problems. Technometrics 12(1):55–67. doi:10.1080/00401706.1970.10488634
 * - Longley, J. W. (1967). An appraisal of least squares programs for the electronic computer
 *   from the point of view of the user. JASA 62(319):819–841. doi:10.1080/01621459.1967.10500896
 */
export function ridgeRegression(x: Matrix, y: ArrayLike<number>, options: RidgeRegressionOptions = {}): RidgeRegressionResult {
  const fn = 'ridgeRegression';
  const o = resolveOptions(fn, DEFAULTS, options);
  const lamAbs = checkNonNegative(fn, 'penalty', o.penalty);
  const useIcpt = checkBoolean(fn, 'intercept', o.intercept);
  const useStd = checkBoolean(fn, 'standardize', o.standardize);
  const yy = toFloat64(y);
  const { rows, cols: p, data } = x;
  if (yy.length !== rows || data.length !== rows * p) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: X is ${rows} × ${p} (data length ${data.length}) but y has ${yy.length} values.`, { rows, cols: p, y: yy.length });
  }
  const keep: number[] = [];
  for (let i = 0; i < rows; i++) {
    let ok = Number.isFinite(yy[i]);
    for (let j = 0; ok && j < p; j++) ok = Number.isFinite(data[i * p + j]);
    if (ok) keep.push(i);
  }
  const n = keep.length;
  if (n < 2 || (lamAbs === 0 && n <= p + (useIcpt ? 1 : 0))) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${n} usable rows for ${p} columns${useIcpt ? ' plus an intercept' : ''}; least squares needs more rows than parameters (or a penalty > 0).`, { nUsed: n, cols: p });
  }
  // Two-pass centring and scaling.
  const mean = new Float64Array(p);
  let ym = 0;
  if (useIcpt) {
    for (const i of keep) {
      ym += yy[i]!;
      for (let j = 0; j < p; j++) mean[j] = mean[j]! + data[i * p + j]!;
    }
    ym /= n;
    for (let j = 0; j < p; j++) mean[j] = mean[j]! / n;
  }
  const scale = new Float64Array(p).fill(1);
  if (useStd) {
    const ss = new Float64Array(p);
    for (const i of keep) for (let j = 0; j < p; j++) {
      const d = data[i * p + j]! - mean[j]!;
      ss[j] = ss[j]! + d * d;
    }
    for (let j = 0; j < p; j++) {
      const sd = Math.sqrt(ss[j]! / n);
      if (!(sd > 0)) {
        throw new TuningforkError('TF_FIT_FAILED', `${fn}: column ${j} is constant over the ${n} usable rows; it cannot be standardised (drop it).`, { column: j });
      }
      scale[j] = sd;
    }
  }
  const a = new Float64Array(p * p);
  const zy = new Float64Array(p);
  const zrow = new Float64Array(p);
  let tss = 0;
  for (const i of keep) {
    for (let j = 0; j < p; j++) zrow[j] = (data[i * p + j]! - mean[j]!) / scale[j]!;
    const yc = yy[i]! - ym;
    tss += yc * yc;
    for (let j = 0; j < p; j++) {
      zy[j] = zy[j]! + zrow[j]! * yc;
      const zj = zrow[j]!;
      for (let k = j; k < p; k++) a[j * p + k] = a[j * p + k]! + zj * zrow[k]!;
    }
  }
  for (let j = 0; j < p; j++) for (let k = j + 1; k < p; k++) a[k * p + j] = a[j * p + k]!;
  const { values: lam, vectors: v } = symmetricEigen(a, p);
  const lamMax = lam[p - 1] ?? 0;
  if (lamAbs === 0 && p > 0 && !(lam[0]! > 1e-13 * lamMax)) {
    throw new TuningforkError('TF_FIT_FAILED', `${fn}: the columns are collinear (smallest eigenvalue of the standardised Gram ${lam[0]!.toExponential(3)} vs largest ${lamMax.toExponential(3)}); least squares is not identifiable. Drop a column or use a penalty > 0.`, { minEigen: lam[0], maxEigen: lamMax });
  }
  // β = V diag(1/(Λ+λ)) Vᵀ Zᵀy
  const t = new Float64Array(p);
  for (let k = 0; k < p; k++) {
    let s = 0;
    for (let j = 0; j < p; j++) s += v[j * p + k]! * zy[j]!;
    t[k] = s / (lam[k]! + lamAbs);
  }
  const betaStd = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    let s = 0;
    for (let k = 0; k < p; k++) s += v[j * p + k]! * t[k]!;
    betaStd[j] = s;
  }
  let df = 0;
  for (let k = 0; k < p; k++) df += lam[k]! / (lam[k]! + lamAbs);
  // Residuals (two-pass, on the data).
  let rss = 0;
  for (const i of keep) {
    let f = 0;
    for (let j = 0; j < p; j++) f += ((data[i * p + j]! - mean[j]!) / scale[j]!) * betaStd[j]!;
    const r = yy[i]! - ym - f;
    rss += r * r;
  }
  const dfRes = n - df - (useIcpt ? 1 : 0);
  const sigma2 = rss / dfRes;
  // Cov(β_std) = σ² V diag(Λ/(Λ+λ)²) Vᵀ
  const w = new Float64Array(p);
  for (let k = 0; k < p; k++) w[k] = lam[k]! / ((lam[k]! + lamAbs) * (lam[k]! + lamAbs));
  const cov = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = i; j < p; j++) {
    let s = 0;
    for (let k = 0; k < p; k++) s += v[i * p + k]! * w[k]! * v[j * p + k]!;
    cov[i * p + j] = s * sigma2;
    cov[j * p + i] = s * sigma2;
  }
  const coef = new Float64Array(p);
  const se = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    coef[j] = betaStd[j]! / scale[j]!;
    se[j] = Math.sqrt(cov[j * p + j]!) / scale[j]!;
  }
  let icpt = NaN;
  let icptSe = NaN;
  if (useIcpt) {
    icpt = ym;
    for (let j = 0; j < p; j++) icpt -= mean[j]! * coef[j]!;
    // Var(b0) = σ²/n + m̃ᵀ Cov(β_std) m̃ with m̃ = mean/scale
    let q = 0;
    for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) q += (mean[i]! / scale[i]!) * cov[i * p + j]! * (mean[j]! / scale[j]!);
    icptSe = Math.sqrt(sigma2 / n + q);
  }
  let tssOut = tss;
  if (!useIcpt) {
    tssOut = 0;
    for (const i of keep) tssOut += yy[i]! * yy[i]!;
  }
  return {
    coefficients: coef, intercept: icpt, standardErrors: se, interceptStandardError: icptSe,
    residualSS: rss, residualSD: Math.sqrt(sigma2), rSquared: 1 - rss / tssOut, df, penalty: lamAbs, nUsed: n,
  };
}

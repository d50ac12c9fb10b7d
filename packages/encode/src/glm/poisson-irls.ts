/**
 * Internal engine: ridge-penalised Poisson regression with log link by IRLS (Newton–Raphson on
 * the canonical link) on a sparse row matrix with an implicit unpenalised intercept
 * (INFERENCE.md §4.5).
 *
 *   objective(β) = Σ_t (μ_t − y_t·log μ_t) + ½ Σ_j pen_j·β_j²,   log μ_t = β₀ + x_tᵀβ + offset_t
 *
 * Each iteration solves (XᵀWX + P)·Δ = Xᵀ(y − μ) − P·β with W = diag(μ) by Cholesky and halves
 * the step while the objective rises. |η| is capped at 30. Convergence: relative change of the
 * penalised deviance (2·objective + const) below `tol`, as R's glm.fit. A fixed-Hessian variant
 * (modified Newton) reuses a supplied Hessian and only recomputes gradients; it falls back to
 * full IRLS when it stalls.
 */
import { cholesky, choleskyInverse, choleskySolveInPlace } from '../linalg/cholesky.js';
import type { CholeskyFactor } from '../linalg/cholesky.js';
import { convPredict, convScore } from './conv-structure.js';
import { gramWasm } from './gram-kernel.js';
import type { ConvStructure } from './conv-structure.js';

/** Sparse design rows with responses and offsets (log exposure), trusted by the engine. */
export interface PoissonProblem {
  readonly n: number;
  readonly p: number;
  readonly rowPtr: Int32Array;
  readonly colIdx: Int32Array;
  readonly values: Float64Array;
  readonly y: Float64Array;
  /** Per-row offset, or one value for all rows. */
  readonly offset: Float64Array | number;
  /** Rows excluded everywhere (0) — e.g. masked rows — or null. */
  readonly rowValid: Uint8Array | null;
  /**
   * The same matrix as event-term convolutions plus a residual CSR (conv-structure.ts), used for
   * Xβ and Xᵀr when present (fewer operations; equal to rounding). Weighted Grams always use the CSR.
   */
  readonly structure?: ConvStructure | null;
}

/** Row ranges [r0, r1) flattened: ranges[2i], ranges[2i+1]. */
export type RowRanges = Int32Array;

export interface IrlsResult {
  /** Coefficients: intercept first, then p slopes. */
  readonly beta: Float64Array;
  /** Poisson deviance (unpenalised) on the fitted rows. */
  readonly deviance: number;
  readonly objective: number;
  readonly iterations: number;
  readonly converged: boolean;
  /** Penalised Hessian at the solution ((p+1)², row-major), for Wald intervals and warm starts. */
  readonly hessian: Float64Array;
  readonly nRows: number;
  readonly ySum: number;
}

const ETA_CAP = 30;


/**
 * One pass over the rows in ranges: η_t, μ_t = exp(η_t) (arrays indexed by row), the objective
 * Σ(μ − y·η) + ½Σpen·β², and, when g is given, the gradient of −objective (length p+1).
 * Rows without regressors share one exp.
 */
function evaluate(prob: PoissonProblem, ranges: RowRanges, beta: Float64Array, pen: Float64Array, eta: Float64Array, mu: Float64Array, g: Float64Array | null): number {
  if (prob.structure) return evaluateStructured(prob, prob.structure, ranges, beta, pen, eta, mu, g);
  const { rowPtr, colIdx, values, y, rowValid } = prob;
  const b0 = beta[0]!;
  const scalar = typeof prob.offset === 'number';
  const off0 = scalar ? (prob.offset as number) : 0;
  const offs = scalar ? null : (prob.offset as Float64Array);
  let e0 = b0 + off0;
  e0 = e0 > ETA_CAP ? ETA_CAP : e0 < -ETA_CAP ? -ETA_CAP : e0;
  const mu0 = Math.exp(e0);
  let obj = 0;
  let g0 = 0;
  if (g) g.fill(0);
  for (let q = 0; q < ranges.length; q += 2) {
    for (let t = ranges[q]!; t < ranges[q + 1]!; t++) {
      const k0 = rowPtr[t]!;
      const k1 = rowPtr[t + 1]!;
      let e: number;
      let m: number;
      if (k0 === k1 && scalar) {
        e = e0;
        m = mu0;
      } else {
        e = b0 + (scalar ? off0 : offs![t]!);
        for (let k = k0; k < k1; k++) e += values[k]! * beta[colIdx[k]! + 1]!;
        e = e > ETA_CAP ? ETA_CAP : e < -ETA_CAP ? -ETA_CAP : e;
        m = Math.exp(e);
      }
      eta[t] = e;
      mu[t] = m;
      if (rowValid && !rowValid[t]) continue;
      const yt = y[t]!;
      obj += m - yt * e;
      if (g) {
        const r = yt - m;
        g0 += r;
        for (let k = k0; k < k1; k++) {
          const j = colIdx[k]! + 1;
          g[j] = g[j]! + r * values[k]!;
        }
      }
    }
  }
  for (let j = 0; j < pen.length; j++) obj += 0.5 * pen[j]! * beta[j + 1]! * beta[j + 1]!;
  if (g) {
    g[0] = g0;
    for (let j = 0; j < pen.length; j++) g[j + 1] = g[j + 1]! - pen[j]! * beta[j + 1]!;
  }
  return obj;
}

/** The smallest [lo, hi) covering all row ranges (empty ranges: [0, 0)). */
function span(ranges: RowRanges): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let q = 0; q < ranges.length; q += 2) {
    if (ranges[q + 1]! <= ranges[q]!) continue;
    lo = Math.min(lo, ranges[q]!);
    hi = Math.max(hi, ranges[q + 1]!);
  }
  return lo < hi ? [lo, hi] : [0, 0];
}

/** {@link evaluate} with Xβ and Xᵀr through the convolution structure. */
function evaluateStructured(prob: PoissonProblem, s: ConvStructure, ranges: RowRanges, beta: Float64Array, pen: Float64Array, eta: Float64Array, mu: Float64Array, g: Float64Array | null): number {
  const { y, rowValid } = prob;
  const { rowPtr, colIdx, values, xb, r } = s;
  const b0 = beta[0]!;
  const scalar = typeof prob.offset === 'number';
  const off0 = scalar ? (prob.offset as number) : 0;
  const offs = scalar ? null : (prob.offset as Float64Array);
  const [lo, hi] = span(ranges);
  convPredict(s, beta, lo, hi);
  let obj = 0;
  let g0 = 0;
  if (g) {
    g.fill(0);
    r.fill(0, lo, hi);
  }
  if (values.length === 0 && scalar && !rowValid) {
    // Every column is in the structure and no row is masked: η = β₀ + offset + (Xβ)_t. Two
    // loops on purpose: one loop with the gradient test inside made 40 GLMs 7 % slower.
    const base = b0 + off0;
    for (let q = 0; q < ranges.length; q += 2) {
      const t1 = ranges[q + 1]!;
      if (g) {
        for (let t = ranges[q]!; t < t1; t++) {
          let e = base + xb[t]!;
          e = e > ETA_CAP ? ETA_CAP : e < -ETA_CAP ? -ETA_CAP : e;
          const m = Math.exp(e);
          eta[t] = e;
          mu[t] = m;
          const yt = y[t]!;
          obj += m - yt * e;
          const rt = yt - m;
          r[t] = rt;
          g0 += rt;
        }
      } else {
        for (let t = ranges[q]!; t < t1; t++) {
          let e = base + xb[t]!;
          e = e > ETA_CAP ? ETA_CAP : e < -ETA_CAP ? -ETA_CAP : e;
          const m = Math.exp(e);
          eta[t] = e;
          mu[t] = m;
          obj += m - y[t]! * e;
        }
      }
    }
  } else for (let q = 0; q < ranges.length; q += 2) {
    for (let t = ranges[q]!; t < ranges[q + 1]!; t++) {
      const k0 = rowPtr[t]!;
      const k1 = rowPtr[t + 1]!;
      let e = b0 + (scalar ? off0 : offs![t]!) + xb[t]!;
      for (let k = k0; k < k1; k++) e += values[k]! * beta[colIdx[k]! + 1]!;
      e = e > ETA_CAP ? ETA_CAP : e < -ETA_CAP ? -ETA_CAP : e;
      const m = Math.exp(e);
      eta[t] = e;
      mu[t] = m;
      if (rowValid && !rowValid[t]) continue;
      const yt = y[t]!;
      obj += m - yt * e;
      if (g) {
        const rt = yt - m;
        r[t] = rt;
        g0 += rt;
        for (let k = k0; k < k1; k++) {
          const j = colIdx[k]! + 1;
          g[j] = g[j]! + rt * values[k]!;
        }
      }
    }
  }
  for (let j = 0; j < pen.length; j++) obj += 0.5 * pen[j]! * beta[j + 1]! * beta[j + 1]!;
  if (g) {
    convScore(s, g, lo, hi);
    g[0] = g0;
    for (let j = 0; j < pen.length; j++) g[j + 1] = g[j + 1]! - pen[j]! * beta[j + 1]!;
  }
  return obj;
}

/** Weighted Gram XᵀWX (with intercept) over ranges into h ((p+1)², full), without penalty. */
export function weightedGram(prob: PoissonProblem, ranges: RowRanges, muArr: Float64Array, h: Float64Array, stride = 1): void {
  if (!gramWasm(prob, ranges, muArr, prob.rowValid, h, stride)) weightedGramJs(prob, ranges, muArr, h, stride);
}

/** The JavaScript loop of {@link weightedGram} (the fallback without WebAssembly; same bits). */
export function weightedGramJs(prob: PoissonProblem, ranges: RowRanges, muArr: Float64Array, h: Float64Array, stride = 1): void {
  const { rowPtr, colIdx, values, rowValid } = prob;
  const q1 = prob.p + 1;
  for (let q = 0; q < ranges.length; q += 2) {
    for (let t = ranges[q]! + ((stride - 1) >> 1); t < ranges[q + 1]!; t += stride) {
      if (rowValid && !rowValid[t]) continue;
      const mu = stride * muArr[t]!;
      h[0] = h[0]! + mu;
      const k1 = rowPtr[t + 1]!;
      for (let a = rowPtr[t]!; a < k1; a++) {
        const ja = colIdx[a]! + 1;
        const wa = mu * values[a]!;
        h[ja] = h[ja]! + wa; // row 0
        const base = ja * q1;
        for (let b = a; b < k1; b++) {
          const idx = base + colIdx[b]! + 1;
          h[idx] = h[idx]! + wa * values[b]!;
        }
      }
    }
  }
}

/** Symmetrise (upper → lower, and column 0 from row 0) and add the penalty diagonal. */
export function finishHessian(h: Float64Array, q1: number, pen: Float64Array): void {
  for (let i = 0; i < q1; i++) for (let j = i + 1; j < q1; j++) h[j * q1 + i] = h[i * q1 + j]!;
  for (let j = 0; j < pen.length; j++) h[(j + 1) * q1 + j + 1] = h[(j + 1) * q1 + j + 1]! + pen[j]!;
}

/** Poisson deviance 2Σ[y log(y/μ) − (y − μ)] over ranges (0·log 0 = 0). */
export function deviance(prob: PoissonProblem, ranges: RowRanges, eta: Float64Array): number {
  const { y, rowValid } = prob;
  let d = 0;
  for (let q = 0; q < ranges.length; q += 2) {
    for (let t = ranges[q]!; t < ranges[q + 1]!; t++) {
      if (rowValid && !rowValid[t]) continue;
      const yt = y[t]!;
      const mu = Math.exp(eta[t]!);
      d += (yt > 0 ? yt * (Math.log(yt) - eta[t]!) : 0) - (yt - mu);
    }
  }
  return 2 * d;
}

export interface IrlsOptions {
  readonly tol: number;
  readonly maxIterations: number;
  /** Use this penalised Hessian throughout (modified Newton) before falling back to IRLS. */
  readonly fixedHessian?: Float64Array;
  readonly start?: Float64Array;
  /** Compute the penalised Hessian at the solution (one extra pass). @defaultValue true */
  readonly wantHessian?: boolean;
  /** Iterations that use `fixedHessian` before switching to exact IRLS Hessians. @defaultValue Infinity */
  readonly fixedIterations?: number;
  /** Rows used for the working Hessian: every stride-th (weights × stride); 1 = all. @defaultValue 1 */
  readonly hessianStride?: number;
  /**
   * Newton-decrement stop: in an iteration whose Hessian was computed at the iterate (from every
   * row or every stride-th row, not kept), if the decrease of the penalised deviance the quadratic
   * model predicts, gᵀH⁻¹g, is below `tol` relative, take that Newton step without evaluating it
   * and stop: near the optimum the step leaves a gap of the order of the square of the decrement
   * plus the decrement times the row-sampled Hessian's relative error (Boyd & Vandenberghe 2004,
   * Convex Optimization, §9.5). `eta`,
   * `mu` and `objective` then refer to the iterate before that step: for callers that only need
   * the coefficients. @defaultValue false
   */
  readonly newtonFinish?: boolean;
  /** Compute the deviance at the end (one pass with exp); NaN in the result otherwise. @defaultValue true */
  readonly wantDeviance?: boolean;
}

/** Fit on the rows in `ranges`; `pen` (length p) is the penalty diagonal of the slopes. */
export function irls(prob: PoissonProblem, ranges: RowRanges, pen: Float64Array, opts: IrlsOptions, eta: Float64Array, mu: Float64Array): IrlsResult {
  const p = prob.p;
  const q1 = p + 1;
  const { y, rowValid } = prob;
  let ySum = 0;
  let expoSum = 0;
  let nRows = 0;
  let devConst = 0; // 2Σ(y log y − y): penalised deviance = 2·objective + devConst
  for (let q = 0; q < ranges.length; q += 2) {
    for (let t = ranges[q]!; t < ranges[q + 1]!; t++) {
      if (rowValid && !rowValid[t]) continue;
      const yt = y[t]!;
      if (yt > 0) devConst += 2 * (yt * Math.log(yt) - yt);
      ySum += yt;
      if (typeof prob.offset !== 'number') expoSum += Math.exp(prob.offset[t]!);
      nRows++;
    }
  }
  if (typeof prob.offset === 'number') expoSum = nRows * Math.exp(prob.offset);
  let beta: Float64Array;
  if (opts.start) beta = Float64Array.from(opts.start);
  else {
    beta = new Float64Array(q1);
    beta[0] = Math.log(Math.max(ySum, 1e-10) / expoSum);
  }
  const g = new Float64Array(q1);
  const gTrial = new Float64Array(q1);
  let obj = evaluate(prob, ranges, beta, pen, eta, mu, g);
  const h = new Float64Array(q1 * q1);
  let fixed: CholeskyFactor | null = null;
  if (opts.fixedHessian) {
    const f = cholesky(opts.fixedHessian, q1);
    fixed = typeof f === 'number' ? null : f;
  }
  let it = 0;
  let converged = false;
  let fixedFails = 0;
  let stride = opts.hessianStride ?? 1;
  const trial = new Float64Array(q1);
  while (it < opts.maxIterations) {
    it++;
    if (fixed && opts.fixedHessian && it > (opts.fixedIterations ?? Infinity)) fixed = null;
    let fac: CholeskyFactor | null = fixed;
    if (!fac) {
      h.fill(0);
      weightedGram(prob, ranges, mu, h, stride);
      finishHessian(h, q1, pen);
      const f = cholesky(h, q1);
      if (typeof f === 'number') {
        // Singular Hessian (e.g. a column never active on these rows): add a tiny ridge.
        for (let j = 0; j < q1; j++) h[j * q1 + j] = h[j * q1 + j]! * (1 + 1e-10) + 1e-10;
        const f2 = cholesky(h, q1);
        if (typeof f2 === 'number') break;
        fac = f2;
      } else fac = f;
    }
    const step = choleskySolveInPlace(fac, Float64Array.from(g));
    if (opts.newtonFinish && fac !== fixed) {
      let decrement = 0;
      for (let j = 0; j < q1; j++) decrement += g[j]! * step[j]!;
      if (decrement / (Math.abs(2 * obj + devConst) + 0.1) < opts.tol) {
        for (let j = 0; j < q1; j++) beta[j] = beta[j]! + step[j]!;
        converged = true;
        break;
      }
    }
    let scale = 1;
    let objNew = Infinity;
    for (let half = 0; half < 30; half++) {
      for (let j = 0; j < q1; j++) trial[j] = beta[j]! + scale * step[j]!;
      objNew = evaluate(prob, ranges, trial, pen, eta, mu, gTrial);
      if (objNew <= obj + 1e-12 * Math.abs(obj)) break;
      scale /= 2;
    }
    if (!(objNew <= obj + 1e-12 * Math.abs(obj))) {
      evaluate(prob, ranges, beta, pen, eta, mu, g);
      if (fixed) {
        fixed = null; // stalled: switch to full IRLS
        continue;
      }
      converged = true; // no descent possible: at the optimum to rounding
      break;
    }
    beta = Float64Array.from(trial);
    g.set(gTrial);
    const change = Math.abs(2 * (objNew - obj)) / (Math.abs(2 * objNew + devConst) + 0.1);
    obj = objNew;
    if (fixed && scale < 1) fixedFails++;
    if (fixed && fixedFails > 2) fixed = null;
    if (scale < 0.125) stride = 1; // a poor working Hessian: use every row from now on
    // With an inexact working Hessian (kept fixed, or from every stride-th row) convergence is
    // linear, so a small change does not yet mean a small error: demand a change 100 times smaller.
    const inexact = fixed !== null || stride > 1;
    if (change < (inexact ? opts.tol * 1e-2 : opts.tol)) {
      converged = true;
      break;
    }
  }
  // Hessian at the solution.
  let hess = new Float64Array(0);
  if (opts.wantHessian ?? true) {
    h.fill(0);
    weightedGram(prob, ranges, mu, h);
    finishHessian(h, q1, pen);
    hess = Float64Array.from(h);
  }
  return { beta, deviance: opts.wantDeviance ?? true ? deviance(prob, ranges, eta) : NaN, objective: obj, iterations: it, converged, hessian: hess, nRows, ySum };
}

/** Inverse of a penalised Hessian (Wald covariance), or null when not positive definite. */
export function hessianInverse(h: Float64Array, q1: number): Float64Array | null {
  const f = cholesky(h, q1);
  return typeof f === 'number' ? null : choleskyInverse(f);
}

/** η and μ over ranges for coefficients beta (exported for test-fold deviance). */
export function predictEta(prob: PoissonProblem, ranges: RowRanges, beta: Float64Array, eta: Float64Array, mu: Float64Array): void {
  evaluate(prob, ranges, beta, new Float64Array(prob.p), eta, mu, null);
}

/** Unpenalised score Σ(y − μ)·[1, x] over ranges from cached μ, with Σy and the row count. */
export function scoreOn(prob: PoissonProblem, ranges: RowRanges, mu: Float64Array): { g: Float64Array; ySum: number; nRows: number } {
  const s = prob.structure;
  const { y, rowValid } = prob;
  const { rowPtr, colIdx, values } = s ?? prob;
  const [lo, hi] = span(ranges);
  if (s) s.r.fill(0, lo, hi);
  const g = new Float64Array(prob.p + 1);
  let ySum = 0;
  let nRows = 0;
  for (let q = 0; q < ranges.length; q += 2) {
    for (let t = ranges[q]!; t < ranges[q + 1]!; t++) {
      if (rowValid && !rowValid[t]) continue;
      const r = y[t]! - mu[t]!;
      if (s) s.r[t] = r;
      ySum += y[t]!;
      nRows++;
      g[0] = g[0]! + r;
      for (let k = rowPtr[t]!; k < rowPtr[t + 1]!; k++) {
        const j = colIdx[k]! + 1;
        g[j] = g[j]! + r * values[k]!;
      }
    }
  }
  if (s) convScore(s, g, lo, hi);
  return { g, ySum, nRows };
}

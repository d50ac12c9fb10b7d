import { TuningforkError, checkBoolean, checkInteger, checkNonNegative, checkOneOf, checkPositive, checkRange, formatValue, resolveOptions, toFloat64 } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import type { EncodingDesign } from '../design/design-matrix.js';
import { blockedFolds } from '../cv/blocked-folds.js';
import type { FoldLayout } from '../cv/blocked-folds.js';
import type { CellSignal } from '../ridge/prepare.js';
import type { KernelEstimate } from '../ridge/kernels.js';
import { normalQuantile } from '@tuningfork/stats';
import { deviance, finishHessian, hessianInverse, irls, predictEta, scoreOn, weightedGram } from './poisson-irls.js';
import { cholesky, choleskySolveInPlace } from '../linalg/cholesky.js';
import type { PoissonProblem } from './poisson-irls.js';

/** Options of {@link poissonGLMCV}. */
export interface PoissonGLMCVOptions {
  /** Contiguous CV blocks. @defaultValue 5 */
  nFolds?: number;
  /** Gap between training and test rows, seconds. @defaultValue NaN (longest kernel) */
  gapSec?: number;
  /** Times where blocks may be cut (trial starts). @defaultValue [] */
  foldCutTimes?: ArrayLike<number>;
  /** Ridge penalty λ on standardised slopes: Σ(μ − y log μ) + (λ/2)‖β_std‖². @defaultValue 1 */
  penalty?: number;
  /** Refit without each group for cross-validated Δ deviance explained (costly). @defaultValue false */
  contributions?: boolean;
  /** Confidence level of the Wald kernel intervals. @defaultValue 0.95 */
  confidence?: number;
  /** Convergence tolerance (relative change of penalised deviance). @defaultValue 1e-8 */
  tol?: number;
  /** @defaultValue 50 */
  maxIterations?: number;
  /**
   * 'exact': every fold is fitted to convergence (warm-started from the full-data fit).
   * 'newton-step': one Newton step from the full-data fit with the fold's exact Hessian there
   * (approximate cross-validation; error second order in the fold's change of coefficients,
   * several times faster). @defaultValue 'exact'
   */
  foldFits?: 'exact' | 'newton-step';
}

/** Cross-validated Poisson GLM of one unit. Kernels are log-rate gains (multiplicative e^k). */
export interface PoissonCellFit {
  readonly name: string;
  readonly nUsed: number;
  readonly nSpikes: number;
  /** 1 − Σ test deviance / Σ test deviance of the training-mean rate. NaN when skipped. */
  readonly cvDevianceExplained: number;
  /** Cross-validated log-likelihood gain over the training-mean rate, bits per spike. */
  readonly bitsPerSpike: number;
  /** Per group: cvDevianceExplained(full) − cvDevianceExplained(without g); NaN unless contributions. */
  readonly deltaDeviance: Float64Array;
  /** Full-data fit: log rate (Hz) at zero regressors and raw-unit slopes, with Wald SEs. */
  readonly intercept: number;
  readonly coefficients: Float64Array;
  readonly coefficientSE: Float64Array;
  readonly deviance: number;
  readonly nullDeviance: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly kernels: readonly KernelEstimate[];
  readonly warnings: readonly ResultWarning[];
}

export interface PoissonGLMCVResult {
  readonly cells: readonly PoissonCellFit[];
  readonly groups: readonly string[];
  readonly folds: FoldLayout;
  readonly penalty: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  nFolds: 5, gapSec: NaN, foldCutTimes: [] as ArrayLike<number>, penalty: 1, contributions: false, confidence: 0.95, tol: 1e-8, maxIterations: 50,
  foldFits: 'exact' as 'exact' | 'newton-step',
});

interface ColStats { readonly s: Float64Array; readonly ss: Float64Array; readonly n: number }

function colStats(d: EncodingDesign, r0: number, r1: number, valid: Uint8Array | null): ColStats {
  const s = new Float64Array(d.nCols);
  const ss = new Float64Array(d.nCols);
  let n = 0;
  for (let t = r0; t < r1; t++) {
    if (valid && !valid[t]) continue;
    n++;
    for (let k = d.rowPtr[t]!; k < d.rowPtr[t + 1]!; k++) {
      const j = d.colIdx[k]!;
      const v = d.values[k]!;
      s[j] = s[j]! + v;
      ss[j] = ss[j]! + v * v;
    }
  }
  return { s, ss, n };
}

function penaltyFrom(lam: number, tot: ColStats, ex: ColStats | null): Float64Array {
  const p = tot.s.length;
  const out = new Float64Array(p);
  const n = tot.n - (ex ? ex.n : 0);
  for (let j = 0; j < p; j++) {
    const s = tot.s[j]! - (ex ? ex.s[j]! : 0);
    const ss = tot.ss[j]! - (ex ? ex.ss[j]! : 0);
    const v = Math.max(0, ss / n - (s / n) ** 2);
    out[j] = lam * v;
  }
  return out;
}

/**
 * Ridge-penalised Poisson GLMs of binned spike counts with blocked cross-validation.
 *
 * log μ_t = β₀ + x_tᵀβ + log Δt (Δt = 1/binRate, so e^β₀ is a rate in Hz). Each unit is fitted on
 * all rows by IRLS (INFERENCE.md §4.5; the working Hessian uses every k-th row, k ≈ n/30000,
 * which keeps Newton-like convergence at a fraction of the cost; the objective and gradient are
 * always exact). Every fold's training rows (rows farther than `gapSec` from the test block)
 * then start from one Newton step off the full-data solution, with the exact full-data Hessian
 * minus that of the excluded rows, and iterate with that Hessian kept (modified Newton; full
 * IRLS if it stalls). With a kept or row-sampled Hessian convergence is linear, so the stopping
 * rule is a relative change of the penalised deviance below tol/100; with the default tol this
 * gives cvDevianceExplained to ~1e-6 absolute. `foldFits: 'newton-step'` stops after the first
 * step (approximate CV). Test deviance is compared with the training-mean rate:
 * cvDevianceExplained = 1 − ΣD_test/ΣD_test,const, bitsPerSpike = (ΣD_test,const − ΣD_test)/(2·n_spikes·ln 2)
 * (INFERENCE.md §4.3). The penalty applies to coefficients of columns scaled to unit SD on the
 * training rows. Kernels are log-rate gains with Wald intervals from the inverse penalised
 * Fisher information (conditionally independent Poisson bins assumed; overdispersion and
 * spike-history effects are not modelled).
 *
 * Units whose counts are all zero or constant are skipped with TF_DEGENERATE_SIGNAL in their
 * warnings (NaN results); NaN counts are masked and counted.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH; TF_BAD_VALUE (a negative or non-finite count);
 *   TF_TOO_FEW_SAMPLES (folds); TF_UNKNOWN_OPTION / TF_BAD_OPTION.
 *
 * References
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed. Chapman & Hall.
 * - Pillow, J. W. et al. (2008). Nature 454:995–999. doi:10.1038/nature07140
 */
export function poissonGLMCV(design: EncodingDesign, units: readonly CellSignal[], options: PoissonGLMCVOptions = {}): PoissonGLMCVResult {
  const fn = 'poissonGLMCV';
  const o = resolveOptions(fn, DEFAULTS, options);
  const nFolds = checkInteger(fn, 'nFolds', o.nFolds, 2);
  const lam = checkNonNegative(fn, 'penalty', o.penalty);
  const contributions = checkBoolean(fn, 'contributions', o.contributions);
  const conf = checkRange(fn, 'confidence', o.confidence, 0.5, 0.9999);
  const tol = checkPositive(fn, 'tol', o.tol);
  const maxIt = checkInteger(fn, 'maxIterations', o.maxIterations, 1);
  const foldFits = checkOneOf(fn, 'foldFits', o.foldFits, ['exact', 'newton-step']);
  if (!Array.isArray(units) || units.length === 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: units must be a non-empty array, got ${formatValue(units)}.`, {});
  const n = design.nRows;
  const p = design.nCols;
  const gapSec = Number.isNaN(o.gapSec) ? design.maxKernelBins / design.binRate : checkNonNegative(fn, 'gapSec', o.gapSec);
  const cutTimes = toFloat64(o.foldCutTimes);
  const cand = Float64Array.from(cutTimes, (t) => Math.floor((t - design.t0) * design.binRate + 0.5)).sort();
  const folds = blockedFolds(n, { nFolds, gapBins: Math.round(gapSec * design.binRate), cutCandidates: cand });
  const gap = folds.gapBins;
  const offset = -Math.log(design.binRate);
  const zq = normalQuantile(0.5 + conf / 2);
  const groupCols = design.groups.map((_, g) => {
    const cols: number[] = [];
    for (let j = 0; j < p; j++) if (design.columnGroup[j] !== g) cols.push(j);
    return Int32Array.from(cols);
  });
  const cells: PoissonCellFit[] = units.map((u, ui) => {
    const name = typeof u?.name === 'string' ? u.name : `unit${ui}`;
    const yv = toFloat64(u.values);
    if (yv.length !== n) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: unit '${name}' has ${yv.length} counts but the design has ${n} rows.`, { cell: name });
    const warnings: ResultWarning[] = [];
    let valid = design.rowValid ? Uint8Array.from(design.rowValid) : null;
    let nNaN = 0;
    let nSpk = 0;
    let yMax = -Infinity;
    let yMin = Infinity;
    const y = new Float64Array(n);
    for (let t = 0; t < n; t++) {
      const v = yv[t]!;
      if (Number.isNaN(v)) {
        valid = valid ?? new Uint8Array(n).fill(1);
        valid[t] = 0;
        nNaN++;
        continue;
      }
      if (!(v >= 0) || !Number.isFinite(v)) throw new TuningforkError('TF_BAD_VALUE', `${fn}: unit '${name}' has count ${v} at row ${t} (t = ${(design.t0 + t / design.binRate).toFixed(3)} s); counts must be finite and ≥ 0.`, { cell: name, row: t });
      y[t] = v;
      if (!valid || valid[t]) {
        nSpk += v;
        if (v > yMax) yMax = v;
        if (v < yMin) yMin = v;
      }
    }
    if (nNaN > 0) warnings.push({ code: 'TF_NON_FINITE', message: `${fn}: unit '${name}' has ${nNaN} NaN counts; masked.`, details: { cell: name, nMissing: nNaN } });
    const nanFit = (): PoissonCellFit => ({
      name, nUsed: 0, nSpikes: nSpk, cvDevianceExplained: NaN, bitsPerSpike: NaN, deltaDeviance: new Float64Array(design.groups.length).fill(NaN),
      intercept: NaN, coefficients: new Float64Array(p).fill(NaN), coefficientSE: new Float64Array(p).fill(NaN), deviance: NaN, nullDeviance: NaN,
      iterations: 0, converged: false, kernels: [], warnings,
    });
    if (!(nSpk > 0) || yMax === yMin) {
      warnings.push({ code: 'TF_DEGENERATE_SIGNAL', message: `${fn}: unit '${name}' has ${nSpk === 0 ? 'no spikes' : 'constant counts'}; a Poisson GLM is not identifiable. Skipped.`, details: { cell: name, nSpikes: nSpk } });
      return nanFit();
    }
    const fitModel = (cols: Int32Array | null) => {
      const sub = cols ? subDesign(design, cols) : design;
      const prob: PoissonProblem = { n, p: sub.nCols, rowPtr: sub.rowPtr, colIdx: sub.colIdx, values: sub.values, y, offset, rowValid: valid };
      const eta = new Float64Array(n);
      const mu = new Float64Array(n);
      const tot = colStats(sub, 0, n, valid);
      const penFull = penaltyFrom(lam, tot, null);
      const stride = Math.max(1, Math.round(n / 30000));
      const full0 = irls(prob, Int32Array.from([0, n]), penFull, { tol, maxIterations: maxIt, hessianStride: stride, wantHessian: false }, eta, mu);
      // Exact weighted Gram at the solution per fold segment, in one pass: the full-data Hessian
      // (Wald covariance) and every fold's excluded-rows Hessian are sums of these.
      const q1 = sub.nCols + 1;
      const nSeg = folds.cuts.length - 1;
      const segH = Array.from({ length: nSeg }, (_, sgi) => {
        const h = new Float64Array(q1 * q1);
        weightedGram(prob, Int32Array.from([folds.cuts[sgi]!, folds.cuts[sgi + 1]!]), mu, h);
        return h;
      });
      const sumSeg = (s0: number, s1: number) => {
        const h = new Float64Array(q1 * q1);
        for (let sgi = s0; sgi < s1; sgi++) { const hs = segH[sgi]!; for (let k = 0; k < h.length; k++) h[k] = h[k]! + hs[k]!; }
        return h;
      };
      const hRawFull = sumSeg(0, nSeg);
      const hFull = Float64Array.from(hRawFull);
      finishHessian(hFull, q1, penFull);
      const full = { ...full0, hessian: hFull };
      // Unpenalised score Σ(y − μ)x at the full solution (for the one-step fold updates).
      const fullScore = scoreOn(prob, Int32Array.from([0, n]), mu);
      let dTest = 0;
      let dConst = 0;
      let itTot = full.iterations;
      let conv = full.converged;
      for (let f = 0; f < folds.nFolds; f++) {
        const a = folds.testStart[f]!;
        const b = folds.testEnd[f]!;
        const ea = Math.max(0, a - gap);
        const eb = Math.min(n, b + gap);
        const train = Int32Array.from([0, ea, eb, n]);
        const ex = colStats(sub, ea, eb, valid);
        const pen = penaltyFrom(lam, tot, ex);
        // Hessian at the full solution on the training rows: H_full − H_excl + P_train.
        const hEx = sumSeg(folds.exclSeg[2 * f]!, folds.exclSeg[2 * f + 1]!);
        const hFix = Float64Array.from(hRawFull);
        for (let k = 0; k < hFix.length; k++) hFix[k] = hFix[k]! - hEx[k]!;
        finishHessian(hFix, q1, pen);
        // One Newton step from β̂ with the training score at β̂ (= full score − excluded rows'
        // score, minus the training penalty): the 'newton-step' estimate, and the start of
        // the exact fit.
        predictEta(prob, Int32Array.from([ea, eb]), full.beta, eta, mu);
        const sEx = scoreOn(prob, Int32Array.from([ea, eb]), mu);
        const g = new Float64Array(q1);
        for (let j = 0; j < q1; j++) g[j] = fullScore.g[j]! - sEx.g[j]!;
        for (let j = 0; j < sub.nCols; j++) g[j + 1] = g[j + 1]! - pen[j]! * full.beta[j + 1]!;
        const fac = cholesky(hFix, q1);
        let betaF: Float64Array = Float64Array.from(full.beta);
        if (typeof fac !== 'number') {
          const step = choleskySolveInPlace(fac, g);
          for (let j = 0; j < q1; j++) betaF[j] = betaF[j]! + step[j]!;
        } else conv = false;
        const ySumTr = fullScore.ySum - sEx.ySum;
        const nTr = fullScore.nRows - sEx.nRows;
        if (foldFits === 'exact') {
          const fr = irls(prob, train, pen, { tol, maxIterations: maxIt, fixedHessian: hFix, start: betaF, wantHessian: false }, eta, mu);
          itTot += fr.iterations;
          conv = conv && fr.converged;
          betaF = fr.beta;
        } else {
          itTot += 1;
        }
        const testR = Int32Array.from([a, b]);
        predictEta(prob, testR, betaF, eta, mu);
        dTest += deviance(prob, testR, eta);
        // constant model: training-mean rate
        const c0 = Math.log(Math.max(ySumTr, 1e-10) / (nTr / design.binRate)) + offset;
        for (let t = a; t < b; t++) eta[t] = c0;
        dConst += deviance(prob, testR, eta);
      }
      return { full, sub, dTest, dConst, itTot, conv };
    };
    const main = fitModel(null);
    if (!main.conv) warnings.push({ code: 'TF_FIT_FAILED', message: `${fn}: unit '${name}': IRLS did not converge in ${maxIt} iterations for at least one fold.`, details: { cell: name } });
    const cvDE = 1 - main.dTest / main.dConst;
    const bits = (main.dConst - main.dTest) / (2 * nSpk * Math.LN2);
    const delta = new Float64Array(design.groups.length).fill(NaN);
    if (contributions) {
      design.groups.forEach((_, g) => {
        const red = fitModel(groupCols[g]!);
        delta[g] = cvDE - (1 - red.dTest / red.dConst);
      });
    }
    const q1 = p + 1;
    const cov = hessianInverse(main.full.hessian, q1);
    const coef = main.full.beta.slice(1);
    const se = new Float64Array(p).fill(NaN);
    if (cov) for (let j = 0; j < p; j++) se[j] = Math.sqrt(cov[(j + 1) * q1 + j + 1]!);
    const kernels: KernelEstimate[] = design.terms.map((t) => {
      const est = new Float64Array(t.nLags);
      const kse = new Float64Array(t.nLags);
      for (let i = 0; i < t.nLags; i++) {
        let s = 0;
        let v = 0;
        for (let j = 0; j < t.nColumns; j++) {
          const hj = t.kernels[i * t.nColumns + j]!;
          s += hj * coef[t.firstColumn + j]!;
          if (cov) for (let l = 0; l < t.nColumns; l++) v += hj * t.kernels[i * t.nColumns + l]! * cov[(t.firstColumn + j + 1) * q1 + t.firstColumn + l + 1]!;
        }
        est[i] = s;
        kse[i] = cov ? Math.sqrt(Math.max(0, v)) : NaN;
      }
      return { term: t.name, group: t.group, kind: t.kind, lagsSec: t.lagsSec, estimate: est, se: kse, low: est.map((e, i) => e - zq * kse[i]!), high: est.map((e, i) => e + zq * kse[i]!) };
    });
    const nullRate = Math.log(nSpk / (main.full.nRows / design.binRate));
    let nullDev = 0;
    for (let t = 0; t < n; t++) {
      if (valid && !valid[t]) continue;
      const mu = Math.exp(nullRate + offset);
      nullDev += 2 * ((y[t]! > 0 ? y[t]! * Math.log(y[t]! / mu) : 0) - (y[t]! - mu));
    }
    return {
      name, nUsed: main.full.nRows, nSpikes: nSpk, cvDevianceExplained: cvDE, bitsPerSpike: bits, deltaDeviance: delta,
      intercept: main.full.beta[0]!, coefficients: coef, coefficientSE: se, deviance: main.full.deviance, nullDeviance: nullDev,
      iterations: main.itTot, converged: main.conv, kernels, warnings,
    };
  });
  return { cells, groups: design.groups, folds, penalty: lam, warnings: [...design.warnings] };
}

/** The design restricted to the given columns (CSR copy). */
function subDesign(d: EncodingDesign, cols: Int32Array): EncodingDesign {
  const map = new Int32Array(d.nCols).fill(-1);
  cols.forEach((j, k) => { map[j] = k; });
  const n = d.nRows;
  const rowPtr = new Int32Array(n + 1);
  const ci: number[] = [];
  const vs: number[] = [];
  for (let t = 0; t < n; t++) {
    for (let k = d.rowPtr[t]!; k < d.rowPtr[t + 1]!; k++) {
      const m = map[d.colIdx[k]!]!;
      if (m >= 0) {
        ci.push(m);
        vs.push(d.values[k]!);
      }
    }
    rowPtr[t + 1] = ci.length;
  }
  return { ...d, nCols: cols.length, rowPtr, colIdx: Int32Array.from(ci), values: Float64Array.from(vs) };
}

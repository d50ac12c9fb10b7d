// Internal: the per-unit work of poissonGLMCV (validation of the counts, full-data fit, blocked
// CV folds, Wald kernels). Everything a unit needs is in a plain, structured-cloneable context,
// so the same code runs on the main thread or in a worker thread with identical results.
import { TuningforkError, toFloat64 } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import type { EncodingDesign } from '../design/design-matrix.js';
import type { FoldLayout } from '../cv/blocked-folds.js';
import type { KernelEstimate } from '../ridge/kernels.js';
import { deviance, finishHessian, hessianInverse, irls, predictEta, scoreOn, weightedGram } from './poisson-irls.js';
import { cholesky, choleskySolveInPlace } from '../linalg/cholesky.js';
import type { PoissonProblem } from './poisson-irls.js';
import { convStructure } from './conv-structure.js';
import type { ConvStructure } from './conv-structure.js';
import type { PoissonCellFit } from './poisson-glm-cv.js';

/** Resolved settings shared by every unit of one poissonGLMCV call (plain data only). */
export interface GlmContext {
  readonly fn: string;
  readonly design: EncodingDesign;
  readonly folds: FoldLayout;
  readonly gap: number;
  readonly offset: number;
  readonly zq: number;
  readonly lam: number;
  readonly tol: number;
  readonly maxIt: number;
  readonly foldFits: 'exact' | 'newton-step';
  readonly contributions: boolean;
  /** Per group: the columns of the model without that group. */
  readonly groupCols: readonly Int32Array[];
}

/** One unit's counts as given: a name and values on the design grid. */
export interface UnitInput {
  readonly name?: string;
  readonly values: ArrayLike<number>;
}

interface UnitCounts {
  readonly name: string;
  readonly y: Float64Array;
  readonly valid: Uint8Array | null;
  readonly nNaN: number;
  readonly nSpk: number;
  readonly yMin: number;
  readonly yMax: number;
}

/** Validate and copy one unit's counts (NaN rows masked). @throws TF_SHAPE_MISMATCH, TF_BAD_VALUE */
export function unitCounts(ctx: GlmContext, u: UnitInput, ui: number): UnitCounts {
  const { fn, design } = ctx;
  const n = design.nRows;
  const name = typeof u?.name === 'string' ? u.name : `unit${ui}`;
  const yv = toFloat64(u.values);
  if (yv.length !== n) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: unit '${name}' has ${yv.length} counts but the design has ${n} rows.`, { cell: name });
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
  return { name, y, valid, nNaN, nSpk, yMin, yMax };
}

/** Fit one unit (index ui in the call's units). */
export function fitUnit(ctx: GlmContext, u: UnitInput, ui: number): PoissonCellFit {
  const { fn, design, folds, gap, offset, zq, lam, tol, foldFits, contributions, groupCols } = ctx;
  const maxIt = ctx.maxIt;
  const n = design.nRows;
  const p = design.nCols;
  const { name, y, valid, nNaN, nSpk, yMin, yMax } = unitCounts(ctx, u, ui);
  const warnings: ResultWarning[] = [];
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
  // Column sums depend on the rows used only; without NaN counts those are the design's own.
  const shared = nNaN === 0;
  const fitModel = (cols: Int32Array | null) => {
    const cached = restricted(design, cols);
    const sub = cached.sub;
    const colStats = (d: EncodingDesign, r0: number, r1: number, v: Uint8Array | null): ColStats => {
      if (!shared) return columnStats(d, r0, r1, v);
      const key = `${r0}:${r1}`;
      let st = cached.stats.get(key);
      if (!st) {
        st = columnStats(d, r0, r1, v);
        cached.stats.set(key, st);
      }
      return st;
    };
    const prob: PoissonProblem = { n, p: sub.nCols, rowPtr: sub.rowPtr, colIdx: sub.colIdx, values: sub.values, y, offset, rowValid: valid, structure: cached.structure };
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
    // First fold whose test block holds spikes but whose training rows hold none: the
    // training-mean rate is 0 there, so the held-out deviance is undefined (-1: none).
    let emptyFold = -1;
    let emptySpikes = 0;
    for (let f = 0; f < folds.nFolds; f++) {
      const a = folds.testStart[f]!;
      const b = folds.testEnd[f]!;
      const ea = Math.max(0, a - gap);
      const eb = Math.min(n, b + gap);
      let ySumEx = 0;
      let ySumTe = 0;
      for (let t = ea; t < eb; t++) {
        if (valid && !valid[t]) continue;
        ySumEx += y[t]!;
        if (t >= a && t < b) ySumTe += y[t]!;
      }
      if (ySumTe > 0 && !(nSpk - ySumEx > 0)) {
        if (emptyFold < 0) {
          emptyFold = f;
          emptySpikes = ySumTe;
        }
        continue;
      }
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
        // From the one-step estimate: one more step with the Hessian at β̂ (close, and already
        // there), then Newton with the training Hessian at each iterate (from every stride-th row,
        // as the full fit), whose step near the optimum has a decrement below tol and is the last
        // (taken without evaluation).
        const fr = irls(prob, train, pen, { tol, maxIterations: maxIt, start: betaF, fixedHessian: hFix, fixedIterations: 1, hessianStride: stride, wantHessian: false, newtonFinish: true, wantDeviance: false }, eta, mu);
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
    const undefinedCV = emptyFold >= 0;
    return { full, sub, dTest: undefinedCV ? NaN : dTest, dConst: undefinedCV ? NaN : dConst, itTot, conv, emptyFold, emptySpikes };
  };
  const main = fitModel(null);
  if (!main.conv) warnings.push({ code: 'TF_FIT_FAILED', message: `${fn}: unit '${name}': IRLS did not converge in ${maxIt} iterations for at least one fold.`, details: { cell: name } });
  if (main.emptyFold >= 0) {
    const f = main.emptyFold;
    warnings.push({ code: 'TF_TOO_FEW_SAMPLES', message: `${fn}: unit '${name}' has ${main.emptySpikes} spikes in test block ${f} (rows ${folds.testStart[f]}–${folds.testEnd[f]}) but none on that block's training rows, so the training-mean rate is 0 and the held-out deviance is undefined; cvDevianceExplained, bitsPerSpike and deltaDeviance are NaN (the full-data fit is kept). Use fewer folds or check the unit's stability.`, details: { cell: name, fold: f, nTestSpikes: main.emptySpikes } });
  }
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
}

interface ColStats { readonly s: Float64Array; readonly ss: Float64Array; readonly n: number }

/** What every unit of a design shares for one column set: the restricted CSR, its convolution structure and column sums by row range. */
interface Restricted { readonly sub: EncodingDesign; readonly structure: ConvStructure | null; readonly stats: Map<string, ColStats> }

/** Per design and column set (key '*' = all). */
const restrictedCache = new WeakMap<EncodingDesign, Map<string, Restricted>>();

function restricted(design: EncodingDesign, cols: Int32Array | null): Restricted {
  let byCols = restrictedCache.get(design);
  if (!byCols) {
    byCols = new Map();
    restrictedCache.set(design, byCols);
  }
  const key = cols ? Array.from(cols).join(',') : '*';
  let entry = byCols.get(key);
  if (!entry) {
    const sub = cols ? subDesign(design, cols) : design;
    entry = { sub, structure: convStructure(design, cols, sub), stats: new Map() };
    byCols.set(key, entry);
  }
  return entry;
}

function columnStats(d: EncodingDesign, r0: number, r1: number, valid: Uint8Array | null): ColStats {
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

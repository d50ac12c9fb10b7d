import { TuningforkError, checkBoolean, checkInteger, checkRange, resolveOptions } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import type { EncodingDesign } from '../design/design-matrix.js';
import type { FoldLayout } from '../cv/blocked-folds.js';
import { designSums } from '../internal/segment-sums.js';
import { cholesky, choleskySolveInPlace } from '../linalg/cholesky.js';
import { studentTQuantile } from '@tuningfork/stats';
import { aggregate, coefficients, trainModel } from './ridge-plan.js';
import type { TrainedModel } from './ridge-plan.js';
import { defaultPenalties, prepare } from './prepare.js';
import type { CellSignal, Prepared } from './prepare.js';
import { reconstructKernels } from './kernels.js';
import type { KernelEstimate } from './kernels.js';

/** Options of {@link fitRidgeCV}. */
export interface FitRidgeCVOptions {
  /** Number of contiguous CV blocks. @defaultValue 5 */
  nFolds?: number;
  /** Gap between training and test rows on each side of a test block, seconds. @defaultValue NaN (longest kernel) */
  gapSec?: number;
  /** Times (s) where blocks may be cut, e.g. trial starts, so blocks hold whole trials. @defaultValue [] (cut anywhere) */
  foldCutTimes?: ArrayLike<number>;
  /** Relative penalties ρ (λ = ρ·n_train = ρ·tr(ZᵀZ)/p on standardised columns), each > 0. @defaultValue 20 values, 1e-3 … 1e3 (log-spaced) */
  penalties?: ArrayLike<number>;
  /** Groups always in the model and never tested (e.g. slow drift). @defaultValue [] */
  nuisanceGroups?: readonly string[];
  /** Also fit every reduced (without g) and group-alone model. @defaultValue true */
  contributions?: boolean;
  /** Contiguous blocks of the delete-one-block jackknife for kernel CIs (0: no CIs). @defaultValue 20 */
  jackknifeBlocks?: number;
  /** Confidence level of kernel intervals. @defaultValue 0.95 */
  confidence?: number;
}

/** Cross-validated ridge fit of one cell. R² values are on test data (may be negative). */
export interface RidgeCellFit {
  readonly name: string;
  /** Kind of signal, as given on the cell ('continuous' unless 'counts'). */
  readonly kind: 'continuous' | 'counts';
  /** Samples used and samples masked because the cell was NaN there. */
  readonly nUsed: number;
  readonly nMissing: number;
  /** cvR² of the full model at its selected penalty. NaN for a skipped cell. */
  readonly cvR2: number;
  /** Selected relative penalty ρ of the full model. */
  readonly penalty: number;
  /** cvR² of the full model for every penalty of the grid. */
  readonly cvR2ByPenalty: Float64Array;
  /** Per tested group (order of `groups`): unique ΔR² = cvR²(full) − cvR²(full without g). */
  readonly deltaR2: Float64Array;
  /** Per tested group: cvR²(nuisance + g) − cvR²(nuisance only) (an upper bound). */
  readonly aloneR2: Float64Array;
  /** (cvR²(full) − cvR²(nuisance)) − Σ ΔR²: variance the groups explain only jointly. */
  readonly sharedR2: number;
  /** cvR² of every model (internal order: full, nuisance, then without/alone per group) and its penalty. */
  readonly modelR2: Float64Array;
  readonly modelPenalty: Float64Array;
  /** Full-data coefficients at the selected penalty, raw column units, and intercept (signal units). */
  readonly coefficients: Float64Array;
  readonly intercept: number;
  /** Delete-one-block jackknife standard errors of the coefficients (NaN without jackknife). */
  readonly coefficientSE: Float64Array;
  /** Kernels in time with jackknife confidence intervals, one per design term. */
  readonly kernels: readonly KernelEstimate[];
  readonly warnings: readonly ResultWarning[];
}

/** Result of {@link fitRidgeCV}. */
export interface RidgeCVResult {
  readonly cells: readonly RidgeCellFit[];
  /** Tested groups (design groups minus nuisance groups). */
  readonly groups: readonly string[];
  readonly nuisanceGroups: readonly string[];
  readonly penalties: Float64Array;
  readonly folds: FoldLayout;
  /** Per tested group: largest R² of one of its columns regressed on all other columns (in-sample). */
  readonly collinearity: Float64Array;
  readonly warnings: readonly ResultWarning[];
  /** Resolved options (for re-running the same fit, e.g. inside a shift null). */
  readonly options: Readonly<Required<Omit<FitRidgeCVOptions, 'foldCutTimes' | 'penalties'>>> & { readonly foldCutTimes: Float64Array; readonly penalties: Float64Array };
}

const DEFAULTS = Object.freeze({
  nFolds: 5, gapSec: NaN, foldCutTimes: [] as ArrayLike<number>, penalties: defaultPenalties() as ArrayLike<number>,
  nuisanceGroups: [] as readonly string[], contributions: true, jackknifeBlocks: 20, confidence: 0.95,
});

/** Internal structures of a fit, reused by shiftNull without recomputation. */
export const PREPARED = new WeakMap<RidgeCVResult, Prepared>();

/**
 * Ridge encoding models for many cells at once, with the penalty chosen by blocked
 * cross-validation, unique and group-alone contributions, and kernels with confidence intervals.
 *
 * Rows are split into `nFolds` contiguous blocks (whole trials with `foldCutTimes`); each test
 * block is predicted from a model trained on all rows farther than `gapSec` from it, with
 * columns centred and scaled on the training rows only. One eigendecomposition of the
 * standardised training Gram per fold and model serves every penalty and every cell; training
 * sums come from downdated raw sums (INFERENCE.md §4.2–4.3). cvR² = 1 − Σ(y − ŷ_cv)²/Σ(y − ȳ)²
 * over the concatenated test predictions, and may be negative. For every tested group g the
 * reduced model without g and the model with g alone are refitted (never by zeroing
 * coefficients) with their own penalty (Musall et al. 2019). Kernels are reconstructed from
 * full-data coefficients at the selected penalty; their intervals come from a delete-one-block
 * jackknife over `jackknifeBlocks` contiguous blocks (robust to autocorrelation within blocks)
 * with Student t quantiles on J − 1 degrees of freedom.
 *
 * NaN samples of a cell are masked (that cell gets its own factorisations) and counted in
 * `nMissing`. A constant cell (all-zero counts, or any value repeated on every usable sample:
 * R² is undefined) or one with too few samples is skipped with a warning (TF_DEGENERATE_SIGNAL,
 * TF_TOO_FEW_SAMPLES) and NaN results, so one bad cell never stops a batch; so is a cell whose
 * NaN samples leave a test block with usable samples but fewer than 2 usable training rows
 * (TF_TOO_FEW_SAMPLES).
 *
 * @param design - From {@link designMatrix} or {@link matrixDesign}.
 * @param cells - Signals on the design grid (one value per row).
 * @throws {TuningforkError} TF_BAD_OPTION, TF_UNKNOWN_OPTION; TF_SHAPE_MISMATCH (cell length or
 *   grid differs); TF_TOO_FEW_SAMPLES (fewer trials than folds, a fold without training rows);
 *   TF_BAD_VALUE (unknown nuisance group).
 *
 * References
 * - Musall, S., Kaufman, M. T., Juavinett, A. L., Gluf, S. & Churchland, A. K. (2019).
 *   Single-trial neural dynamics are dominated by richly varied movements. Nature Neuroscience
 *   22:1677–1686. doi:10.1038/s41593-019-0502-4
 * - Hoerl, A. E. & Kennard, R. W. (1970). Technometrics 12(1):55–67. doi:10.1080/00401706.1970.10488634
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap, ch. 11 (jackknife). Chapman & Hall/CRC.
 */
export function fitRidgeCV(design: EncodingDesign, cells: readonly CellSignal[], options: FitRidgeCVOptions = {}): RidgeCVResult {
  const fn = 'fitRidgeCV';
  const o = resolveOptions(fn, DEFAULTS, options);
  const contributions = checkBoolean(fn, 'contributions', o.contributions);
  const nJack = checkInteger(fn, 'jackknifeBlocks', o.jackknifeBlocks, 0);
  const conf = checkRange(fn, 'confidence', o.confidence, 0.5, 0.9999);
  if (nJack === 1) throw new TuningforkError('TF_BAD_OPTION', `${fn}: jackknifeBlocks must be 0 (no intervals) or at least 2, got 1.`, { jackknifeBlocks: 1 });
  const prep = prepare(fn, design, cells, {
    nFolds: o.nFolds, gapSec: o.gapSec, foldCutTimes: o.foldCutTimes, penalties: o.penalties,
    nuisanceGroups: o.nuisanceGroups, contributions,
  });
  const warnings: ResultWarning[] = [...design.warnings];
  const pens = prep.penalties;
  const nL = pens.length;
  const M = prep.models.length;
  const G = prep.tested.length;
  const p = design.nCols;
  const fits: RidgeCellFit[] = [];
  // Full-data models (per pattern) and jackknife replicates.
  const fullModels = prep.patterns.map((pt) => {
    const tot = aggregate(pt.sums, 0, pt.sums.nSeg, true);
    return { tm: trainModel(tot.g!, tot.s, tot.n, p, prep.models[0]!), tot };
  });
  const jack = nJack >= 2 ? jackknifeModels(prep, nJack) : null;
  const tq = nJack >= 2 ? studentTQuantile(0.5 + conf / 2, nJack - 1) : NaN;
  for (let ci = 0; ci < prep.y.length; ci++) {
    const name = prep.names[ci]!;
    const cw: ResultWarning[] = [];
    const skip = prep.skipped[ci];
    const pi = prep.cellPattern[ci]!;
    const pt = prep.patterns[pi]!;
    const nUsed = fullModels[pi]!.tot.n;
    if (prep.nMissing[ci]! > 0) cw.push({ code: 'TF_NON_FINITE', message: `${fn}: cell '${name}' has ${prep.nMissing[ci]} NaN samples; they are masked.`, details: { cell: name, nMissing: prep.nMissing[ci] } });
    if (skip) {
      cw.push(skip);
      fits.push(emptyFit(name, cells[ci]?.kind ?? 'continuous', nUsed, prep.nMissing[ci]!, G, M, nL, p, design, cw));
      continue;
    }
    const cs = prep.sums[ci]!;
    const { sse, sst } = pt.plan.score(cs, pens);
    const modelR2 = new Float64Array(M);
    const modelPen = new Float64Array(M);
    const curve = new Float64Array(nL);
    for (let m = 0; m < M; m++) {
      let best = nL - 1;
      for (let l = nL - 2; l >= 0; l--) if (sse[m * nL + l]! < sse[m * nL + best]!) best = l;
      modelR2[m] = 1 - sse[m * nL + best]! / sst;
      modelPen[m] = pens[best]!;
      if (m === 0) for (let l = 0; l < nL; l++) curve[l] = 1 - sse[l]! / sst;
    }
    const deltaR2 = new Float64Array(G);
    const aloneR2 = new Float64Array(G);
    let shared = NaN;
    if (contributions) {
      let sumD = 0;
      for (let g = 0; g < G; g++) {
        deltaR2[g] = modelR2[0]! - modelR2[2 + 2 * g]!;
        aloneR2[g] = modelR2[3 + 2 * g]! - modelR2[1]!;
        sumD += deltaR2[g]!;
      }
      shared = modelR2[0]! - modelR2[1]! - sumD;
    } else {
      deltaR2.fill(NaN);
      aloneR2.fill(NaN);
    }
    // Full-data coefficients.
    const cTot = new Float64Array(p);
    let ysTot = 0;
    for (let seg = 0; seg < pt.sums.nSeg; seg++) {
      ysTot += cs.ysum[seg]!;
      for (let j = 0; j < p; j++) cTot[j] = cTot[j]! + cs.c[seg * p + j]!;
    }
    const full = coefficients(fullModels[pi]!.tm, cTot, ysTot, modelPen[0]!);
    const coef = full.w;
    const se = new Float64Array(p).fill(NaN);
    let reps: Float64Array[] = [];
    if (jack) {
      reps = jack.replicates(ci, modelPen[0]!);
      jackknifeSE(reps, coef.length, se);
    }
    const kernels = reconstructKernels(design, coef, reps, tq);
    fits.push({
      name, kind: cells[ci]?.kind ?? 'continuous', nUsed, nMissing: prep.nMissing[ci]!, cvR2: modelR2[0]!, penalty: modelPen[0]!, cvR2ByPenalty: curve,
      deltaR2, aloneR2, sharedR2: shared, modelR2, modelPenalty: modelPen, coefficients: coef,
      intercept: full.intercept + prep.yMean[ci]!, coefficientSE: se, kernels, warnings: cw,
    });
  }
  const collinearity = groupCollinearity(prep, fullModels[0]!.tot);
  prep.tested.forEach((g, k) => {
    if (collinearity[k]! > 0.99) {
      warnings.push({ code: 'TF_FIT_FAILED', message: `${fn}: group '${design.groups[g]}' is nearly collinear with the other columns (a column has R² = ${collinearity[k]!.toFixed(4)} on the rest); its unique ΔR² is close to 0 by construction. Design remedies: omission trials, delays, ITI events.`, details: { group: design.groups[g], r2: collinearity[k] } });
    }
  });
  const result: RidgeCVResult = {
    cells: fits, groups: prep.tested.map((g) => design.groups[g]!), nuisanceGroups: prep.nuisance.map((g) => design.groups[g]!),
    penalties: pens, folds: prep.layout, collinearity, warnings,
    options: { nFolds: o.nFolds, gapSec: prep.layout.gapBins / design.binRate, foldCutTimes: Float64Array.from(o.foldCutTimes), penalties: pens, nuisanceGroups: o.nuisanceGroups, contributions, jackknifeBlocks: nJack, confidence: conf },
  };
  PREPARED.set(result, prep);
  return result;
}

function emptyFit(name: string, kind: 'continuous' | 'counts', nUsed: number, nMissing: number, G: number, M: number, nL: number, p: number, design: EncodingDesign, warnings: ResultWarning[]): RidgeCellFit {
  const nan = (k: number) => new Float64Array(k).fill(NaN);
  return {
    name, kind, nUsed, nMissing, cvR2: NaN, penalty: NaN, cvR2ByPenalty: nan(nL), deltaR2: nan(G), aloneR2: nan(G), sharedR2: NaN,
    modelR2: nan(M), modelPenalty: nan(M), coefficients: nan(p), intercept: NaN, coefficientSE: nan(p),
    kernels: reconstructKernels(design, nan(p), [], NaN), warnings,
  };
}

function jackknifeSE(reps: Float64Array[], p: number, out: Float64Array): void {
  const J = reps.length;
  for (let j = 0; j < p; j++) {
    let m = 0;
    for (const r of reps) m += r[j]!;
    m /= J;
    let s = 0;
    for (const r of reps) s += (r[j]! - m) ** 2;
    out[j] = Math.sqrt(((J - 1) / J) * s);
  }
}

/** Delete-one-block replicates of the full model, shared by all cells of a mask pattern. */
function jackknifeModels(prep: Prepared, J: number) {
  const { design } = prep;
  const n = design.nRows;
  const p = design.nCols;
  const cuts = Int32Array.from({ length: J + 1 }, (_, j) => Math.round((j * n) / J));
  const perPattern = prep.patterns.map((pt) => {
    const sums = designSums(design, cuts, pt.mask);
    const tot = aggregate(sums, 0, J, true);
    const models: (TrainedModel | null)[] = [];
    for (let b = 0; b < J; b++) {
      const blk = aggregate(sums, b, b + 1, true);
      const g = new Float64Array(p * p);
      const s = new Float64Array(p);
      for (let k = 0; k < p * p; k++) g[k] = tot.g![k]! - blk.g![k]!;
      for (let k = 0; k < p; k++) s[k] = tot.s[k]! - blk.s[k]!;
      const nn = tot.n - blk.n;
      models.push(nn > p ? trainModel(g, s, nn, p, prep.models[0]!) : null);
    }
    return models;
  });
  return {
    replicates(ci: number, rho: number): Float64Array[] {
      const y = prep.y[ci]!;
      const mask = prep.patterns[prep.cellPattern[ci]!]!.mask;
      // per-block cross-products of this cell
      const cB = new Float64Array(J * p);
      const ysB = new Float64Array(J);
      for (let b = 0; b < J; b++) {
        for (let r = cuts[b]!; r < cuts[b + 1]!; r++) {
          if (mask && !mask[r]) continue;
          const v = y[r]!;
          ysB[b] = ysB[b]! + v;
          for (let k = design.rowPtr[r]!; k < design.rowPtr[r + 1]!; k++) {
            const idx = b * p + design.colIdx[k]!;
            cB[idx] = cB[idx]! + design.values[k]! * v;
          }
        }
      }
      const cT = new Float64Array(p);
      let ysT = 0;
      for (let b = 0; b < J; b++) {
        ysT += ysB[b]!;
        for (let j = 0; j < p; j++) cT[j] = cT[j]! + cB[b * p + j]!;
      }
      const out: Float64Array[] = [];
      const models = perPattern[prep.cellPattern[ci]!]!;
      for (let b = 0; b < J; b++) {
        const tm = models[b];
        if (!tm) continue;
        const c = new Float64Array(p);
        for (let j = 0; j < p; j++) c[j] = cT[j]! - cB[b * p + j]!;
        out.push(coefficients(tm, c, ysT - ysB[b]!, rho).w);
      }
      return out;
    },
  };
}

/** Max over a group's columns of the in-sample R² of that column on all columns outside the group. */
function groupCollinearity(prep: Prepared, tot: { n: number; s: Float64Array; g: Float64Array | null }): Float64Array {
  const { design } = prep;
  const p = design.nCols;
  const g = tot.g!;
  const n = tot.n;
  const corr = new Float64Array(p * p);
  const sd = new Float64Array(p);
  for (let j = 0; j < p; j++) sd[j] = Math.sqrt(Math.max(0, g[j * p + j]! / n - (tot.s[j]! / n) ** 2));
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) {
    const cov = g[i * p + j]! / n - (tot.s[i]! / n) * (tot.s[j]! / n);
    corr[i * p + j] = sd[i]! > 0 && sd[j]! > 0 ? cov / (sd[i]! * sd[j]!) : 0;
  }
  return Float64Array.from(prep.tested, (tg) => {
    const inG: number[] = [];
    const out: number[] = [];
    for (let j = 0; j < p; j++) (design.columnGroup[j] === tg ? inG : out).push(j);
    if (out.length === 0) return 0;
    const q = out.length;
    const a = new Float64Array(q * q);
    for (let r = 0; r < q; r++) for (let c = 0; c < q; c++) a[r * q + c] = corr[out[r]! * p + out[c]!]! + (r === c ? 1e-10 : 0);
    const f = cholesky(a, q);
    if (typeof f === 'number') return 1;
    let best = 0;
    for (const j of inG) {
      const b = Float64Array.from(out, (k) => corr[k * p + j]!);
      const sol = choleskySolveInPlace(f, Float64Array.from(b));
      let r2 = 0;
      for (let k = 0; k < q; k++) r2 += b[k]! * sol[k]!;
      best = Math.max(best, Math.min(1, r2));
    }
    return best;
  });
}

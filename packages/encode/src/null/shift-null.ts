import { TuningforkError, checkInteger, checkNonNegative, checkOneOf, resolveOptions, rng } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import type { EncodingDesign } from '../design/design-matrix.js';
import { PREPARED } from '../ridge/fit-ridge-cv.js';
import type { RidgeCVResult } from '../ridge/fit-ridge-cv.js';
import { RidgeCVPlan } from '../ridge/ridge-plan.js';
import { designSums } from '../internal/segment-sums.js';
import { FixedPenaltyScorer } from './fixed-penalty-scorer.js';
import { buildShiftPlan, forEachShift } from './shifted-sums.js';
import type { ShiftPlan } from './shifted-sums.js';

/**
 * The last shift plan built for each design (design-level source spectra, ≈ 100 MB on a
 * 60-minute 50 Hz grid; building it takes ≈ 0.3 s there), kept as long as the design object is
 * alive: a later call on the same design, segments and settings (another cell, another seed)
 * reuses it. A call with other settings replaces it.
 */
const plans = new WeakMap<EncodingDesign, { key: string; plan: ShiftPlan }>();

function cachedShiftPlan(design: EncodingDesign, cuts: Int32Array, nShifts: number, route: 'auto' | 'direct' | 'fft', nCells: number): ShiftPlan {
  const key = `${Array.from(cuts).join(',')}|${nShifts}|${route}|${nCells}`;
  const have = plans.get(design);
  if (have && have.key === key) return have.plan;
  plans.delete(design); // let the old plan go before the new one is built
  const plan = buildShiftPlan(design, cuts, nShifts, route, nCells);
  plans.set(design, { key, plan });
  return plan;
}

/** Options of {@link shiftNull}. */
export interface ShiftNullOptions {
  /** Number of circular shifts (all admissible shifts when fewer exist). @defaultValue 1000 */
  nShifts?: number;
  /** Smallest |shift|, seconds. @defaultValue NaN (max(longest kernel, 5 % of the session)) */
  minShiftSec?: number;
  /** Seed of the shift draw. @defaultValue 0 */
  seed?: number;
  /**
   * Route for event terms' shifted cross-products: 'auto' picks the cheaper; 'direct' (sparse
   * gathers) and 'fft' (all shifts at once) give identical numbers. @defaultValue 'auto'
   */
  crossProducts?: 'auto' | 'direct' | 'fft';
}

/** Shift-null result of one cell. */
export interface ShiftNullCell {
  readonly name: string;
  /** Observed cvR²(full) − cvR²(nuisance only), and its null p-value. */
  readonly fullR2: number;
  readonly pFull: number;
  /** Observed unique ΔR² per tested group and its p-value (order of `groups`). */
  readonly deltaR2: Float64Array;
  readonly pGroup: Float64Array;
  /** Null values: full statistic per shift, and ΔR² per group (row g holds the shifts). */
  readonly nullFull: Float64Array;
  readonly nullGroup: Float64Array;
  /** NaN samples replaced by the cell mean for the null (0 when none). */
  readonly nImputed: number;
  readonly warnings: readonly ResultWarning[];
}

/** Result of {@link shiftNull}. */
export interface ShiftNullResult {
  readonly cells: readonly ShiftNullCell[];
  readonly groups: readonly string[];
  /** The shifts used (bins), ascending. */
  readonly shifts: Int32Array;
  readonly minShiftBins: number;
  /** True when every admissible shift was used (exact circular-shift distribution). */
  readonly exhaustive: boolean;
  readonly seed: number;
  /** Terms whose cross-products used the sparse direct route and the FFT route. */
  readonly route: { readonly directTerms: number; readonly fftTerms: number };
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ nShifts: 1000, minShiftSec: NaN, seed: 0, crossProducts: 'auto' as 'auto' | 'direct' | 'fft' });

/**
 * Circular-shift null distributions of cross-validated explained variance, per cell: p-values
 * for the full model and for each group's unique ΔR².
 *
 * Each cell's signal is shifted circularly against the fixed design, y_k(t) = y((t − k) mod n),
 * which keeps the autocorrelation of both; for every shift the same blocked CV as in
 * {@link fitRidgeCV} (same folds, gaps, training-only standardisation, and each model's selected
 * penalty) yields cvR²(full) − cvR²(nuisance) and ΔR²_g = cvR²(full) − cvR²(full without g).
 * Xᵀ·Shift_k(y) for every fold segment comes from the design's convolution structure: event
 * kernels by sparse gathers, covariates (and event kernels when cheaper) by FFT
 * cross-correlation of segment-masked sources, which yields all shifts at once (INFERENCE.md
 * §4.6). p = (1 + #{null ≥ observed}) / (1 + m) (Phipson & Smyth 2010). Shifts are drawn
 * without replacement from [minShift, n − minShift] with `seed`; when no more than `nShifts`
 * exist, all are used. NaN samples of a cell are replaced by its mean for the null and for the
 * observed value it is compared with (counted in `nImputed`); the penalties stay at the values
 * selected on the observed data, so the null does not re-select them. The signal is shifted
 * against the whole design, so the group p-values ask whether a group's unique ΔR² exceeds what
 * a group of its size gains on a signal with the same autocorrelation but no alignment.
 *
 * Cost per cell: the FFT route needs one paired inverse transform per two (term, test block)
 * pairs plus, once per call, a forward transform per (term, test block); the direct route
 * costs #events × #lags multiply-adds per shift. Each shift then scores every model on every
 * fold (a few p_m² operations each). Memory: the design-level spectra take ≈ 8·(N/2)·#terms·#folds
 * bytes (N ≥ 1.2·n, a power of two; ≈ 100 MB for 10 terms on a 60-minute 50 Hz grid); they are
 * kept with the design object (for the next call with the same settings) until it is dropped.
 * Segments no longer than two kernels (the gaps around test blocks) are summed straight from the
 * design's sparse rows.
 *
 * @param fit - Result of fitRidgeCV on the same design and cells (contributions: true for group p-values).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when cells differ from those fitted; TF_TOO_FEW_SAMPLES
 *   when fewer than 19 admissible shifts exist (p could never fall below 0.05).
 *
 * References
 * - Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero. Stat. Appl.
 *   Genet. Mol. Biol. 9(1):39. doi:10.2202/1544-6115.1585
 * - Harris, K. D. (2020). Nonsense correlations in neuroscience. bioRxiv 2020.11.29.402719
 *   (circular shifts preserve autocorrelation; identifier from memory).
 */
export function shiftNull(design: EncodingDesign, fit: RidgeCVResult, options: ShiftNullOptions = {}): ShiftNullResult {
  const fn = 'shiftNull';
  const o = resolveOptions(fn, DEFAULTS, options);
  const nShifts = checkInteger(fn, 'nShifts', o.nShifts, 1);
  const seed = checkInteger(fn, 'seed', o.seed, 0);
  const route = checkOneOf(fn, 'crossProducts', o.crossProducts, ['auto', 'direct', 'fft']);
  const prep = PREPARED.get(fit);
  if (!prep || prep.design !== design) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: 'fit' must be the result of fitRidgeCV on this same design object.`, {});
  }
  const n = design.nRows;
  const minShift = Number.isNaN(o.minShiftSec)
    ? Math.max(design.maxKernelBins, Math.ceil(0.05 * n))
    : Math.round(checkNonNegative(fn, 'minShiftSec', o.minShiftSec) * design.binRate);
  const nAdm = n - 2 * minShift + 1;
  if (nAdm < 19) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: only ${Math.max(0, nAdm)} shifts of at least ${minShift} bins exist in ${n} rows; at least 19 are needed for p < 0.05. Use a longer session or a smaller minShiftSec.`, { nRows: n, minShiftBins: minShift });
  }
  const warnings: ResultWarning[] = [];
  let shifts: Int32Array;
  const exhaustive = nAdm <= nShifts;
  if (exhaustive) {
    shifts = Int32Array.from({ length: nAdm }, (_, i) => minShift + i);
    if (nAdm < nShifts) warnings.push({ code: 'TF_TOO_FEW_SAMPLES', message: `${fn}: only ${nAdm} admissible shifts exist (< ${nShifts} requested); all are used.`, details: { nShifts: nAdm } });
  } else {
    // Floyd's algorithm: nShifts distinct values from [minShift, n − minShift].
    const r = rng(seed);
    const chosen = new Set<number>();
    for (let j = nAdm - nShifts; j < nAdm; j++) {
      const t = r.int(j + 1);
      chosen.add(chosen.has(t) ? j : t);
    }
    shifts = Int32Array.from([...chosen].map((v) => v + minShift)).sort();
  }
  const all = new Int32Array(shifts.length + 1);
  all.set(shifts, 1); // index 0: the observed alignment
  const G = prep.tested.length;
  const hasGroups = prep.models.length >= 2 + 2 * G && G > 0;
  const modelIdx = [0, 1];
  if (hasGroups) for (let g = 0; g < G; g++) modelIdx.push(2 + 2 * g);
  // Plan for rows masked only by the design (NaN samples are imputed in the null).
  let plan: RidgeCVPlan | null = null;
  for (const pt of prep.patterns) {
    const same = pt.mask === design.rowValid || (pt.mask !== null && design.rowValid !== null && pt.mask.every((v, i) => v === design.rowValid![i]));
    if (same) plan = pt.plan;
  }
  if (!plan) {
    const sums = designSums(design, prep.layout.cuts, design.rowValid);
    plan = new RidgeCVPlan(sums, prep.layout.cuts, prep.layout.testStart, prep.layout.testEnd, prep.layout.gapBins, prep.models);
  }
  const sp = cachedShiftPlan(design, prep.layout.cuts, all.length, route, fit.cells.length);
  const cells: ShiftNullCell[] = [];
  fit.cells.forEach((cf, ci) => {
    const name = cf.name;
    const cw: ResultWarning[] = [];
    const m = shifts.length;
    if (prep.skipped[ci] || !Number.isFinite(cf.cvR2)) {
      cells.push({ name, fullR2: NaN, pFull: NaN, deltaR2: new Float64Array(G).fill(NaN), pGroup: new Float64Array(G).fill(NaN), nullFull: new Float64Array(m).fill(NaN), nullGroup: new Float64Array(G * m).fill(NaN), nImputed: 0, warnings: [{ code: 'TF_DEGENERATE_SIGNAL', message: `${fn}: cell '${name}' was skipped by the fit; no null.`, details: { cell: name } }] });
      return;
    }
    const y = Float64Array.from(prep.y[ci]!);
    let nImp = 0;
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(y[i])) {
        y[i] = 0;
        nImp++;
      }
    }
    if (nImp > 0) cw.push({ code: 'TF_NON_FINITE', message: `${fn}: ${nImp} NaN samples of '${name}' are replaced by its mean for the shift null.`, details: { cell: name, nImputed: nImp } });
    const rho = modelIdx.map((mi) => cf.modelPenalty[mi]!);
    const scorer = new FixedPenaltyScorer(plan!, modelIdx, rho);
    const nullFull = new Float64Array(m);
    const nullGroup = new Float64Array(G * m);
    let obsFull = NaN;
    const obsGroup = new Float64Array(G).fill(NaN);
    // Score shifts four at a time (the scorer shares its matrix loads across the batch).
    const buf = Array.from({ length: 4 }, () => ({ c: new Float64Array(sp.nSeg * sp.p), ysum: new Float64Array(sp.nSeg), yy: new Float64Array(sp.nSeg) }));
    const outs = Array.from({ length: 4 }, () => new Float64Array(modelIdx.length));
    const ssts = new Float64Array(4);
    const idx = new Int32Array(4);
    let nb = 0;
    const drain = () => {
      scorer.scoreBatch(buf, nb, outs, ssts);
      for (let b = 0; b < nb; b++) {
        const si = idx[b]!;
        const o = outs[b]!;
        const sst = ssts[b]!;
        const r2 = (q: number) => 1 - o[q]! / sst;
        const full = r2(0) - r2(1);
        if (si === 0) obsFull = full;
        else nullFull[si - 1] = full;
        if (hasGroups) {
          for (let g = 0; g < G; g++) {
            const d = r2(0) - r2(2 + g);
            if (si === 0) obsGroup[g] = d;
            else nullGroup[g * m + si - 1] = d;
          }
        }
      }
      nb = 0;
    };
    forEachShift(sp, y, all, (si, sums) => {
      const slot = buf[nb]!;
      slot.c.set(sums.c);
      slot.ysum.set(sums.ysum);
      slot.yy.set(sums.yy);
      idx[nb] = si;
      nb++;
      if (nb === 4) drain();
    });
    if (nb > 0) drain();
    let bFull = 0;
    for (let i = 0; i < m; i++) if (nullFull[i]! >= obsFull) bFull++;
    const pGroup = new Float64Array(G).fill(NaN);
    if (hasGroups) {
      for (let g = 0; g < G; g++) {
        let b = 0;
        for (let i = 0; i < m; i++) if (nullGroup[g * m + i]! >= obsGroup[g]!) b++;
        pGroup[g] = (b + 1) / (m + 1);
      }
    }
    cells.push({ name, fullR2: obsFull, pFull: (bFull + 1) / (m + 1), deltaR2: obsGroup, pGroup, nullFull, nullGroup, nImputed: nImp, warnings: cw });
  });
  if (!hasGroups && G > 0) warnings.push({ code: 'TF_BAD_OPTION', message: `${fn}: the fit was run with contributions: false; only the full-model p-value is available.`, details: {} });
  return { cells, groups: fit.groups, shifts, minShiftBins: minShift, exhaustive, seed, route: sp.route, warnings };
}

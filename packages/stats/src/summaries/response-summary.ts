import { checkFinite, checkOneOf, checkSampleRate, resolveOptions, rng, TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { flagWarnings } from '../bootstrap/bootstrap-statistic.js';
import { BLOCK, makeTable, multinomialPlan, weightedBlock } from '../internal/count-plan.js';
import { accelerationFrom, accumulateJackknife, intervalInPlace, makeIntervalScratch } from '../internal/interval-core.js';
import { twoQuantilesInPlace } from '../internal/select.js';
import { checkConfidence, checkMatrix, checkResamples, checkSeed, matrixOffsets, warn } from '../internal/validate.js';
import { consecutiveThresholdRuns } from '../significance/significant-runs.js';
import type { SignificantRun } from '../significance/significant-runs.js';

export interface ResponseSummaryOptions {
  /** Analysis window [start, end] in seconds relative to the event (inclusive). @defaultValue [0, Infinity] */
  windowSec?: readonly [number, number];
  /** Which extreme is the peak: largest value, smallest value, or largest |value| (signed). @defaultValue 'max' */
  peak?: 'max' | 'min' | 'absolute';
  /** Interval method for amplitude and AUC (latency always uses 'percentile'). @defaultValue 'percentile' */
  method?: 'percentile' | 'bca';
  /** Bootstrap resamples of the trials. @defaultValue 2000 */
  resamples?: number;
  /** Two-sided confidence level. @defaultValue 0.95 */
  confidenceLevel?: number;
  /** Seed of the core Rng (stream 0). @defaultValue 0 */
  seed?: number;
  /** Shortest significant run for the onset, seconds; NaN skips the onset (with a warning). @defaultValue NaN */
  minRunSec?: number;
  /** Value the per-bin band must exclude for the onset rule. @defaultValue 0 */
  reference?: number;
  /** Column rate (Hz) when the matrix has no offsets. @defaultValue NaN */
  sampleRate?: number;
  /** Time of column 0 (s) when the matrix has no offsets. @defaultValue 0 */
  startSec?: number;
}

/** A point estimate with its bootstrap interval. */
export interface EstimateWithInterval {
  readonly estimate: number;
  readonly low: number;
  readonly high: number;
  readonly standardError: number;
}

export interface ResponseSummary {
  /** Peak value of the mean trace in the window (units of the data). */
  readonly peakAmplitude: EstimateWithInterval;
  /** Time of that peak, seconds (percentile interval of the replicate peaks' times). */
  readonly peakLatencySec: EstimateWithInterval;
  /** Area under the mean trace over the window (trapezoid rule), data units × seconds. */
  readonly auc: EstimateWithInterval;
  /** Onset (s) of the first significant run of the per-bin band in the window; NaN if none or not computed. */
  readonly onsetSec: number;
  readonly onsetRun: SignificantRun | null;
  /** Window actually used: first/last column and their times. */
  readonly window: { readonly start: number; readonly end: number; readonly startSec: number; readonly endSec: number };
  readonly method: 'percentile' | 'bca';
  readonly confidenceLevel: number;
  readonly resamples: number;
  readonly seed: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  windowSec: [0, Infinity] as readonly [number, number],
  peak: 'max' as 'max' | 'min' | 'absolute',
  method: 'percentile' as 'percentile' | 'bca',
  resamples: 2000,
  confidenceLevel: 0.95,
  seed: 0,
  minRunSec: NaN,
  reference: 0,
  sampleRate: NaN,
  startSec: 0,
});

/**
 * Summaries of a peri-event response with bootstrap intervals: peak amplitude and latency,
 * area under the curve over a window, and the onset of the first significant run.
 *
 * Trials are resampled B times (multinomial weights, as `bootstrapTimecourse`); each replicate
 * mean trace gives a peak (value and time) and a trapezoid AUC over the window, so the intervals
 * of all summaries come from the same resamples. Amplitude and AUC get percentile or BCa
 * intervals (BCa acceleration from the closed-form leave-one-out mean traces); the latency gets
 * a percentile interval (its replicates are discrete). The onset is the first sample of the
 * first run of ≥ `minRunSec` consecutive bins whose percentile band excludes `reference`
 * (`significantRunsFromInterval` rule); it is descriptive.
 *
 * @param matrix - Trials × bins; column times from its `offsets` (PeriEventMatrix) or
 *   `startSec + j/sampleRate`.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (< 2 trials), TF_SHAPE_MISMATCH, TF_NON_FINITE
 *   (non-finite cell in the window), TF_WINDOW_OUT_OF_RANGE (window holds < 2 columns),
 *   TF_BAD_OPTION, TF_BAD_SAMPLE_RATE, TF_UNKNOWN_OPTION.
 *
 * References
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap, ch. 13–14.
 *   Chapman & Hall/CRC. doi:10.1201/9780429246593
 * - Jean-Richard-dit-Bressel, P., Clifford, C. W. G. & McNally, G. P. (2020). Frontiers in Molecular
 *   Neuroscience 13:14. doi:10.3389/fnmol.2020.00014
 */
export function responseSummary(matrix: Matrix, options: ResponseSummaryOptions = {}): ResponseSummary {
  const fn = 'responseSummary';
  const m = checkMatrix(fn, 'matrix', matrix);
  const o = resolveOptions(fn, DEFAULTS, options);
  const peak = checkOneOf(fn, 'peak', o.peak, ['max', 'min', 'absolute'] as const);
  const method = checkOneOf(fn, 'method', o.method, ['percentile', 'bca'] as const);
  const R = checkResamples(fn, 'resamples', o.resamples, 2);
  const level = checkConfidence(fn, o.confidenceLevel);
  const seed = checkSeed(fn, o.seed);
  const reference = checkFinite(fn, 'reference', o.reference);
  const win = o.windowSec;
  if (!Array.isArray(win) || win.length !== 2 || !(win[0]! <= win[1]!) || Number.isNaN(win[0]) || Number.isNaN(win[1])) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: windowSec must be [start, end] seconds with start ≤ end, got ${JSON.stringify(win)}.`, { fn, option: 'windowSec' });
  }
  const { rows: n, cols: T, data } = m;
  let offsets = matrixOffsets(m);
  if (!offsets) {
    const fs = checkSampleRate(fn, o.sampleRate);
    const t0 = checkFinite(fn, 'startSec', o.startSec);
    offsets = new Float64Array(T);
    for (let j = 0; j < T; j++) offsets[j] = t0 + j / fs;
  }
  let j0 = 0;
  while (j0 < T && offsets[j0]! < win[0]!) j0++;
  let j1 = T - 1;
  while (j1 >= 0 && offsets[j1]! > win[1]!) j1--;
  const W = j1 - j0 + 1;
  if (W < 2) {
    throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: windowSec [${win[0]}, ${win[1]}] s holds ${Math.max(0, W)} column(s) of a matrix spanning [${offsets[0]}, ${offsets[T - 1]}] s; at least 2 are needed.`, { fn, windowSec: win });
  }
  for (let i = 0; i < n; i++) {
    for (let j = j0; j <= j1; j++) {
      const v = data[i * T + j]!;
      if (!(v - v === 0)) throw new TuningforkError('TF_NON_FINITE', `${fn}: matrix holds ${v} at row ${i} (trial), column ${j} (t = ${offsets[j]} s) inside the window; remove or repair such trials first.`, { fn, row: i, column: j });
    }
  }
  // Mean trace, its peak and AUC.
  const mean = new Float64Array(W);
  for (let i = 0; i < n; i++) for (let k = 0; k < W; k++) mean[k]! += data[i * T + j0 + k]!;
  for (let k = 0; k < W; k++) mean[k]! /= n;
  const better = (v: number, best: number) => (peak === 'max' ? v > best : peak === 'min' ? v < best : Math.abs(v) > Math.abs(best));
  const summarise = (trace: (k: number) => number, out: Float64Array) => {
    let bk = 0;
    let bv = trace(0);
    let area = 0;
    let prev = bv;
    for (let k = 1; k < W; k++) {
      const v = trace(k);
      if (better(v, bv)) { bv = v; bk = k; }
      area += 0.5 * (v + prev) * (offsets![j0 + k]! - offsets![j0 + k - 1]!);
      prev = v;
    }
    out[0] = bv; out[1] = offsets![j0 + bk]!; out[2] = area;
  };
  const est = new Float64Array(3);
  summarise((k) => mean[k]!, est);

  // Replicates, streamed over column blocks: running peak, latency and AUC per replicate.
  const plan = multinomialPlan(rng(seed).stream(0), R, n);
  const table = makeTable(plan.groups);
  const block = new Float64Array(BLOCK * R);
  const peakV = new Float64Array(R).fill(NaN);
  const peakT = new Float64Array(R);
  const area = new Float64Array(R);
  const prev = new Float64Array(R);
  const bandLo = new Float64Array(W);
  const bandHi = new Float64Array(W);
  const col = new Float64Array(R);
  const q = new Float64Array(2);
  const alpha = (1 - level) / 2;
  for (let c0 = j0; c0 <= j1; c0 += BLOCK) {
    const width = Math.min(BLOCK, j1 + 1 - c0);
    weightedBlock(plan, data, T, c0, width, table, block);
    for (let jj = 0; jj < width; jj++) {
      const k = c0 + jj - j0;
      const t = offsets[c0 + jj]!;
      const dt = k > 0 ? t - offsets[c0 + jj - 1]! : 0;
      for (let b = 0; b < R; b++) {
        const v = block[jj * R + b]! / plan.total[b]!;
        col[b] = v;
        if (k === 0 || better(v, peakV[b]!)) { peakV[b] = v; peakT[b] = t; }
        if (k > 0) area[b]! += 0.5 * (v + prev[b]!) * dt;
        prev[b] = v;
      }
      twoQuantilesInPlace(col, R, alpha, 1 - alpha, q);
      bandLo[k] = q[0]!;
      bandHi[k] = q[1]!;
    }
  }
  // Jackknife accelerations of amplitude and AUC (BCa).
  let aPeak = 0, aArea = 0, fPeak = 0, fArea = 0;
  if (method === 'bca') {
    const jp = new Float64Array(n);
    const ja = new Float64Array(n);
    const tmp = new Float64Array(3);
    for (let i = 0; i < n; i++) {
      summarise((k) => (n * mean[k]! - data[i * T + j0 + k]!) / (n - 1), tmp);
      jp[i] = tmp[0]!;
      ja[i] = tmp[2]!;
    }
    const acc = new Float64Array(2);
    accumulateJackknife(jp, n, acc);
    ({ a: aPeak, flags: fPeak } = accelerationFrom(acc[0]!, acc[1]!));
    acc.fill(0);
    accumulateJackknife(ja, n, acc);
    ({ a: aArea, flags: fArea } = accelerationFrom(acc[0]!, acc[1]!));
  }
  const warnings: ResultWarning[] = [];
  const s = makeIntervalScratch();
  const interval = (reps: Float64Array, e: number, bca: boolean, a: number, f: number, label: string): EstimateWithInterval => {
    const se = sd(reps);
    intervalInPlace(reps, R, e, bca, alpha, a, f, s);
    for (const w of flagWarnings(`${fn} (${label})`, s.flags)) warnings.push(w);
    return { estimate: e, low: s.low, high: s.high, standardError: se };
  };
  const peakAmplitude = interval(peakV, est[0]!, method === 'bca', aPeak, fPeak, 'peak amplitude');
  const peakLatencySec = interval(peakT, est[1]!, false, 0, 0, 'peak latency');
  const auc = interval(area, est[2]!, method === 'bca', aArea, fArea, 'AUC');
  // Onset of the first significant run within the window.
  let onsetRun: SignificantRun | null = null;
  if (o.minRunSec !== o.minRunSec) {
    warnings.push(warn('onset-not-computed', `${fn}: minRunSec was not given, so the onset of the first significant run was not computed (onsetSec = NaN).`));
  } else {
    const cand = new Int8Array(W);
    for (let k = 0; k < W; k++) cand[k] = bandLo[k]! > reference ? 1 : bandHi[k]! < reference ? -1 : 0;
    const runs = consecutiveThresholdRuns(cand, { minRunSec: o.minRunSec, offsets: offsets.slice(j0, j1 + 1) });
    const first = runs.runs[0];
    if (first) onsetRun = { ...first, start: first.start + j0, end: first.end + j0 };
  }
  return {
    peakAmplitude, peakLatencySec, auc, onsetSec: onsetRun ? onsetRun.onsetSec : NaN, onsetRun,
    window: { start: j0, end: j1, startSec: offsets[j0]!, endSec: offsets[j1]! },
    method, confidenceLevel: level, resamples: R, seed, warnings,
  };
}

function sd(x: Float64Array): number {
  const n = x.length;
  let m = 0;
  for (let i = 0; i < n; i++) m += x[i]!;
  m /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (x[i]! - m) ** 2;
  return Math.sqrt(ss / (n - 1));
}

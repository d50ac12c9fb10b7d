import {
  TuningforkError, checkFinite, checkOneOf, checkPositive, resolveOptions, toFloat64,
} from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { snap, valueAt } from '../internal/interp.js';
import { applyBaseline, countPerColumn } from '../internal/peri-common.js';
import { median } from '../internal/robust.js';
import { checkInterval, checkNumberArray, checkSignal } from '../internal/validate.js';
import { checkLandmarks, warpOne } from './warp-time.js';

/** Why a trial got no warped row. */
export type WarpExclusionReason = 'missing-landmark' | 'landmarks-not-increasing' | 'outside-recording' | 'nan-in-window' | 'stretch-out-of-range';

/** Options of {@link warpTrials}. */
export interface WarpTrialsOptions {
  /** Seconds before the first landmark (unwarped). @defaultValue 1 */
  preSec?: number;
  /** Seconds after the last landmark (unwarped). @defaultValue 2 */
  postSec?: number;
  /** Column rate on the template clock, Hz; 'signal' keeps the signal's rate. @defaultValue 'signal' */
  sampleRate?: 'signal' | number;
  /** Template landmark times: 'median' = cumulative median intervals over usable trials, or explicit times (shifted so the first is 0). @defaultValue 'median' */
  template?: 'median' | ArrayLike<number>;
  /** Trials whose window leaves the recording: leave out, pad with NaN, or throw. @defaultValue 'drop' */
  edges?: 'drop' | 'nan' | 'error';
  /** Per-row baseline over `baselineSec` (template clock, relative to the first landmark). @defaultValue 'none' */
  baseline?: 'none' | 'subtract' | 'zscore';
  /** Baseline window [start, end) on the template clock; 'pre' is [−preSec, 0). @defaultValue 'pre' */
  baselineSec?: 'pre' | readonly [number, number];
  /** NaN samples in a kept window: keep, leave the trial out, or throw. @defaultValue 'propagate' */
  nan?: 'propagate' | 'drop' | 'error';
  /** Allowed stretch factors (trial interval / template interval) [min, max]; outside them a trial is flagged. @defaultValue [0.5, 2] */
  stretchLimits?: readonly [number, number];
  /** Trials with a stretch outside stretchLimits: keep them (listed in `flagged`) or leave them out. @defaultValue 'flag' */
  stretchAction?: 'flag' | 'exclude';
}

/** Result of {@link warpTrials}. */
export interface WarpTrialsResult {
  /** Row-major rows × cols; row k is trial kept[k] sampled on the template grid. */
  readonly data: Float64Array;
  readonly rows: number;
  readonly cols: number;
  /** Column times on the template clock, seconds relative to the first landmark. */
  readonly offsets: Float64Array;
  /** Input trial index of each row. */
  readonly kept: Uint32Array;
  /** Column rate, Hz. */
  readonly sampleRate: number;
  /** Template landmark times (first = 0), seconds. */
  readonly template: Float64Array;
  /** Stretch factor of each kept row's segments, rows × (landmarks − 1), row-major. */
  readonly stretch: Float64Array;
  /** Input indices of kept trials with a stretch outside stretchLimits. */
  readonly flagged: Uint32Array;
  /** Trials without a row, with reasons. */
  readonly excluded: { readonly index: Uint32Array; readonly reason: readonly WarpExclusionReason[] };
  /** Non-NaN rows per column. */
  readonly nPerColumn: Uint32Array;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  preSec: 1,
  postSec: 2,
  sampleRate: 'signal' as 'signal' | number,
  template: 'median' as 'median' | ArrayLike<number>,
  edges: 'drop' as 'drop' | 'nan' | 'error',
  baseline: 'none' as 'none' | 'subtract' | 'zscore',
  baselineSec: 'pre' as 'pre' | readonly [number, number],
  nan: 'propagate' as 'propagate' | 'drop' | 'error',
  stretchLimits: Object.freeze([0.5, 2]) as readonly [number, number],
  stretchAction: 'flag' as 'flag' | 'exclude',
});

/**
 * Piecewise-linear time warping of trials between landmarks (e.g. cue → choice → outcome) onto a
 * common template, for continuous signals.
 *
 * **Method.** For trial j with landmarks L (strictly increasing) and template R (by default
 * R_0 = 0 and R_{k+1} = R_k + median over usable trials of L_{k+1} − L_k), the warp u maps
 * [L_k, L_{k+1}] linearly onto [R_k, R_{k+1}] with slope 1 before L_0 and after the last
 * landmark. The output grid is `g = arange(−nPre, nPost) / rate` on the template clock with
 * `nPre = round(preSec·rate)` and `nPost = round((R_last + postSec)·rate)`; row j holds the signal
 * at `u⁻¹(g)` (the same formula with L and R swapped), read by linear interpolation between
 * samples. When a trial already has the template's intervals, u⁻¹(g) = L_0 + g and its row equals
 * periEventMatrix aligned at L_0 with the same grid.
 *
 * Trials with a NaN landmark (`missing-landmark`) or landmarks not strictly increasing
 * (`landmarks-not-increasing`) are left out with the reason kept, and do not enter the median.
 * Stretch factors (L_{k+1} − L_k)/(R_{k+1} − R_k) outside `stretchLimits` are flagged.
 *
 * References
 * - Williams, A. H., Poole, B., Maheswaranathan, N., Dhawale, A. K., Fisher, T., Wilson, C. D.,
 *   Brann, D. H., Trautmann, E. M., Ryu, S., Shusterman, R., Rinberg, D., Ölveczky, B. P.,
 *   Shenoy, K. V. & Ganguli, S. (2020). Discovering precise temporal patterns in large-scale
 *   neural recordings through robust and interpretable time warping. Neuron 105(2):246–259.
 *   doi:10.1016/j.neuron.2019.10.020
 *
 * @param signal - Uniform signal on the session clock.
 * @param landmarks - One array per landmark, each with one time per trial (seconds; NaN = missing),
 *   e.g. `[trials.cueTime, trials.choiceTime, trials.outcomeTime]`.
 * @returns `{ data, rows, cols, offsets, kept, sampleRate, template, stretch, flagged, excluded, nPerColumn, warnings }`.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (< 2 landmarks, or no usable trial for the median);
 *   TF_SHAPE_MISMATCH (landmark arrays of unequal length); TF_WINDOW_OUT_OF_RANGE (window longer
 *   than the recording, or `edges: 'error'`); TF_NON_FINITE (`nan: 'error'`); TF_BAD_EVENTS (bad
 *   explicit template); TF_BAD_OPTION / TF_UNKNOWN_OPTION.
 */
export function warpTrials(signal: UniformSignal, landmarks: readonly ArrayLike<number>[], options: WarpTrialsOptions = {}): WarpTrialsResult {
  const fn = 'warpTrials';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkSignal(fn, 'signal', signal);
  const preSec = checkFinite(fn, 'preSec', o.preSec);
  const postSec = checkFinite(fn, 'postSec', o.postSec);
  const rate = o.sampleRate === 'signal' ? signal.sampleRate : checkPositive(fn, 'sampleRate', o.sampleRate);
  const edges = checkOneOf(fn, 'edges', o.edges, ['drop', 'nan', 'error'] as const);
  const baseline = checkOneOf(fn, 'baseline', o.baseline, ['none', 'subtract', 'zscore'] as const);
  const nanPolicy = checkOneOf(fn, 'nan', o.nan, ['propagate', 'drop', 'error'] as const);
  const stretchAction = checkOneOf(fn, 'stretchAction', o.stretchAction, ['flag', 'exclude'] as const);
  const [sLo, sHi] = checkInterval(fn, 'stretchLimits', o.stretchLimits);
  if (!Array.isArray(landmarks) || landmarks.length < 2) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: landmarks must list at least 2 landmark arrays (e.g. [cueTime, outcomeTime]), got ${Array.isArray(landmarks) ? landmarks.length : typeof landmarks}.`, { fn });
  }
  const cols0 = landmarks.map((l, k) => toFloat64(checkNumberArray(fn, `landmarks[${k}]`, l)));
  const m = cols0.length;
  const nTrials = cols0[0]!.length;
  cols0.forEach((c, k) => {
    if (c.length !== nTrials) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: landmarks[${k}] has ${c.length} trials, landmarks[0] has ${nTrials}.`, { fn, landmark: k });
    }
  });

  // Per-trial validity.
  const status: (WarpExclusionReason | null)[] = new Array<WarpExclusionReason | null>(nTrials).fill(null);
  for (let j = 0; j < nTrials; j++) {
    for (let k = 0; k < m; k++) {
      const t = cols0[k]![j]!;
      if (!Number.isFinite(t)) {
        status[j] = 'missing-landmark';
        break;
      }
      if (k > 0 && !(t > cols0[k - 1]![j]!)) {
        status[j] = 'landmarks-not-increasing';
        break;
      }
    }
  }
  // Template.
  let R: Float64Array;
  if (o.template === 'median') {
    R = new Float64Array(m);
    const d = new Float64Array(nTrials);
    for (let k = 1; k < m; k++) {
      let nd = 0;
      for (let j = 0; j < nTrials; j++) if (status[j] === null) d[nd++] = cols0[k]![j]! - cols0[k - 1]![j]!;
      if (nd === 0) {
        throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: no trial has all ${m} landmarks finite and increasing, so no median template exists.`, { fn });
      }
      R[k] = R[k - 1]! + median(d.subarray(0, nd));
    }
  } else {
    const given = toFloat64(checkNumberArray(fn, 'template', o.template));
    if (given.length !== m) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: template has ${given.length} landmarks, landmarks has ${m}.`, { fn });
    }
    checkLandmarks(fn, 'template', given);
    R = Float64Array.from(given, (v) => v - given[0]!);
  }
  const x = signal.values;
  const n = x.length;
  const fs = signal.sampleRate;
  const nPre = Math.round(preSec * rate);
  const nPost = Math.round((R[m - 1]! + postSec) * rate);
  const cols = nPre + nPost;
  if (cols <= 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: the warped window holds no sample (preSec ${preSec}, postSec ${postSec}).`, { fn });
  const offsets = new Float64Array(cols);
  for (let c = 0; c < cols; c++) offsets[c] = (c - nPre) / rate;
  const durationSec = (n - 1) / fs;
  if (preSec + R[m - 1]! + postSec > durationSec) {
    throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: the warped window lasts ${preSec + R[m - 1]! + postSec} s, longer than the recording (${durationSec} s).`, { fn });
  }
  let bc0 = 0;
  let bc1 = 0;
  if (baseline !== 'none') {
    const [ba, bb] = o.baselineSec === 'pre' ? [-preSec, 0] : checkInterval(fn, 'baselineSec', o.baselineSec);
    bc0 = Math.round(ba * rate) + nPre;
    bc1 = Math.round(bb * rate) + nPre;
    if (bc0 < 0 || bc1 > cols || bc1 - bc0 < (baseline === 'zscore' ? 2 : 1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: baselineSec [${ba}, ${bb}) must lie inside the warped window [-${preSec}, ${R[m - 1]! + postSec}) and hold enough samples.`, { fn });
    }
  }

  const reasons: WarpExclusionReason[] = [];
  const exIdx: number[] = [];
  const exclude = (j: number, r: WarpExclusionReason) => {
    exIdx.push(j);
    reasons.push(r);
  };
  const data = new Float64Array(nTrials * cols);
  const stretch = new Float64Array(nTrials * (m - 1));
  const kept: number[] = [];
  const flagged: number[] = [];
  const L = new Float64Array(m);
  const st = new Float64Array(m - 1);
  let rows = 0;
  let nanRows = 0;
  let padded = 0;
  let zeroSd = 0;
  for (let j = 0; j < nTrials; j++) {
    const s = status[j];
    if (s !== null && s !== undefined) {
      exclude(j, s);
      continue;
    }
    for (let k = 0; k < m; k++) L[k] = cols0[k]![j]!;
    let out = false;
    for (let k = 0; k < m - 1; k++) {
      st[k] = (L[k + 1]! - L[k]!) / (R[k + 1]! - R[k]!);
      if (!(st[k]! >= sLo && st[k]! <= sHi)) out = true;
    }
    if (out && stretchAction === 'exclude') {
      exclude(j, 'stretch-out-of-range');
      continue;
    }
    const tFirst = warpOne(R, L, offsets[0]!);
    const tLast = warpOne(R, L, offsets[cols - 1]!);
    const pFirst = snap((tFirst - signal.t0) * fs);
    const pLast = snap((tLast - signal.t0) * fs);
    const inside = pFirst >= 0 && pLast <= n - 1;
    if (!inside) {
      if (edges === 'error') {
        throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: trial ${j} needs signal from t=${tFirst} s to t=${tLast} s, outside the recording (t=${signal.t0} s to t=${signal.t0 + durationSec} s). Pass { edges: 'drop' } or { edges: 'nan' }.`, { fn, trial: j });
      }
      if (edges === 'drop') {
        exclude(j, 'outside-recording');
        continue;
      }
      padded++;
    }
    const off = rows * cols;
    let nanCount = 0;
    for (let c = 0; c < cols; c++) {
      const p = snap((warpOne(R, L, offsets[c]!) - signal.t0) * fs);
      const v = valueAt(x, p);
      if (v !== v && p >= 0 && p <= n - 1) nanCount++;
      data[off + c] = v;
    }
    if (nanCount > 0) {
      if (nanPolicy === 'error') {
        throw new TuningforkError('TF_NON_FINITE', `${fn}: the window of trial ${j} contains ${nanCount} NaN sample(s). Pass { nan: 'drop' } or { nan: 'propagate' }.`, { fn, trial: j });
      }
      if (nanPolicy === 'drop') {
        exclude(j, 'nan-in-window');
        continue;
      }
      nanRows++;
    }
    const row = data.subarray(off, off + cols);
    if (baseline !== 'none' && !applyBaseline(row, row.slice(bc0, bc1), baseline)) zeroSd++;
    stretch.set(st, rows * (m - 1));
    if (out) flagged.push(j);
    kept.push(j);
    rows++;
  }
  const outData = data.slice(0, rows * cols);
  const warnings: ResultWarning[] = [];
  if (exIdx.length > 0) {
    const counts: Record<string, number> = {};
    for (const r of reasons) counts[r] = (counts[r] ?? 0) + 1;
    warnings.push({ code: 'trials-excluded', message: `${fn}: ${exIdx.length} trial(s) excluded (${Object.entries(counts).map(([r, c]) => `${c} ${r}`).join(', ')}); see result.excluded.`, details: counts });
  }
  if (flagged.length > 0) warnings.push({ code: 'stretch-out-of-range', message: `${fn}: ${flagged.length} kept trial(s) have a stretch factor outside [${sLo}, ${sHi}]; see result.flagged.`, details: { trials: flagged.length } });
  if (nanRows > 0) warnings.push({ code: 'nan-in-window', message: `${fn}: ${nanRows} row(s) contain NaN samples.`, details: { rows: nanRows } });
  if (padded > 0) warnings.push({ code: 'padded-with-nan', message: `${fn}: ${padded} row(s) were padded with NaN past the recording.`, details: { rows: padded } });
  if (zeroSd > 0) warnings.push({ code: 'baseline-zero-sd', message: `${fn}: ${zeroSd} row(s) are NaN because their baseline sd is 0.`, details: { rows: zeroSd } });
  return {
    data: outData, rows, cols, offsets, kept: Uint32Array.from(kept), sampleRate: rate, template: R,
    stretch: stretch.slice(0, rows * (m - 1)), flagged: Uint32Array.from(flagged),
    excluded: { index: Uint32Array.from(exIdx), reason: reasons },
    nPerColumn: countPerColumn(outData, rows, cols), warnings,
  };
}

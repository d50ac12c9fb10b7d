import { TuningforkError, toFloat64 } from '@tuningfork/core';
import { checkNumberArray } from '../internal/validate.js';

/** Index k of the segment [L_k, L_{k+1}) holding t, −1 before L_0, L.length − 1 at/after the last. */
function segmentOf(L: ArrayLike<number>, t: number): number {
  const m = L.length;
  if (t < L[0]!) return -1;
  if (t >= L[m - 1]!) return m - 1;
  let lo = 0;
  let hi = m - 1; // L[lo] ≤ t < L[hi]
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (L[mid]! <= t) lo = mid;
    else hi = mid;
  }
  return lo;
}

/**
 * Piecewise-linear map u(t) from `from` landmarks onto `to` landmarks (both strictly increasing,
 * same length ≥ 2); slope 1 outside the landmarks. Kernel shared by warpTime and warpTrials.
 */
export function warpOne(from: ArrayLike<number>, to: ArrayLike<number>, t: number): number {
  const m = from.length;
  const k = segmentOf(from, t);
  if (k < 0) return to[0]! + (t - from[0]!);
  if (k >= m - 1) return to[m - 1]! + (t - from[m - 1]!);
  const L0 = from[k]!;
  const L1 = from[k + 1]!;
  const R0 = to[k]!;
  const R1 = to[k + 1]!;
  return R0 + ((t - L0) * (R1 - R0)) / (L1 - L0);
}

/** Throw unless `v` is finite and strictly increasing with at least 2 entries. */
export function checkLandmarks(fn: string, name: string, v: Float64Array): void {
  if (v.length < 2) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${name} needs at least 2 landmarks, got ${v.length}.`, { fn, parameter: name });
  }
  for (let i = 0; i < v.length; i++) {
    if (!Number.isFinite(v[i])) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: ${name}[${i}] is ${v[i]}; landmarks must be finite seconds.`, { fn, parameter: name, index: i });
    }
    if (i > 0 && !(v[i]! > v[i - 1]!)) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: ${name}[${i}] = ${v[i]} s does not follow ${name}[${i - 1}] = ${v[i - 1]} s; landmarks must be strictly increasing.`, { fn, parameter: name, index: i });
    }
  }
}

/**
 * Warp times of one trial piecewise-linearly from its landmarks onto template landmarks.
 *
 * Inside segment k, `u = R_k + (t − L_k)(R_{k+1} − R_k)/(L_{k+1} − L_k)`; before the first and
 * after the last landmark the slope is 1 (numpy.interp would clamp there instead, so it is not
 * used). Use it to warp spike or event times directly; warpTrials samples continuous signals.
 *
 * @param times - Times to warp, seconds (NaN stays NaN).
 * @param landmarks - This trial's landmark times L (e.g. cue, choice, outcome), strictly increasing.
 * @param template - Template landmark times R (same length), strictly increasing, e.g. the
 *   cumulative median intervals from warpTrials' `template`.
 * @returns Warped times u(t), seconds on the template's clock.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (lengths differ), TF_TOO_FEW_SAMPLES (< 2
 *   landmarks), TF_NON_FINITE, TF_BAD_EVENTS (landmarks not strictly increasing).
 *
 * @example
 * ```ts
 * warpTime([9.5, 10, 10.4, 10.8, 11.15, 11.5, 12], [10, 10.8, 11.5], [0, 0.5, 1]);
 * // → [-0.5, 0, 0.25, 0.5, 0.75, 1, 1.5]
 * ```
 */
export function warpTime(times: ArrayLike<number>, landmarks: ArrayLike<number>, template: ArrayLike<number>): Float64Array {
  const fn = 'warpTime';
  const t = toFloat64(checkNumberArray(fn, 'times', times));
  const L = toFloat64(checkNumberArray(fn, 'landmarks', landmarks));
  const R = toFloat64(checkNumberArray(fn, 'template', template));
  if (L.length !== R.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: landmarks has ${L.length} entries, template has ${R.length}; they must match.`, { fn });
  }
  checkLandmarks(fn, 'landmarks', L);
  checkLandmarks(fn, 'template', R);
  const out = new Float64Array(t.length);
  for (let i = 0; i < t.length; i++) out[i] = t[i] !== t[i] ? NaN : warpOne(L, R, t[i]!);
  return out;
}

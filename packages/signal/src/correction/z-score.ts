import { TuningforkError, checkInteger, checkOneOf, checkNonNegative, resolveOptions } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';
import { medianInPlace } from '../internal/select.js';
import { checkUniform, checkWindow, windowIndices } from '../internal/validate.js';

/** Options of {@link zScore}. */
export interface ZScoreOptions {
  /**
   * 'session': (x − mean)/sd over the whole trace; 'baseline': mean and sd over `baselineSec`;
   * 'robust': (x − median)/(1.4826·MAD) over the whole trace (or `baselineSec` when given).
   * @defaultValue 'session'
   */
  method?: 'session' | 'baseline' | 'robust';
  /** [startSec, endSec) of the baseline window ('baseline' requires it). @defaultValue null */
  baselineSec?: readonly [number, number] | null;
  /** Divisor n − correction of the standard deviation (0 = population sd, as scipy.stats.zscore). @defaultValue 0 */
  correction?: number;
  /** NaN samples: 'propagate' (any NaN makes centre and scale NaN) or 'omit' (ignored; `nUsed` reports). @defaultValue 'propagate' */
  nan?: 'propagate' | 'omit';
  /** Floor on the scale (same units as x), guarding against near-constant baselines. @defaultValue 0 */
  minScale?: number;
}

/** Result of {@link zScore}. */
export interface ZScoreResult {
  readonly signal: UniformSignal;
  /** Subtracted centre (mean or median). */
  readonly center: number;
  /** Divisor (sd, or 1.4826·MAD), after the floor. */
  readonly scale: number;
  readonly method: 'session' | 'baseline' | 'robust';
  /** Samples that defined centre and scale. */
  readonly nUsed: number;
  /** True when minScale replaced a smaller scale. */
  readonly floored: boolean;
}

const DEFAULTS = Object.freeze({ method: 'session', baselineSec: null, correction: 0, nan: 'propagate', minScale: 0 } as const);

/** 1/Φ⁻¹(0.75): makes the MAD a consistent estimate of a normal standard deviation. */
export const MAD_TO_SD = 1 / 0.6744897501960817;

/**
 * z-score a trace against the session, a baseline window, or robust statistics.
 *
 * session/baseline: z = (x − mean)/sd with divisor n − correction (state it: scipy.stats.zscore
 * uses 0). robust: z = (x − median)/(1.4826·MAD), 1.4826 = 1/Φ⁻¹(0.75), insensitive to transients.
 * A zero (or sub-floor) scale gives ±Infinity/NaN values, so pass `minScale` for near-constant
 * baselines.
 *
 * @throws {TuningforkError} TF_BAD_OPTION ('baseline' without a window), TF_WINDOW_OUT_OF_RANGE
 *   (window outside the trace), TF_TOO_FEW_SAMPLES (fewer samples than correction + 1).
 * @example
 * ```ts
 * zScore({ values: Float64Array.of(1, 2, 3, 4, 100), sampleRate: 1, t0: 0 }, { method: 'robust' }).signal.values[4];
 * // 65.42550576901992
 * ```
 */
export function zScore(signal: UniformSignal, options: ZScoreOptions = {}): ZScoreResult {
  const fn = 'zScore';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const method = checkOneOf(fn, 'method', opts.method, ['session', 'baseline', 'robust'] as const);
  const win = checkWindow(fn, 'baselineSec', opts.baselineSec);
  const ddof = checkInteger(fn, 'correction', opts.correction, 0);
  const nanMode = checkOneOf(fn, 'nan', opts.nan, ['propagate', 'omit'] as const);
  const floor = checkNonNegative(fn, 'minScale', opts.minScale);
  if (method === 'baseline' && win === null) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: method 'baseline' needs baselineSec: [startSec, endSec].`, { fn });
  }
  const x = signal.values;
  const [i0, i1] = windowIndices(signal, win);
  if (win !== null && i1 <= i0) {
    throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: baselineSec [${win[0]}, ${win[1]}) holds no samples of a trace spanning [${signal.t0}, ${signal.t0 + x.length / signal.sampleRate}) s.`, { fn, window: win });
  }
  let center: number;
  let scale: number;
  let used = 0;
  let anyNaN = false;
  if (method === 'robust') {
    const buf = new Float64Array(i1 - i0);
    for (let i = i0; i < i1; i++) {
      const v = x[i]!;
      if (Number.isNaN(v)) anyNaN = true;
      else buf[used++] = v;
    }
    if (anyNaN && nanMode === 'propagate') {
      center = NaN;
      scale = NaN;
    } else {
      const work = buf.subarray(0, used);
      center = medianInPlace(work);
      for (let k = 0; k < used; k++) work[k] = Math.abs(work[k]! - center);
      scale = MAD_TO_SD * medianInPlace(work);
    }
  } else {
    // Two passes: the mean, then deviations with their sum (a compensation term: the exact
    // identity Σ(x − m')² = Σ(x − m)² − (Σ(x − m))²/n for m' = m + Σ(x − m)/n).
    let s = 0;
    for (let i = i0; i < i1; i++) {
      const v = x[i]!;
      if (v === v) {
        s += v;
        used++;
      } else anyNaN = true;
    }
    if (used <= ddof) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${used} usable sample(s) cannot give a standard deviation with correction ${ddof}.`, { fn, n: used });
    }
    const m = s / used;
    let c = 0;
    let ss = 0;
    for (let i = i0; i < i1; i++) {
      const v = x[i]!;
      if (v === v) {
        const d = v - m;
        c += d;
        ss += d * d;
      }
    }
    const mean = m + c / used;
    const dev = Math.max(0, ss - (c * c) / used);
    center = anyNaN && nanMode === 'propagate' ? NaN : mean;
    scale = anyNaN && nanMode === 'propagate' ? NaN : Math.sqrt(dev / (used - ddof));
  }
  let floored = false;
  if (scale < floor) {
    scale = floor;
    floored = true;
  }
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) out[i] = (x[i]! - center) / scale;
  return { signal: { values: out, sampleRate: signal.sampleRate, t0: signal.t0 }, center, scale, method, nUsed: used, floored };
}

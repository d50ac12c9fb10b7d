import { TuningforkError } from './errors.js';
import type { UniformSignal } from './types.js';

/** Convert array-like numbers to Float64Array (no copy when already a Float64Array). */
export function toFloat64(x: ArrayLike<number>): Float64Array {
  return x instanceof Float64Array ? x : Float64Array.from(x);
}

/** Time in seconds of sample `i` of a uniform signal: `t0 + i / sampleRate` (never accumulated). */
export function sampleTime(signal: Pick<UniformSignal, 'sampleRate' | 't0'>, i: number): number {
  return signal.t0 + i / signal.sampleRate;
}

/** Nearest sample index for time `t` (ties round up). May be outside [0, n). */
export function timeToIndex(signal: Pick<UniformSignal, 'sampleRate' | 't0'>, t: number): number {
  return Math.floor((t - signal.t0) * signal.sampleRate + 0.5);
}

/** Duration in seconds covered by a uniform signal: n / sampleRate. */
export function signalDuration(signal: UniformSignal): number {
  return signal.values.length / signal.sampleRate;
}

/** Validate a sample rate (finite, > 0). @throws TF_BAD_SAMPLE_RATE */
export function checkSampleRate(fn: string, sampleRate: unknown): number {
  if (typeof sampleRate !== 'number' || !Number.isFinite(sampleRate) || sampleRate <= 0) {
    throw new TuningforkError('TF_BAD_SAMPLE_RATE', `${fn}: sampleRate must be a finite number of Hz > 0, got ${String(sampleRate)}.`, { fn, sampleRate });
  }
  return sampleRate;
}

/** Construct a UniformSignal after validating its rate and start time. */
export function uniformSignal(values: Float64Array, sampleRate: number, t0 = 0): UniformSignal {
  checkSampleRate('uniformSignal', sampleRate);
  if (!Number.isFinite(t0)) throw new TuningforkError('TF_BAD_OPTION', `uniformSignal: t0 must be finite, got ${t0}.`, { t0 });
  return { values, sampleRate, t0 };
}

export interface InferSampleRateOptions {
  /** Largest allowed |Δt − median Δt| as a fraction of the median Δt. @defaultValue 0.1 */
  tolerance?: number;
}

/**
 * Infer the sample rate (Hz) of strictly increasing timestamps from their median interval.
 *
 * @throws {TuningforkError} TF_IRREGULAR_SAMPLING when timestamps are not strictly increasing (the
 *   message gives the first offending index) or any interval deviates from the median by more
 *   than `tolerance`; TF_TOO_FEW_SAMPLES with fewer than 2 timestamps.
 */
export function inferSampleRate(timestamps: ArrayLike<number>, options: InferSampleRateOptions = {}): number {
  const tol = options.tolerance ?? 0.1;
  const n = timestamps.length;
  if (n < 2) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `inferSampleRate: need at least 2 timestamps, got ${n}.`, { n });
  const d = new Float64Array(n - 1);
  for (let i = 1; i < n; i++) {
    const dt = timestamps[i]! - timestamps[i - 1]!;
    if (!(dt > 0)) {
      throw new TuningforkError('TF_IRREGULAR_SAMPLING', `inferSampleRate: timestamps must strictly increase; index ${i} (t=${timestamps[i]}) follows t=${timestamps[i - 1]}.`, { index: i, time: timestamps[i] });
    }
    d[i - 1] = dt;
  }
  const med = selectKth(Float64Array.from(d), (d.length - 1) >> 1);
  for (let i = 0; i < d.length; i++) {
    if (Math.abs(d[i]! - med) > tol * med) {
      throw new TuningforkError('TF_IRREGULAR_SAMPLING', `inferSampleRate: interval at index ${i + 1} (t=${timestamps[i + 1]}) is ${d[i]} s, median is ${med} s (tolerance ${tol * 100} %). Resample with signal.toUniform first.`, { index: i + 1, time: timestamps[i + 1], interval: d[i], median: med });
    }
  }
  return 1 / med;
}

/**
 * k-th smallest value (0-based) of `a`, found in expected O(n) by quickselect with
 * median-of-three pivots (Hoare 1961, "Algorithm 65: find", CACM 4(7):321). Reorders `a`.
 */
export function selectKth(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (hi > lo) {
    const mid = (lo + hi) >> 1;
    // Median of three as pivot.
    let x = a[lo]!, y = a[mid]!, z = a[hi]!;
    if (x > y) [x, y] = [y, x];
    if (y > z) { y = z; if (x > y) y = x; }
    const pivot = y;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        const t = a[i]!;
        a[i] = a[j]!;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k]!;
  }
  return a[k]!;
}

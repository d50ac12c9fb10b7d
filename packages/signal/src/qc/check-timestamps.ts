import { checkPositive, checkSampleRate, resolveOptions } from '@tuningfork/core';
import { medianInPlace } from '../internal/select.js';
import { asF64 } from '../internal/validate.js';

/** Options of {@link checkTimestamps}. */
export interface CheckTimestampsOptions {
  /** Nominal sample rate, Hz; null = 1 / median interval. @defaultValue null */
  sampleRate?: number | null;
  /** An interval deviating from 1/fs by more than this fraction of 1/fs is irregular. @defaultValue 0.1 */
  tolerance?: number;
}

/** Timestamp quality report (nothing is thrown: problems are counted). */
export interface TimestampReport {
  readonly n: number;
  readonly sampleRate: number;
  /** Intervals ≤ 0 (duplicates or time going back); the first such index, or −1. */
  readonly nonIncreasing: number;
  readonly firstNonIncreasing: number;
  /** Intervals with |Δt − 1/fs| > tolerance/fs. */
  readonly irregular: number;
  /** Intervals of ≥ 1.5 sample periods, and the samples they dropped (round(Δt·fs) − 1 each). */
  readonly gaps: number;
  readonly droppedSamples: number;
  /** Largest |Δt − 1/fs|, s. */
  readonly maxDeviationSec: number;
  /** Non-finite timestamps (the intervals either side of one are not used). */
  readonly nonFinite: number;
}

const DEFAULTS = Object.freeze({ sampleRate: null, tolerance: 0.1 } as const);

/**
 * Check acquisition timestamps: duplicates, reversals, jitter beyond tolerance, and gaps
 * (dropped samples). QC flags per SIGNALS.md §1.8: |Δt − 1/fs| > 0.1/fs (common practice).
 *
 * @param timestamps - Sample times, s.
 * @throws {TuningforkError} TF_BAD_SAMPLE_RATE, TF_BAD_OPTION.
 */
export function checkTimestamps(timestamps: ArrayLike<number>, options: CheckTimestampsOptions = {}): TimestampReport {
  const fn = 'checkTimestamps';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const t = asF64(fn, 'timestamps', timestamps);
  const tol = checkPositive(fn, 'tolerance', opts.tolerance);
  const n = t.length;
  let nonFinite = 0;
  for (let i = 0; i < n; i++) if (!Number.isFinite(t[i]!)) nonFinite++;
  const d = new Float64Array(Math.max(0, n - 1));
  let nonInc = 0;
  let first = -1;
  let m = 0;
  for (let i = 1; i < n; i++) {
    const dt = t[i]! - t[i - 1]!;
    // A non-finite timestamp (counted in nonFinite) bounds no usable interval: without this skip,
    // t = Infinity gave an infinite interval, droppedSamples Infinity and, inferred, sampleRate 0.
    if (!Number.isFinite(dt)) continue;
    if (!(dt > 0)) {
      nonInc++;
      if (first < 0) first = i;
      continue;
    }
    d[m++] = dt;
  }
  const fs = opts.sampleRate === null ? (m > 0 ? 1 / medianInPlace(Float64Array.from(d.subarray(0, m))) : NaN) : checkSampleRate(fn, opts.sampleRate);
  const p = 1 / fs;
  let irregular = 0;
  let gaps = 0;
  let dropped = 0;
  let maxDev = 0;
  for (let i = 0; i < m; i++) {
    const dev = Math.abs(d[i]! - p);
    if (dev > maxDev) maxDev = dev;
    if (dev > tol * p) irregular++;
    if (d[i]! >= 1.5 * p) {
      gaps++;
      dropped += Math.round(d[i]! * fs) - 1;
    }
  }
  return { n, sampleRate: fs, nonIncreasing: nonInc, firstNonIncreasing: first, irregular, gaps, droppedSamples: dropped, maxDeviationSec: maxDev, nonFinite };
}

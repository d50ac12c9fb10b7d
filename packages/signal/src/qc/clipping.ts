import { TuningforkError, checkInteger, checkPositive, resolveOptions } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';
import { checkUniform } from '../internal/validate.js';

/** Options of {@link findClipping}. */
export interface ClippingOptions {
  /** Detector/ADC limits [low, high]; null uses the observed minimum and maximum. @defaultValue null */
  range?: readonly [number, number] | null;
  /** "Near a limit" = within this fraction of the range width of it (with a known range). @defaultValue 0.005 */
  nearFraction?: number;
  /** Fraction of samples near the limits above which the channel counts as clipped. @defaultValue 0.001 */
  maxNearFraction?: number;
  /** Runs of at least this many equal samples at an extreme count as clipping. @defaultValue 5 */
  minRun?: number;
}

/** One run of equal extreme samples. */
export interface ClipRun {
  readonly startIndex: number;
  readonly length: number;
  readonly startSec: number;
  readonly value: number;
}

/** Result of {@link findClipping}. */
export interface ClippingReport {
  /** Runs of ≥ minRun equal samples at the minimum or maximum (or at/beyond a known limit). */
  readonly runs: readonly ClipRun[];
  /** Samples within nearFraction of a known limit (0 without a range). */
  readonly nearLimit: number;
  readonly nearFraction: number;
  /** True when any run was found or nearFraction exceeds maxNearFraction. */
  readonly clipped: boolean;
}

const DEFAULTS = Object.freeze({ range: null, nearFraction: 0.005, maxNearFraction: 0.001, minRun: 5 } as const);

/**
 * Detect saturation and clipping of a raw channel.
 *
 * A channel is flagged when it holds runs of ≥ `minRun` identical samples at its extreme values
 * (a saturated detector or ADC returns a constant), or, with a known `range`, when more than
 * `maxNearFraction` of the samples lie within `nearFraction` of a limit (thresholds: common
 * practice). Non-finite samples are skipped.
 *
 * @throws {TuningforkError} TF_BAD_OPTION for an invalid range.
 */
export function findClipping(signal: UniformSignal, options: ClippingOptions = {}): ClippingReport {
  const fn = 'findClipping';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const near = checkPositive(fn, 'nearFraction', opts.nearFraction);
  const maxNear = checkPositive(fn, 'maxNearFraction', opts.maxNearFraction);
  const minRun = checkInteger(fn, 'minRun', opts.minRun, 2);
  const x = signal.values;
  const n = x.length;
  const range = opts.range;
  if (range !== null) {
    if (!Array.isArray(range) || range.length !== 2 || !(range[0] < range[1])) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: range must be [low, high] with low < high, got ${JSON.stringify(range)}.`, { fn });
    }
  }
  // One pass: the extremes, and every run of ≥ minRun equal samples (candidates); runs at the
  // final extremes (or beyond a known limit) are kept.
  let lo = Infinity;
  let hi = -Infinity;
  const cand: ClipRun[] = [];
  let i = 0;
  while (i < n) {
    const v = x[i]!;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
    let j = i + 1;
    while (j < n && x[j] === v) j++;
    if (j - i >= minRun) cand.push({ startIndex: i, length: j - i, startSec: signal.t0 + i / signal.sampleRate, value: v });
    i = j;
  }
  const limLo = range ? range[0] : lo;
  const limHi = range ? range[1] : hi;
  const runs = hi > lo ? cand.filter((r) => r.value <= limLo || r.value >= limHi) : [];
  let nearLimit = 0;
  if (range) {
    const w = (range[1] - range[0]) * near;
    for (let k = 0; k < n; k++) {
      const v = x[k]!;
      if (v <= range[0] + w || v >= range[1] - w) nearLimit++;
    }
  }
  const frac = n > 0 ? nearLimit / n : 0;
  return { runs, nearLimit, nearFraction: frac, clipped: runs.length > 0 || frac > maxNear };
}

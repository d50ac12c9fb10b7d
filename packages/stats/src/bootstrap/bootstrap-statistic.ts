import { checkOneOf, resolveOptions, rng, toFloat64, TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import {
  accelerationFrom, accumulateJackknife, FLAG_DEGENERATE, FLAG_NO_REPLICATES, FLAG_UNSTABLE_LEVEL, FLAG_ZERO_ACCELERATION,
  intervalInPlace, makeIntervalScratch,
} from '../internal/interval-core.js';
import { asRows } from '../internal/rows.js';
import { checkConfidence, checkResamples, checkSeed, resamplesForLevel, warn } from '../internal/validate.js';
import { jackknifeValues } from './jackknife.js';
import type { SampleStatistic } from './jackknife.js';

export interface BootstrapStatisticOptions {
  /** Interval method. @defaultValue 'bca' */
  method?: 'percentile' | 'bca';
  /** Two-sided confidence level. @defaultValue 0.95 */
  confidenceLevel?: number;
  /** Bootstrap resamples B. @defaultValue 9999 */
  resamples?: number;
  /** Seed of the core Rng (stream 0 draws the resamples). @defaultValue 0 */
  seed?: number;
}

/** Bootstrap interval of one statistic, with what produced it. */
export interface StatisticInterval {
  readonly estimate: number;
  readonly low: number;
  readonly high: number;
  /** Standard deviation of the finite replicates (divisor B' − 1). */
  readonly standardError: number;
  /** Mean of the finite replicates minus the estimate. */
  readonly bias: number;
  /** BCa bias correction (NaN for 'percentile'). */
  readonly z0: number;
  /** BCa jackknife acceleration (NaN for 'percentile'). */
  readonly acceleration: number;
  /** Finite replicates in draw order (length B − nonFinite). */
  readonly replicates: Float64Array;
  /** Replicates that were NaN or ±∞ and were dropped. */
  readonly nonFinite: number;
  readonly method: 'percentile' | 'bca';
  readonly confidenceLevel: number;
  readonly resamples: number;
  readonly seed: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  method: 'bca' as 'percentile' | 'bca',
  confidenceLevel: 0.95,
  resamples: 9999,
  seed: 0,
});

/**
 * Bootstrap confidence interval of an arbitrary statistic of one sample.
 *
 * Draws B resamples of the n observations with replacement (whole rows for a matrix, so paired
 * values stay together), evaluates `statistic` on each and returns the percentile or BCa
 * interval (INFERENCE.md §1.1, scipy's conventions: type-7 quantiles, ties counted as one half
 * in z0, jackknife acceleration). `statistic` receives a reused scratch buffer of n rows × cols;
 * do not keep a reference to it. Replicates that are NaN or ±∞ (e.g. a correlation of a
 * resample that repeats one observation) are dropped, counted in `nonFinite` and reported in a
 * 'replicates-dropped' warning; the interval uses the finite ones.
 *
 * For time courses use `bootstrapTimecourse`, which avoids evaluating a callback per resample.
 *
 * @param data - Observations: a vector, or a matrix whose rows are observations.
 * @param statistic - θ(sample, rows, cols); must be finite on the full sample.
 * @returns `{ estimate, low, high, standardError, bias, z0, acceleration, replicates, nonFinite, seed, warnings }`
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (< 2 observations), TF_SHAPE_MISMATCH,
 *   TF_NON_FINITE (θ̂ or, for BCa, a jackknife value not finite), TF_BAD_OPTION, TF_UNKNOWN_OPTION.
 *
 * @example
 * const r = bootstrapStatistic(scores, (s, n) => plugInVariance(s, n), { confidenceLevel: 0.9, seed: 1 });
 *
 * References
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap, ch. 13–14.
 *   Chapman & Hall/CRC. doi:10.1201/9780429246593
 * - Efron, B. (1987). Better bootstrap confidence intervals. Journal of the American Statistical
 *   Association 82(397):171–185. doi:10.1080/01621459.1987.10478410
 */
export function bootstrapStatistic(
  data: ArrayLike<number> | Matrix, statistic: SampleStatistic, options: BootstrapStatisticOptions = {},
): StatisticInterval {
  const fn = 'bootstrapStatistic';
  const x = asRows(fn, data);
  if (typeof statistic !== 'function') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: statistic must be a function (sample, rows, cols) => number, got ${typeof statistic}.`, { fn });
  }
  const o = resolveOptions(fn, DEFAULTS, options);
  const method = checkOneOf(fn, 'method', o.method, ['percentile', 'bca'] as const);
  const level = checkConfidence(fn, o.confidenceLevel);
  const B = checkResamples(fn, 'resamples', o.resamples, 2);
  const seed = checkSeed(fn, o.seed);
  const { rows: n, cols, data: d } = x;
  const estimate = statistic(d, n, cols);
  if (!Number.isFinite(estimate)) {
    throw new TuningforkError('TF_NON_FINITE', `${fn}: the statistic of the full sample is ${estimate}; a bootstrap interval needs a finite estimate.`, { fn, estimate });
  }
  const r = rng(seed).stream(0);
  const scratch = new Float64Array(n * cols);
  const reps = new Float64Array(B);
  let m = 0;
  for (let b = 0; b < B; b++) {
    for (let i = 0; i < n; i++) {
      const src = r.int(n) * cols;
      for (let c = 0; c < cols; c++) scratch[i * cols + c] = d[src + c]!;
    }
    const v = statistic(scratch, n, cols);
    if (v - v === 0) reps[m++] = v;
  }
  const replicates = reps.slice(0, m);
  let mean = 0;
  for (let b = 0; b < m; b++) mean += replicates[b]!;
  mean /= m;
  let ss = 0;
  for (let b = 0; b < m; b++) ss += (replicates[b]! - mean) ** 2;
  let a = NaN;
  let aFlags = 0;
  if (method === 'bca') {
    const jack = jackknifeValues(fn, d, n, cols, statistic);
    const acc = new Float64Array(2);
    accumulateJackknife(jack, n, acc);
    const ar = accelerationFrom(acc[0]!, acc[1]!);
    a = ar.a;
    aFlags = ar.flags;
  }
  const s = makeIntervalScratch();
  intervalInPlace(reps, m, estimate, method === 'bca', (1 - level) / 2, method === 'bca' ? a : 0, aFlags, s);
  const warnings: ResultWarning[] = [];
  if (m < B) warnings.push(warn('replicates-dropped', `${fn}: ${B - m} of ${B} bootstrap replicates were not finite and were dropped; the interval uses the other ${m}.`, { dropped: B - m, resamples: B }));
  warnings.push(...flagWarnings(fn, s.flags));
  warnings.push(...resamplesForLevel(fn, m, level));
  return {
    estimate, low: s.low, high: s.high, standardError: m > 1 ? Math.sqrt(ss / (m - 1)) : NaN, bias: mean - estimate,
    z0: s.z0, acceleration: a, replicates, nonFinite: B - m, method, confidenceLevel: level, resamples: B, seed, warnings,
  };
}

/** Warnings for the interval flags of a single statistic. */
export function flagWarnings(fn: string, flags: number): ResultWarning[] {
  const w: ResultWarning[] = [];
  if (flags & FLAG_DEGENERATE) w.push(warn('degenerate-bca', `${fn}: the bootstrap distribution is degenerate (all replicates equal, or the estimate outside their range, so z0 = ±∞); the BCa interval is NaN. The method was not switched; use method: 'percentile' if appropriate.`));
  if (flags & FLAG_ZERO_ACCELERATION) w.push(warn('zero-acceleration', `${fn}: all jackknife values are equal (Σd² = 0); the BCa acceleration was set to 0.`));
  if (flags & FLAG_UNSTABLE_LEVEL) w.push(warn('bca-level-unstable', `${fn}: 1 − a(z0 + z) ≤ 0 for a bound, so its BCa level is undefined; that bound is NaN.`));
  if (flags & FLAG_NO_REPLICATES) w.push(warn('no-finite-replicates', `${fn}: no bootstrap replicate was finite; the interval is NaN.`));
  return w;
}

export interface IntervalFromReplicatesOptions {
  /** The statistic on the original sample θ̂ (needed for BCa). @defaultValue NaN */
  estimate?: number;
  /** Interval method. @defaultValue 'percentile' */
  method?: 'percentile' | 'bca';
  /** Two-sided confidence level. @defaultValue 0.95 */
  confidenceLevel?: number;
  /** Jackknife values θ_(i) for the BCa acceleration (or give `acceleration`). @defaultValue undefined */
  jackknife?: ArrayLike<number> | undefined;
  /** BCa acceleration, when already known. @defaultValue undefined */
  acceleration?: number | undefined;
}

const REPLICATE_DEFAULTS = Object.freeze({
  estimate: NaN,
  method: 'percentile' as 'percentile' | 'bca',
  confidenceLevel: 0.95,
  jackknife: undefined as ArrayLike<number> | undefined,
  acceleration: undefined as number | undefined,
});

/**
 * Percentile or BCa interval from bootstrap replicates computed elsewhere (for instance a
 * custom resampling scheme). Same arithmetic as `bootstrapStatistic`: type-7 quantiles; BCa with
 * z0 = Φ⁻¹((#{θ* < θ̂} + #{θ* ≤ θ̂})/(2B)) and a from `jackknife` (E&T eq. 14.15) or `acceleration`.
 * Non-finite replicates are dropped and reported. The input is not modified.
 *
 * @throws {TuningforkError} TF_BAD_OPTION when BCa lacks a finite `estimate` or both/neither of
 *   `jackknife` and `acceleration`; TF_TOO_FEW_SAMPLES when `jackknife` has < 2 values;
 *   TF_NON_FINITE when a `jackknife` value is NaN or ±∞ (index given).
 */
export function intervalFromReplicates(
  replicates: ArrayLike<number>, options: IntervalFromReplicatesOptions = {},
): Pick<StatisticInterval, 'low' | 'high' | 'z0' | 'acceleration' | 'nonFinite' | 'warnings' | 'method' | 'confidenceLevel'> {
  const fn = 'intervalFromReplicates';
  const o = resolveOptions(fn, REPLICATE_DEFAULTS, options);
  const method = checkOneOf(fn, 'method', o.method, ['percentile', 'bca'] as const);
  const level = checkConfidence(fn, o.confidenceLevel);
  const src = toFloat64(replicates);
  const reps = new Float64Array(src.length);
  let m = 0;
  for (let i = 0; i < src.length; i++) { const v = src[i]!; if (v - v === 0) reps[m++] = v; }
  let a = NaN;
  let aFlags = 0;
  if (method === 'bca') {
    if (!Number.isFinite(o.estimate)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: method 'bca' needs a finite estimate (θ̂), got ${String(o.estimate)}.`, { fn, option: 'estimate' });
    if ((o.jackknife === undefined) === (o.acceleration === undefined)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: method 'bca' needs exactly one of jackknife (leave-one-out values) or acceleration.`, { fn });
    }
    if (o.jackknife !== undefined) {
      const j = toFloat64(o.jackknife);
      if (j.length < 2) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: jackknife has ${j.length} value(s); at least 2 are needed.`, { fn });
      for (let i = 0; i < j.length; i++) {
        const v = j[i]!;
        if (!(v - v === 0)) {
          throw new TuningforkError('TF_NON_FINITE', `${fn}: jackknife value ${i} (the statistic without observation ${i}) is ${v}; the BCa acceleration needs finite leave-one-out values. Recompute it, or give acceleration directly.`, { fn, option: 'jackknife', index: i, value: v });
        }
      }
      const acc = new Float64Array(2);
      accumulateJackknife(j, j.length, acc);
      const ar = accelerationFrom(acc[0]!, acc[1]!);
      a = ar.a;
      aFlags = ar.flags;
    } else {
      a = o.acceleration as number;
      if (!Number.isFinite(a)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: acceleration must be finite, got ${a}.`, { fn, option: 'acceleration' });
    }
  }
  const s = makeIntervalScratch();
  intervalInPlace(reps, m, o.estimate, method === 'bca', (1 - level) / 2, method === 'bca' ? a : 0, aFlags, s);
  const warnings: ResultWarning[] = [];
  if (m < src.length) warnings.push(warn('replicates-dropped', `${fn}: ${src.length - m} of ${src.length} replicates were not finite and were dropped.`, { dropped: src.length - m }));
  warnings.push(...flagWarnings(fn, s.flags));
  warnings.push(...resamplesForLevel(fn, m, level));
  return { low: s.low, high: s.high, z0: s.z0, acceleration: a, nonFinite: src.length - m, warnings, method, confidenceLevel: level };
}

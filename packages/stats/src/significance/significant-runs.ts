import { checkFinite, checkNonNegative, checkRange, checkSampleRate, resolveOptions, toFloat64, TuningforkError } from '@tuningfork/core';

/** One run of consecutive candidate samples that is long enough to count. */
export interface SignificantRun {
  /** First and last column of the run (inclusive). */
  readonly start: number;
  readonly end: number;
  /** Time of the first and of the last sample of the run, seconds. */
  readonly onsetSec: number;
  readonly offsetSec: number;
  /** Samples in the run (end − start + 1). */
  readonly samples: number;
  /** +1: above the reference (or positive effect); −1: below. */
  readonly sign: 1 | -1;
}

export interface SignificantRunsResult {
  readonly runs: readonly SignificantRun[];
  /** The run length k in samples that `minRunSec` became: ⌈minRunSec·sampleRate⌉, at least 1. */
  readonly minSamples: number;
  /** Sample rate used, Hz. */
  readonly sampleRate: number;
  /** Per-sample candidates before the run-length rule: +1, −1 or 0 (0 also for NaN). */
  readonly candidates: Int8Array;
}

export interface ConsecutiveRunOptions {
  /**
   * Shortest run that counts, seconds (required). Heuristic, not exact family-wise error control:
   * Jean-Richard-dit-Bressel et al. (2020) tie it to the low-pass filter of the trace (a fraction
   * of 1/cutoff); choose and report it. @defaultValue NaN (must be given)
   */
  minRunSec?: number;
  /** Sample rate of the columns, Hz; taken from `offsets` when omitted. @defaultValue NaN */
  sampleRate?: number;
  /** Column times, seconds (e.g. a PeriEventMatrix's offsets); else startSec + i/sampleRate. @defaultValue undefined */
  offsets?: Float64Array | undefined;
  /** Time of column 0 when `offsets` is not given, seconds. @defaultValue 0 */
  startSec?: number;
}

const RUN_DEFAULTS = Object.freeze({ minRunSec: NaN, sampleRate: NaN, offsets: undefined as Float64Array | undefined, startSec: 0 });

/**
 * Consecutive-threshold rule: keep only runs of at least k consecutive candidate samples of
 * the same sign (Jean-Richard-dit-Bressel, Clifford & McNally 2020), with k given in seconds.
 *
 * `candidates[i]` is +1, −1 or 0 (anything else non-zero counts by its sign; NaN is 0). A run
 * ends at a 0, a sign change or a NaN. k = ⌈minRunSec·sampleRate⌉ (at least 1); runs report
 * onset/offset as the times of their first/last sample. The rule controls false positives only
 * heuristically (the paper calibrates it by simulation); report k with the result.
 *
 * @param candidates - Per-sample candidate signs, one per time bin.
 * @throws {TuningforkError} TF_BAD_OPTION when minRunSec is missing or negative, or when neither
 *   a sample rate nor offsets of matching length are given; TF_BAD_SAMPLE_RATE; TF_SHAPE_MISMATCH
 *   when offsets have the wrong length.
 *
 * References
 * - Jean-Richard-dit-Bressel, P., Clifford, C. W. G. & McNally, G. P. (2020). Analyzing event-related
 *   transients: confidence intervals, permutation tests, and consecutive thresholds. Frontiers in
 *   Molecular Neuroscience 13:14. doi:10.3389/fnmol.2020.00014
 */
export function consecutiveThresholdRuns(candidates: ArrayLike<number>, options: ConsecutiveRunOptions = {}): SignificantRunsResult {
  return runsImpl('consecutiveThresholdRuns', candidates, options);
}

function runsImpl(fn: string, cand: ArrayLike<number>, options: ConsecutiveRunOptions): SignificantRunsResult {
  const o = resolveOptions(fn, RUN_DEFAULTS, options);
  if (o.minRunSec !== o.minRunSec) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: minRunSec (the shortest run that counts, seconds) must be given; there is no default because it depends on the trace's low-pass filter (e.g. a fraction of 1/cutoffHz).`, { fn, option: 'minRunSec' });
  }
  const minRunSec = checkNonNegative(fn, 'minRunSec', o.minRunSec);
  const T = cand.length;
  const offsets = o.offsets;
  if (offsets !== undefined && (!(offsets instanceof Float64Array) || offsets.length !== T)) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: offsets must be a Float64Array with one time per sample (${T}), got length ${(offsets as { length?: number }).length}.`, { fn, expected: T });
  }
  let fs = o.sampleRate;
  if (fs !== fs) {
    if (offsets === undefined || T < 2 || !(offsets[T - 1]! > offsets[0]!)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: give sampleRate (Hz) or increasing offsets (column times, s) so minRunSec can be turned into samples.`, { fn });
    }
    fs = (T - 1) / (offsets[T - 1]! - offsets[0]!);
  }
  checkSampleRate(fn, fs);
  const startSec = checkFinite(fn, 'startSec', o.startSec);
  const minSamples = Math.max(1, Math.ceil(minRunSec * fs - 1e-9));
  const c = new Int8Array(T);
  for (let i = 0; i < T; i++) { const v = cand[i]!; c[i] = v > 0 ? 1 : v < 0 ? -1 : 0; }
  const time = (i: number) => (offsets ? offsets[i]! : startSec + i / fs);
  const runs: SignificantRun[] = [];
  let i = 0;
  while (i < T) {
    const s = c[i]!;
    if (s === 0) { i++; continue; }
    const start = i;
    while (i < T && c[i] === s) i++;
    const len = i - start;
    if (len >= minSamples) runs.push({ start, end: i - 1, onsetSec: time(start), offsetSec: time(i - 1), samples: len, sign: s as 1 | -1 });
  }
  return { runs, minSamples, sampleRate: fs, candidates: c };
}

/** A band with per-bin bounds, such as the result of `bootstrapTimecourse`. */
export interface BandLike {
  readonly low: ArrayLike<number>;
  readonly high: ArrayLike<number>;
  readonly offsets?: Float64Array | undefined;
}

export interface IntervalRunOptions extends ConsecutiveRunOptions {
  /** Value the band must exclude (0 for a difference or a baseline-subtracted trace). @defaultValue 0 */
  reference?: number;
}

/**
 * Significant runs of a bootstrap confidence band: bins whose band excludes `reference`
 * (low > reference → +1, high < reference → −1), kept when at least `minRunSec` long.
 * Column times come from `band.offsets` (a PeriEventMatrix's) unless `offsets`/`sampleRate` is
 * given. NaN bounds break runs.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when low and high differ in length; otherwise as
 *   `consecutiveThresholdRuns`.
 *
 * References
 * - Jean-Richard-dit-Bressel, P., Clifford, C. W. G. & McNally, G. P. (2020). Frontiers in Molecular
 *   Neuroscience 13:14. doi:10.3389/fnmol.2020.00014
 */
export function significantRunsFromInterval(band: BandLike, options: IntervalRunOptions = {}): SignificantRunsResult {
  const fn = 'significantRunsFromInterval';
  const { reference = 0, ...rest } = options;
  checkFinite(fn, 'reference', reference);
  const lo = band.low;
  const hi = band.high;
  if (lo.length !== hi.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: band.low has ${lo.length} values but band.high has ${hi.length}.`, { fn });
  }
  const c = new Int8Array(lo.length);
  for (let i = 0; i < lo.length; i++) c[i] = lo[i]! > reference ? 1 : hi[i]! < reference ? -1 : 0;
  const opts = { ...rest };
  if (opts.offsets === undefined && opts.sampleRate === undefined && band.offsets !== undefined) opts.offsets = band.offsets;
  return runsImpl(fn, c, opts);
}

export interface PValueRunOptions extends ConsecutiveRunOptions {
  /** Per-sample significance level. @defaultValue 0.05 */
  alpha?: number;
  /** Per-bin effect whose sign labels each run (e.g. t or the mean difference). @defaultValue undefined (all +1) */
  effect?: ArrayLike<number> | undefined;
}

/**
 * Significant runs of per-sample p-values (e.g. from `permutationTimecourse`): bins with
 * p < alpha, signed by `effect`, kept when at least `minRunSec` long. NaN p breaks runs.
 *
 * @param p - Per-bin p-values in [0, 1]; NaN (a missing test) is never significant.
 * @throws {TuningforkError} TF_BAD_VALUE when a p-value is outside [0, 1] or ±∞ (index given);
 *   TF_SHAPE_MISMATCH when effect and p differ in length; TF_BAD_OPTION for alpha outside [0, 1];
 *   otherwise as `consecutiveThresholdRuns`.
 *
 * References
 * - Jean-Richard-dit-Bressel, P., Clifford, C. W. G. & McNally, G. P. (2020). Frontiers in Molecular
 *   Neuroscience 13:14. doi:10.3389/fnmol.2020.00014
 */
export function significantRunsFromPValues(p: ArrayLike<number>, options: PValueRunOptions = {}): SignificantRunsResult {
  const fn = 'significantRunsFromPValues';
  const { alpha = 0.05, effect, ...rest } = options;
  checkRange(fn, 'alpha', alpha, 0, 1);
  const pv = toFloat64(p);
  if (effect !== undefined && effect.length !== pv.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: effect has ${effect.length} values but p has ${pv.length}.`, { fn });
  }
  for (let i = 0; i < pv.length; i++) {
    const v = pv[i]!;
    if (v === v && !(v >= 0 && v <= 1)) {
      throw new TuningforkError('TF_BAD_VALUE', `${fn}: p-values must lie in [0, 1] (or be NaN for a missing test); index ${i} is ${v}. Pass the p-values (e.g. permutationTimecourse(...).pValue), not the t values.`, { fn, index: i, value: v });
    }
  }
  const c = new Int8Array(pv.length);
  for (let i = 0; i < pv.length; i++) {
    if (!(pv[i]! < alpha)) continue;
    const e = effect === undefined ? 1 : effect[i]!;
    c[i] = e > 0 ? 1 : e < 0 ? -1 : 0;
  }
  return runsImpl(fn, c, rest);
}

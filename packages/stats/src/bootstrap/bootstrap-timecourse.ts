import { checkBoolean, checkInteger, checkOneOf, resolveOptions, rng, threadBudget, TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { multinomialPlan } from '../internal/count-plan.js';
import { MEAN_SPEC, prepareCondition, runTimecourse } from '../internal/timecourse-engine.js';
import type { NanMode, StatSpec } from '../internal/timecourse-engine.js';
import { checkConfidence, checkMatrix, checkResamples, checkSameCols, checkSeed, matrixOffsets, resamplesForLevel } from '../internal/validate.js';

/**
 * A statistic of one time bin computed from weighted moments, so that every resample is one
 * weighted sum per moment (no per-resample copies of the data).
 */
export interface MomentStatistic {
  /** Label reported in the result. */
  readonly name: string;
  /** Highest moment used, 1–4. */
  readonly order: 1 | 2 | 3 | 4;
  /**
   * θ from `moments[k − 1]` = Σ wᵢ(xᵢ − center)^k / Σ wᵢ (k = 1..order) of the (re)sample, where
   * `center` is the bin's sample mean and `count` = Σ wᵢ is the (re)sample size. Called once per
   * resample and bin with a reused buffer; do not keep a reference to it.
   */
  evaluate(moments: Float64Array, center: number, count: number): number;
}

/** 'mean', plug-in or corrected 'variance' / 'sd' (see `correction`), or a custom moment statistic. */
export type TimecourseStatistic = 'mean' | 'variance' | 'sd' | MomentStatistic;

export interface BootstrapTimecourseOptions {
  /** Statistic per time bin. @defaultValue 'mean' */
  statistic?: TimecourseStatistic;
  /** Interval method (INFERENCE.md §1.1). @defaultValue 'percentile' */
  method?: 'percentile' | 'bca';
  /** Two-sided confidence level. @defaultValue 0.95 */
  confidenceLevel?: number;
  /** Bootstrap resamples B (≥ 2000 recommended for BCa). @defaultValue 2000 */
  resamples?: number;
  /** Seed of the core Rng; condition a uses stream 0, condition b stream 1. @defaultValue 0 */
  seed?: number;
  /** Divisor n − correction for 'variance' and 'sd' (0 = plug-in, as E&T). @defaultValue 0 */
  correction?: 0 | 1;
  /** Non-finite cells: NaN for the whole bin, leave them out of that bin, or throw. @defaultValue 'propagate' */
  nan?: NanMode;
  /** Return the B × T replicate matrix (memory: 8·B·T bytes). @defaultValue false */
  keepReplicates?: boolean;
  /**
   * Threads computing the resample product for large inputs (≥ 10⁸ table lookups, e.g. 2,000
   * resamples of 600 trials × 700 bins), the calling thread included; capped at the machine's
   * available parallelism; 1 = calling thread only, 0 = auto (core's threadBudget: one per core,
   * or the budget of TUNINGFORK_THREADS). Extra threads are worker threads started once per
   * process; results do not depend on this number. @defaultValue 0
   */
  threads?: number;
}

/** Per-time-bin estimate and confidence band. All arrays have one entry per column. */
export interface TimecourseInterval {
  readonly estimate: Float64Array;
  readonly low: Float64Array;
  readonly high: Float64Array;
  /** Standard deviation of the finite replicates (divisor B − 1, as scipy). */
  readonly standardError: Float64Array;
  /** Column times (s) from the input's `offsets` when it is a PeriEventMatrix. */
  readonly offsets: Float64Array | undefined;
  /** BCa bias correction per bin (undefined for 'percentile'). */
  readonly z0: Float64Array | undefined;
  /** BCa jackknife acceleration per bin (undefined for 'percentile'). */
  readonly acceleration: Float64Array | undefined;
  /** B × T replicates when `keepReplicates` (NaN where a replicate was dropped). */
  readonly replicates: Matrix | undefined;
  readonly statistic: string;
  readonly method: 'percentile' | 'bca';
  readonly confidenceLevel: number;
  readonly resamples: number;
  readonly seed: number;
  /** Trials (rows) per condition. */
  readonly trials: readonly number[];
  /** Finite trials per bin, per condition (differs from `trials` only with nan: 'omit'). */
  readonly trialsPerBin: readonly Int32Array[];
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  statistic: 'mean' as TimecourseStatistic,
  method: 'percentile' as 'percentile' | 'bca',
  confidenceLevel: 0.95,
  resamples: 2000,
  seed: 0,
  correction: 0 as 0 | 1,
  nan: 'propagate' as NanMode,
  keepReplicates: false,
  threads: 0,
});


function specOf(fn: string, s: unknown, correction: number): StatSpec {
  if (s === 'mean') return MEAN_SPEC;
  if (s === 'variance' || s === 'sd') {
    const sd = s === 'sd';
    return {
      name: correction === 0 ? s : `${s} (n − 1)`, order: 2, centred: true,
      evaluate: (m, _c, n) => {
        const v = ((m[1]! - m[0]! * m[0]!) * n) / (n - correction);
        return sd ? Math.sqrt(v) : v;
      },
    };
  }
  const ms = s as Partial<MomentStatistic> | null;
  if (ms !== null && typeof ms === 'object' && typeof ms.evaluate === 'function' && typeof ms.name === 'string'
    && Number.isInteger(ms.order) && ms.order! >= 1 && ms.order! <= 4) {
    const f = ms.evaluate.bind(ms);
    return { name: ms.name, order: ms.order!, centred: true, evaluate: f };
  }
  throw new TuningforkError('TF_BAD_OPTION', `${fn}: statistic must be 'mean', 'variance', 'sd' or { name, order: 1–4, evaluate(moments, center, count) }, got ${typeof s === 'string' ? `'${s}'` : typeof s}.`, { fn, option: 'statistic' });
}

function resolve(fn: string, options: BootstrapTimecourseOptions | undefined) {
  const o = resolveOptions(fn, DEFAULTS, options);
  const method = checkOneOf(fn, 'method', o.method, ['percentile', 'bca'] as const);
  const confidenceLevel = checkConfidence(fn, o.confidenceLevel);
  const resamples = checkResamples(fn, 'resamples', o.resamples, 2);
  const seed = checkSeed(fn, o.seed);
  const correction = checkInteger(fn, 'correction', o.correction, 0, 1);
  const nan = checkOneOf(fn, 'nan', o.nan, ['propagate', 'omit', 'error'] as const);
  const keepReplicates = checkBoolean(fn, 'keepReplicates', o.keepReplicates);
  const threads = checkInteger(fn, 'threads', o.threads, 0, 64) || threadBudget();
  const spec = specOf(fn, o.statistic, correction);
  return { method, confidenceLevel, resamples, seed, nan, keepReplicates, threads, spec };
}

/**
 * Bootstrap confidence band of a statistic for every time bin of a trials × time matrix.
 *
 * Resamples trials (rows) with replacement B times; every time bin shares each resample, so
 * the replicate traces are whole curves (as run-length and max-statistic rules need). The
 * statistic is the mean by default, or any moment statistic (plug-in variance, sd, custom).
 *
 * **Method.** Multinomial counts W (B × n, n indices drawn uniformly per resample) and one
 * product W·Y per moment, computed by a table method over groups of 8 trials (see the package
 * README), with no per-resample allocation; for large inputs in WebAssembly SIMD and on
 * `threads` threads, with the same bits as the plain JS kernel. Percentile interval: the type-7 (linear) quantiles
 * α, 1 − α of the replicates, found by quickselect. BCa (Efron 1987; E&T ch. 14): bias
 * correction z0 = Φ⁻¹((#{θ* < θ̂} + #{θ* ≤ θ̂})/(2B)) (scipy's tie rule), acceleration from the
 * closed-form jackknife of each bin (leave-one-out moments (S − zᵢ)/(n − 1)), levels
 * α1,2 = Φ(z0 + (z0 + z)/(1 − a(z0 + z))). Same inputs and seed give bit-identical output.
 *
 * NaN: `nan: 'propagate'` (default) gives NaN and a 'non-finite-columns' warning for a bin with
 * a non-finite cell; 'omit' uses the finite trials of each bin; 'error' throws. Degenerate BCa
 * bins (all replicates equal, θ̂ outside their range) are NaN with a 'degenerate-bca' warning;
 * Σd² = 0 sets a = 0 with 'zero-acceleration'; 1 − a(z0 + z) ≤ 0 makes that bound NaN with
 * 'bca-level-unstable'. The method is never switched silently. A 'single-thread' warning says
 * worker threads could not start (the numbers are unaffected).
 *
 * @param matrix - Trials × time bins (a core Matrix or PeriEventMatrix; its offsets are kept).
 * @returns Per-bin estimate, low, high, standard error (+ z0, acceleration for BCa), seed and warnings.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (< 2 trials), TF_SHAPE_MISMATCH (malformed
 *   matrix), TF_NON_FINITE (nan: 'error'), TF_BAD_OPTION, TF_UNKNOWN_OPTION.
 *
 * @example
 * const band = bootstrapTimecourse(peth, { resamples: 2000, seed: 1 });
 * // band.low[j] ≤ band.estimate[j] ≤ band.high[j] for every bin j with finite data
 *
 * References
 * - Efron, B. (1987). Better bootstrap confidence intervals. Journal of the American Statistical
 *   Association 82(397):171–185. doi:10.1080/01621459.1987.10478410
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap, ch. 13–14.
 *   Chapman & Hall/CRC. doi:10.1201/9780429246593
 * - Hyndman, R. J. & Fan, Y. (1996). Sample quantiles in statistical packages. The American
 *   Statistician 50(4):361–365. doi:10.1080/00031305.1996.10473566 (definition 7)
 */
export function bootstrapTimecourse(matrix: Matrix, options: BootstrapTimecourseOptions = {}): TimecourseInterval {
  const fn = 'bootstrapTimecourse';
  const m = checkMatrix(fn, 'matrix', matrix);
  const o = resolve(fn, options);
  const root = rng(o.seed);
  const a = prepareCondition(fn, 'matrix', m, o.spec, o.nan, multinomialPlan(root.stream(0), o.resamples, m.rows));
  const offsets = matrixOffsets(m);
  const r = runTimecourse([a], {
    fn, spec: o.spec, bca: o.method === 'bca', alpha: (1 - o.confidenceLevel) / 2, keepReplicates: o.keepReplicates, offsets, nan: o.nan, threads: o.threads,
  });
  return {
    estimate: r.estimate, low: r.low, high: r.high, standardError: r.standardError, z0: r.z0, acceleration: r.acceleration,
    replicates: r.replicates, warnings: [...r.warnings, ...resamplesForLevel(fn, o.resamples, o.confidenceLevel)], offsets, statistic: o.spec.name, method: o.method, confidenceLevel: o.confidenceLevel,
    resamples: o.resamples, seed: o.seed, trials: [m.rows], trialsPerBin: [a.count],
  };
}

/**
 * Bootstrap confidence band of the difference θ(a) − θ(b) between two conditions, per time bin.
 *
 * Each condition is resampled separately (independent trials; for paired rows bootstrap the
 * per-trial difference with `bootstrapTimecourse` instead). Options, NaN handling and warnings
 * are those of `bootstrapTimecourse`. BCa uses scipy's multi-sample jackknife: each condition's
 * trials are left out in turn and a = (1/6)·Σ_c ΣU³/n_c³ / (Σ_c ΣU²/n_c²)^{3/2} with
 * U = (n_c − 1)(θ̄ − θ_(i)).
 *
 * @param a - Trials × bins of the first condition.
 * @param b - Trials × bins of the second condition (same number of bins).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when the column counts differ; otherwise as
 *   `bootstrapTimecourse`.
 *
 * References
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap, §14.3 and eq. 15.36.
 *   Chapman & Hall/CRC. doi:10.1201/9780429246593
 */
export function bootstrapTimecourseDifference(a: Matrix, b: Matrix, options: BootstrapTimecourseOptions = {}): TimecourseInterval {
  const fn = 'bootstrapTimecourseDifference';
  const ma = checkMatrix(fn, 'a', a);
  const mb = checkMatrix(fn, 'b', b);
  checkSameCols(fn, ma, mb);
  const o = resolve(fn, options);
  const root = rng(o.seed);
  const ca = prepareCondition(fn, 'a', ma, o.spec, o.nan, multinomialPlan(root.stream(0), o.resamples, ma.rows));
  const cb = prepareCondition(fn, 'b', mb, o.spec, o.nan, multinomialPlan(root.stream(1), o.resamples, mb.rows));
  const offsets = matrixOffsets(ma) ?? matrixOffsets(mb);
  const r = runTimecourse([ca, cb], {
    fn, spec: o.spec, bca: o.method === 'bca', alpha: (1 - o.confidenceLevel) / 2, keepReplicates: o.keepReplicates, offsets, nan: o.nan, threads: o.threads,
  });
  return {
    estimate: r.estimate, low: r.low, high: r.high, standardError: r.standardError, z0: r.z0, acceleration: r.acceleration,
    replicates: r.replicates, warnings: [...r.warnings, ...resamplesForLevel(fn, o.resamples, o.confidenceLevel)], offsets, statistic: `${o.spec.name} difference`, method: o.method, confidenceLevel: o.confidenceLevel,
    resamples: o.resamples, seed: o.seed, trials: [ma.rows, mb.rows], trialsPerBin: [ca.count, cb.count],
  };
}

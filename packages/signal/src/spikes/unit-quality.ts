import { TuningforkError, checkFinite, checkNonNegative, checkPositive, resolveOptions } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import { asF64 } from '../internal/validate.js';

/** Inputs of {@link refractoryContamination}. */
export interface RefractoryCounts {
  /** Number of inter-spike intervals shorter than refractorySec (r). */
  violations: number;
  /** Number of spikes (N). */
  nSpikes: number;
  /** Recording duration, s (T). */
  durationSec: number;
  /** Refractory period τ_R, s. */
  refractorySec: number;
  /** Censored period τ_C (minimum detectable ISI), s; 0 if none. */
  censoredSec: number;
}

/** Contamination estimates from refractory-period violations. */
export interface ContaminationEstimate {
  /** k = rT / (2(τ_R − τ_C)N²), the common shortcut (can exceed 1). */
  readonly k: number;
  /** Hill et al. (2011) fraction f = (1 − √(1 − 4k))/2; NaN when 4k > 1. */
  readonly hill: number;
  /** True when 4k > 1: the violations imply more than 50 % contamination. */
  readonly overHalf: boolean;
  /** Llobet et al. (2022) random-contamination form 1 − √(1 − rT/(N²(τ_R − τ_C))); NaN when the root is negative. */
  readonly llobet: number;
}

/**
 * Contamination of a unit by spikes of other neurons, from its refractory-period violations.
 *
 * **Method.** Hill, Mehta & Kleinfeld (2011) model a unit whose spikes include a fraction f from an
 * independent source: the expected number of ISIs shorter than τ_R is r = 2(τ_R − τ_C)N²f(1 − f)/T,
 * solved as f = (1 − √(1 − 4k))/2 with k = rT/(2(τ_R − τ_C)N²). Llobet et al. (2022) derive, for
 * contamination by many random sources, 1 − √(1 − rT/(N²(τ_R − τ_C))). A single contaminating
 * neuron gives the Hill form.
 *
 * @throws {TuningforkError} TF_BAD_OPTION when τ_R ≤ τ_C, a count is negative or T ≤ 0.
 *
 * References
 * - Hill, D. N., Mehta, S. B. & Kleinfeld, D. (2011). Quality metrics to accompany spike sorting of
 *   extracellular signals. J. Neurosci. 31(24):8699–8705. doi:10.1523/JNEUROSCI.0971-11.2011
 * - Llobet, V., Wyngaard, A. & Barbour, B. (2022). Automatic post-processing and merging of multiple
 *   spike-sorting analyses with Lussac. bioRxiv (authors and title from memory).
 */
export function refractoryContamination(counts: RefractoryCounts): ContaminationEstimate {
  const fn = 'refractoryContamination';
  const r = checkNonNegative(fn, 'violations', counts?.violations);
  const n = checkNonNegative(fn, 'nSpikes', counts.nSpikes);
  const T = checkPositive(fn, 'durationSec', counts.durationSec);
  const tr = checkPositive(fn, 'refractorySec', counts.refractorySec);
  const tc = checkNonNegative(fn, 'censoredSec', counts.censoredSec);
  if (!(tr > tc)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: refractorySec (${tr}) must exceed censoredSec (${tc}).`, { fn, refractorySec: tr, censoredSec: tc });
  }
  if (n === 0) return { k: NaN, hill: NaN, overHalf: false, llobet: NaN };
  const w = tr - tc;
  const k = (r * T) / (2 * w * n * n);
  const overHalf = 4 * k > 1;
  const hill = overHalf ? NaN : (1 - Math.sqrt(1 - 4 * k)) / 2;
  const q = 1 - (r * T) / (n * n * w);
  const llobet = q < 0 ? NaN : 1 - Math.sqrt(q);
  return { k, hill, overHalf, llobet };
}

/** Options of {@link unitQuality}. */
export interface UnitQualityOptions {
  /** Start of the recording, s; null = first spike. @defaultValue null */
  startSec?: number | null;
  /** End of the recording, s; null = last spike. Give the true recording span when known; every spike must lie in [startSec, endSec]. @defaultValue null */
  endSec?: number | null;
  /** Refractory period τ_R, s. @defaultValue 0.0015 */
  refractorySec?: number;
  /** Censored period τ_C, s. @defaultValue 0 */
  censoredSec?: number;
  /** Flag contamination above this fraction. @defaultValue 0.1 */
  maxContamination?: number;
}

/** Per-unit quality metrics. */
export interface UnitQuality {
  readonly nSpikes: number;
  readonly durationSec: number;
  readonly rateHz: number;
  /** ISIs strictly shorter than refractorySec (after sorting and removing duplicates). */
  readonly violations: number;
  /** violations / (nSpikes − 1). */
  readonly violationFraction: number;
  readonly contamination: ContaminationEstimate;
  /** 'contamination-over-half', 'contamination-high', 'few-spikes'. */
  readonly flags: readonly string[];
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ startSec: null, endSec: null, refractorySec: 0.0015, censoredSec: 0, maxContamination: 0.1 } as const);

/**
 * Quality metrics of one sorted unit: firing rate, refractory-period violations and contamination.
 *
 * Spike times are sorted and exact duplicates removed (both reported as warnings), then ISIs
 * shorter than refractorySec are counted (strict <) and converted to contamination estimates by
 * {@link refractoryContamination}. Thresholds (τ_R 1.5 ms, flag above 10 %) are common practice.
 *
 * @param times - Spike times of one unit, s (finite), inside [startSec, endSec] when those are given.
 * @throws {TuningforkError} TF_NON_FINITE (first bad index), TF_BAD_OPTION (startSec/endSec not
 *   finite numbers, or endSec ≤ startSec), TF_WINDOW_OUT_OF_RANGE (the first spike outside
 *   [startSec, endSec], by index and time).
 * @example
 * ```ts
 * unitQuality([0, 0.001, 0.01, 0.0112, 0.05, 0.0504, 0.2]).violations; // 3
 * ```
 */
export function unitQuality(times: ArrayLike<number>, options: UnitQualityOptions = {}): UnitQuality {
  const fn = 'unitQuality';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const t0 = asF64(fn, 'times', times);
  for (let i = 0; i < t0.length; i++) {
    if (!Number.isFinite(t0[i]!)) throw new TuningforkError('TF_NON_FINITE', `${fn}: times[${i}] is ${t0[i]}; spike times must be finite.`, { fn, index: i });
  }
  const warnings: ResultWarning[] = [];
  let sorted = true;
  for (let i = 1; i < t0.length; i++) if (t0[i]! < t0[i - 1]!) { sorted = false; break; }
  const t = sorted ? t0 : Float64Array.from(t0).sort();
  if (!sorted) warnings.push({ code: 'SPIKES_SORTED', message: `${fn}: spike times were not sorted; sorted before counting.` });
  let m = 0;
  const u = new Float64Array(t.length);
  for (let i = 0; i < t.length; i++) if (i === 0 || t[i] !== t[i - 1]) u[m++] = t[i]!;
  if (m < t.length) warnings.push({ code: 'DUPLICATE_SPIKES_REMOVED', message: `${fn}: ${t.length - m} duplicate spike time(s) removed.`, details: { removed: t.length - m } });
  const tr = checkPositive(fn, 'refractorySec', opts.refractorySec);
  const tc = checkNonNegative(fn, 'censoredSec', opts.censoredSec);
  const maxC = checkNonNegative(fn, 'maxContamination', opts.maxContamination);
  const start = opts.startSec === null ? (m > 0 ? u[0]! : 0) : checkFinite(fn, 'startSec', opts.startSec);
  const end = opts.endSec === null ? (m > 0 ? u[m - 1]! : 0) : checkFinite(fn, 'endSec', opts.endSec);
  // With one end given, the other comes from the spikes, and the range check below catches a span
  // that excludes them.
  if (opts.startSec !== null && opts.endSec !== null && !(end > start)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: the recording span [startSec, endSec] = [${start}, ${end}] s is empty or reversed; endSec must be after startSec.`, { fn, option: 'endSec', startSec: start, endSec: end });
  }
  for (let i = 0; i < t0.length; i++) {
    const v = t0[i]!;
    if (v < start || v > end) {
      throw new TuningforkError(
        'TF_WINDOW_OUT_OF_RANGE',
        `${fn}: times[${i}] = ${v} s lies outside the recording span [${start}, ${end}] s given by startSec/endSec; the rate and contamination would use the wrong duration. Pass the true span (same clock and units as the spike times), or trim the spikes.`,
        { fn, parameter: 'times', index: i, time: v, startSec: start, endSec: end },
      );
    }
  }
  const duration = end - start;
  let violations = 0;
  for (let i = 1; i < m; i++) if (u[i]! - u[i - 1]! < tr) violations++;
  const flags: string[] = [];
  const contamination = duration > 0 && m > 0
    ? refractoryContamination({ violations, nSpikes: m, durationSec: duration, refractorySec: tr, censoredSec: tc })
    : { k: NaN, hill: NaN, overHalf: false, llobet: NaN };
  if (contamination.overHalf) flags.push('contamination-over-half');
  else if (contamination.hill > maxC) flags.push('contamination-high');
  if (m < 2) flags.push('few-spikes');
  return {
    nSpikes: m,
    durationSec: duration,
    rateHz: duration > 0 ? m / duration : NaN,
    violations,
    violationFraction: m > 1 ? violations / (m - 1) : NaN,
    contamination,
    flags,
    warnings,
  };
}

import { TuningforkError, checkOneOf, checkPositive, checkSampleRate, formatValue, resolveOptions } from '@tuningfork/core';
import type { ResultWarning, TimestampedSignal, UniformSignal } from '@tuningfork/core';
import { medianInPlace } from '../internal/select.js';

/** Options of {@link toUniform}. */
export interface ToUniformOptions {
  /** Output rate, Hz; null infers it as 1 / median interval (reported). @defaultValue null */
  sampleRate?: number | null;
  /** Time of the first output sample, s; null = the first timestamp. @defaultValue null */
  t0?: number | null;
  /** Interpolation between neighbouring samples. @defaultValue 'linear' */
  method?: 'linear';
  /** An interval longer than `gapFactor / sampleRate` is a gap (samples were dropped). @defaultValue 1.5 */
  gapFactor?: number;
  /** Output samples inside a gap: 'nan' (marked missing) or 'interpolate' (linear across, reported). @defaultValue 'nan' */
  gaps?: 'nan' | 'interpolate';
}

/** One gap in the timestamps: dropped samples between two recorded ones. */
export interface TimestampGap {
  /** Index of the sample before the gap. */
  readonly index: number;
  /** Times of the samples either side, s. */
  readonly startSec: number;
  readonly endSec: number;
  /** Estimated dropped samples, round(Δt·sampleRate) − 1. */
  readonly missingSamples: number;
}

/** Result of {@link toUniform}. */
export interface ToUniformResult {
  readonly signal: UniformSignal;
  /** Whether sampleRate was inferred from the median interval. */
  readonly inferredRate: boolean;
  /** Deviation of each input timestamp from the nearest output grid time, s. */
  readonly jitter: { readonly maxSec: number; readonly rmsSec: number };
  /** Intervals longer than gapFactor sample periods. */
  readonly gaps: readonly TimestampGap[];
  /** Sum of missingSamples over gaps. */
  readonly droppedSamples: number;
  /** Output samples set to NaN because they fall inside a gap ('nan' mode). */
  readonly nanSamples: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ sampleRate: null, t0: null, method: 'linear', gapFactor: 1.5, gaps: 'nan' } as const);

/**
 * Resample irregularly timestamped samples onto a uniform grid by linear interpolation.
 *
 * The grid is `t0 + k/sampleRate` for k = 0 … ⌊(t_last − t0)·sampleRate⌋. Each output value is the
 * straight line between the recorded samples either side of its time. The result reports the
 * jitter (max and RMS distance of each input timestamp from its nearest grid time) and every gap
 * (an interval longer than gapFactor sample periods), with the number of dropped samples. NaN
 * input values propagate to the output samples that depend on them.
 *
 * @param input - `{ values, timestamps }`, equal lengths, timestamps finite and strictly increasing.
 * @throws {TuningforkError} TF_IRREGULAR_SAMPLING naming the first non-increasing or duplicate
 *   timestamp (index and time); TF_SHAPE_MISMATCH for unequal lengths; TF_TOO_FEW_SAMPLES with
 *   fewer than 2 samples; TF_NON_FINITE for a non-finite timestamp; TF_BAD_SAMPLE_RATE.
 * @example
 * ```ts
 * const r = toUniform({ values, timestamps }, { sampleRate: 100 });
 * r.jitter.maxSec; // largest timestamp deviation from the 100 Hz grid
 * ```
 */
export function toUniform(input: TimestampedSignal, options: ToUniformOptions = {}): ToUniformResult {
  const fn = 'toUniform';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const { values, timestamps: t } = input ?? ({} as TimestampedSignal);
  if (!(values instanceof Float64Array) || !(t instanceof Float64Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: input must be { values: Float64Array, timestamps: Float64Array }, got ${formatValue(input)}.`, { fn });
  }
  if (values.length !== t.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: values has ${values.length} samples but timestamps has ${t.length}.`, { fn, values: values.length, timestamps: t.length });
  }
  const n = t.length;
  if (n < 2) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: need at least 2 samples, got ${n}.`, { fn, n });
  checkOneOf(fn, 'method', opts.method, ['linear'] as const);
  const gapMode = checkOneOf(fn, 'gaps', opts.gaps, ['nan', 'interpolate'] as const);
  const gapFactor = checkPositive(fn, 'gapFactor', opts.gapFactor);
  const dts = new Float64Array(n - 1);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(t[i]!)) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: timestamps[${i}] is ${t[i]}; timestamps must be finite.`, { fn, index: i });
    }
    if (i > 0) {
      const dt = t[i]! - t[i - 1]!;
      if (!(dt > 0)) {
        const what = dt === 0 ? 'duplicates' : 'goes back from';
        throw new TuningforkError(
          'TF_IRREGULAR_SAMPLING',
          `${fn}: timestamps must strictly increase; timestamps[${i}] = ${t[i]} s ${what} timestamps[${i - 1}] = ${t[i - 1]} s. Sort the samples and drop duplicates first.`,
          { fn, index: i, time: t[i], previous: t[i - 1] },
        );
      }
      dts[i - 1] = dt;
    }
  }
  let inferredRate = false;
  let fs: number;
  if (opts.sampleRate === null) {
    fs = 1 / medianInPlace(Float64Array.from(dts));
    inferredRate = true;
  } else fs = checkSampleRate(fn, opts.sampleRate);
  const t0 = opts.t0 === null ? t[0]! : opts.t0;
  if (!Number.isFinite(t0)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: t0 must be finite, got ${t0}.`, { fn });
  const span = t[n - 1]! - t0;
  if (!(span >= 0)) {
    throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: t0 = ${t0} s is after the last timestamp ${t[n - 1]} s.`, { fn, t0 });
  }
  const m = Math.floor(span * fs + 1e-9) + 1;
  const out = new Float64Array(m);
  const gapLimit = gapFactor / fs;
  const gaps: TimestampGap[] = [];
  let dropped = 0;
  for (let i = 0; i < n - 1; i++) {
    if (dts[i]! > gapLimit) {
      const miss = Math.max(1, Math.round(dts[i]! * fs) - 1);
      gaps.push({ index: i, startSec: t[i]!, endSec: t[i + 1]!, missingSamples: miss });
      dropped += miss;
    }
  }
  // Jitter: distance of each timestamp to its nearest grid time.
  let maxJ = 0;
  let ss = 0;
  for (let i = 0; i < n; i++) {
    const k = Math.round((t[i]! - t0) * fs);
    const d = t[i]! - (t0 + k / fs);
    const a = Math.abs(d);
    if (a > maxJ) maxJ = a;
    ss += d * d;
  }
  // Linear interpolation with a moving pointer.
  let j = 0;
  let nanSamples = 0;
  for (let k = 0; k < m; k++) {
    const g = t0 + k / fs;
    while (j < n - 2 && t[j + 1]! < g) j++;
    const ta = t[j]!;
    const tb = t[j + 1]!;
    if (g < ta) {
      out[k] = NaN; // before the first sample (t0 earlier than the data)
      nanSamples++;
      continue;
    }
    if (gapMode === 'nan' && tb - ta > gapLimit && g > ta && g < tb) {
      out[k] = NaN;
      nanSamples++;
      continue;
    }
    const u = (g - ta) / (tb - ta);
    out[k] = u === 0 ? values[j]! : values[j]! + (values[j + 1]! - values[j]!) * u;
  }
  const warnings: ResultWarning[] = [];
  if (gaps.length > 0) {
    warnings.push({
      code: gapMode === 'nan' ? 'GAPS_MARKED_NAN' : 'GAPS_INTERPOLATED',
      message: `${fn}: ${gaps.length} gap(s), about ${dropped} dropped sample(s); output samples inside gaps were ${gapMode === 'nan' ? 'set to NaN' : 'linearly interpolated'}.`,
      details: { gaps: gaps.length, droppedSamples: dropped },
    });
  }
  if (maxJ > 0.1 / fs) {
    warnings.push({ code: 'HIGH_JITTER', message: `${fn}: timestamps deviate from the ${fs} Hz grid by up to ${maxJ} s (more than 10 % of a sample period).`, details: { maxSec: maxJ } });
  }
  return {
    signal: { values: out, sampleRate: fs, t0 },
    inferredRate,
    jitter: { maxSec: maxJ, rmsSec: Math.sqrt(ss / n) },
    gaps,
    droppedSamples: dropped,
    nanSamples,
    warnings,
  };
}

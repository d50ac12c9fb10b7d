import { TuningforkError, checkOneOf, checkPositive, resolveOptions } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';
import { asF64 } from '../internal/validate.js';

/** Options of {@link binSpikes}. `endSec` is required. */
export interface BinSpikesOptions {
  /** Bin width, s. @defaultValue 0.01 */
  binSec?: number;
  /** Left edge of bin 0, s. @defaultValue 0 */
  startSec?: number;
  /** End of the binned range (exclusive), s; required. The last bin may be partial only if the span is not a multiple of binSec (it is then dropped). */
  endSec?: number;
  /** 'count' (spikes per bin) or 'rate' (count/binSec, Hz). @defaultValue 'count' */
  output?: 'count' | 'rate';
  /**
   * Rate of the acquisition clock the spike times are quantised to (Hz), or null. When given and
   * binSec and startSec are whole numbers of clock ticks, bins are computed in integer ticks,
   * which avoids floating-point floor errors such as ⌊0.3/0.1⌋ = 2. @defaultValue null
   */
  clockRate?: number | null;
}

/** Binned spike train. */
export interface BinnedSpikes {
  /** Counts or rates; `signal.t0` is the left edge of bin 0 and `sampleRate` = 1/binSec. */
  readonly signal: UniformSignal;
  readonly binSec: number;
  /** Spikes outside [startSec, startSec + nBins·binSec), not counted. */
  readonly outside: number;
  /** Whether integer clock-tick arithmetic was used. */
  readonly integerTicks: boolean;
}

const DEFAULTS = Object.freeze({ binSec: 0.01, startSec: 0, endSec: undefined, output: 'count', clockRate: null } as const);

/**
 * Count spikes in consecutive half-open bins `[start + kΔ, start + (k+1)Δ)`.
 *
 * Bin index = ⌊(t − start)/Δ⌋ (the left edge is inside the bin, the right edge is not; unlike
 * `numpy.histogram`, the last bin is not closed on the right). With `clockRate`, times are first
 * rounded to clock ticks and the floor is taken in integer ticks. Spike times need not be sorted.
 *
 * @param times - Spike times, s (finite).
 * @returns Counts or rates on a uniform grid of bins.
 * @throws {TuningforkError} TF_NON_FINITE (first bad spike index), TF_BAD_OPTION (endSec missing
 *   or ≤ startSec, binSec ≤ 0).
 * @example
 * ```ts
 * binSpikes([0.001, 0.0049, 0.005, 0.0099, 0.010, 0.0255], { binSec: 0.005, endSec: 0.03 }).signal.values;
 * // [2, 2, 1, 0, 0, 1]
 * ```
 */
export function binSpikes(times: ArrayLike<number>, options: BinSpikesOptions): BinnedSpikes {
  const fn = 'binSpikes';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const t = asF64(fn, 'times', times);
  const bin = checkPositive(fn, 'binSec', opts.binSec);
  const start = opts.startSec;
  if (typeof start !== 'number' || !Number.isFinite(start)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: startSec must be finite, got ${String(start)}.`, { fn });
  if (typeof opts.endSec !== 'number' || !Number.isFinite(opts.endSec) || !(opts.endSec > start)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: endSec is required and must be a finite time after startSec (${start} s), got ${String(opts.endSec)}.`, { fn, option: 'endSec' });
  }
  const output = checkOneOf(fn, 'output', opts.output, ['count', 'rate'] as const);
  const span = (opts.endSec - start) / bin;
  const nBins = Math.abs(span - Math.round(span)) < 1e-9 * Math.max(1, span) ? Math.round(span) : Math.floor(span);
  const counts = new Float64Array(nBins);
  let outside = 0;
  let integerTicks = false;
  let tickBin = 0;
  let tickStart = 0;
  let clock = 0;
  if (opts.clockRate !== null) {
    clock = checkPositive(fn, 'clockRate', opts.clockRate);
    const bt = bin * clock;
    const st = start * clock;
    if (Math.abs(bt - Math.round(bt)) < 1e-9 * Math.max(1, bt) && Math.abs(st - Math.round(st)) < 1e-9 * Math.max(1, Math.abs(st)) && Math.round(bt) >= 1) {
      integerTicks = true;
      tickBin = Math.round(bt);
      tickStart = Math.round(st);
    }
  }
  for (let i = 0; i < t.length; i++) {
    const v = t[i]!;
    if (!Number.isFinite(v)) throw new TuningforkError('TF_NON_FINITE', `${fn}: times[${i}] is ${v}; spike times must be finite.`, { fn, index: i });
    let k: number;
    if (integerTicks) {
      const d = Math.round(v * clock) - tickStart;
      k = Math.floor(d / tickBin);
    } else k = Math.floor((v - start) / bin);
    if (k >= 0 && k < nBins) counts[k] = counts[k]! + 1;
    else outside++;
  }
  if (output === 'rate') for (let k = 0; k < nBins; k++) counts[k] = counts[k]! / bin;
  return { signal: { values: counts, sampleRate: 1 / bin, t0: start }, binSec: bin, outside, integerTicks };
}

import {
  TuningforkError, checkFinite, checkNonNegative, checkOneOf, checkPositive, resolveOptions,
} from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { debounce, finishOpen, secToSamples } from '../internal/pulses.js';
import type { IndexPulses } from '../internal/pulses.js';
import { median, robustSd } from '../internal/robust.js';
import { checkSignal } from '../internal/validate.js';
import type { EdgeResult } from './digital-edges.js';

/** Options of {@link analogEdges}. */
export interface AnalogEdgesOptions {
  /** Upper level: a positive pulse starts at the first sample ≥ high (a negative pulse ends there). 'robust' = median + robustLevels[0] robust sd. @defaultValue 'robust' */
  high?: 'robust' | number;
  /** Lower level: a positive pulse ends at the first sample ≤ low (a negative pulse starts there). 'robust' = median + robustLevels[1] robust sd. @defaultValue 'robust' */
  low?: 'robust' | number;
  /** Robust sd multiples [start, end] for 'robust' levels (mirrored below the median for negative polarity). @defaultValue [5, 2] */
  robustLevels?: readonly [number, number];
  /** 'positive': pulses go up; 'negative': pulses go down. @defaultValue 'positive' */
  polarity?: 'positive' | 'negative';
  /** Merge pulses separated by an inactive gap shorter than this, seconds. @defaultValue 0 */
  minGapSec?: number;
  /** After merging, drop pulses shorter than this, seconds (minimum duration). @defaultValue 0 */
  minWidthSec?: number;
  /** Pulses active at the first or last sample: keep and flag them, or drop them. @defaultValue 'flag' */
  openPulses?: 'flag' | 'drop';
}

const DEFAULTS = Object.freeze({
  high: 'robust' as 'robust' | number,
  low: 'robust' as 'robust' | number,
  robustLevels: Object.freeze([5, 2]) as readonly [number, number],
  polarity: 'positive' as 'positive' | 'negative',
  minGapSec: 0,
  minWidthSec: 0,
  openPulses: 'flag' as 'flag' | 'drop',
});

/**
 * Pulses of an analog line by threshold crossings with hysteresis, with interpolated crossing times.
 *
 * **Method.** A positive pulse starts at the first sample with `x ≥ high` and ends at the first
 * later sample with `x ≤ low` (low ≤ high; equal levels give a single threshold). The start time is
 * refined by linear interpolation between the sample before and the first active sample,
 * `t_{k−1} + (high − x_{k−1}) / (x_k − x_{k−1}) · Δt`, and the end time likewise at the `low`
 * level. Negative pulses mirror this (start at ≤ low, end at ≥ high). 'robust' levels are the
 * median plus `robustLevels` × 1.4826·MAD of the whole line (common practice, no source); a line
 * whose MAD is 0 (e.g. a clean TTL recorded as volts) needs explicit levels or digitalEdges.
 * Debounce as in digitalEdges: merge short gaps, then drop short pulses (sample counts).
 * Open pulses (active at the first or last sample) have sample-time starts/ends and are flagged.
 *
 * @param signal - The analog line.
 * @returns EdgeResult with interpolated `starts`/`ends` (seconds) and the sample indices.
 * @throws {TuningforkError} TF_NON_FINITE (NaN sample, naming index and time); TF_BAD_OPTION
 *   (low > high); TF_DEGENERATE_SIGNAL ('robust' levels on a line with zero MAD);
 *   TF_UNKNOWN_OPTION.
 *
 * @example
 * ```ts
 * const x = Float64Array.of(0, 0.5, 1.2, 2.6, 2.4, 1.1, 2.7, 3, 0.9, 0.2, 2.6, 0.5);
 * const r = analogEdges({ values: x, sampleRate: 1, t0: 0 }, { high: 2.5, low: 1 });
 * // r.startIndex = [3, 10], r.endIndex = [8, 11], r.starts[0] ≈ 2.9285714
 * ```
 */
export function analogEdges(signal: UniformSignal, options: AnalogEdgesOptions = {}): EdgeResult {
  const fn = 'analogEdges';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkSignal(fn, 'signal', signal, 1);
  const polarity = checkOneOf(fn, 'polarity', o.polarity, ['positive', 'negative'] as const);
  const minGap = secToSamples(checkNonNegative(fn, 'minGapSec', o.minGapSec), signal.sampleRate);
  const minWidth = secToSamples(checkNonNegative(fn, 'minWidthSec', o.minWidthSec), signal.sampleRate);
  const openPolicy = checkOneOf(fn, 'openPulses', o.openPulses, ['flag', 'drop'] as const);
  const x = signal.values;
  const n = x.length;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i])) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: sample ${i} (t=${signal.t0 + i / signal.sampleRate} s) is ${x[i]}; the line must be finite. Fill or cut the gap first.`, { fn, index: i });
    }
  }
  let high: number;
  let low: number;
  if (o.high === 'robust' || o.low === 'robust') {
    const lv = o.robustLevels;
    checkPositive(fn, 'robustLevels[0]', lv[0]);
    checkNonNegative(fn, 'robustLevels[1]', lv[1]);
    const med = median(x);
    const sd = robustSd(x, med);
    if (!(sd > 0)) {
      throw new TuningforkError('TF_DEGENERATE_SIGNAL', `${fn}: the line's robust sd (1.4826·MAD) is 0, so 'robust' levels are undefined. Pass numeric { high, low } or use digitalEdges for a clean TTL line.`, { fn, median: med });
    }
    const sign = polarity === 'positive' ? 1 : -1;
    // Positive: start at median + a·sd, end at median + b·sd. Negative: start at median − a·sd (low), end at median − b·sd (high).
    const startLevel = med + sign * lv[0] * sd;
    const endLevel = med + sign * lv[1] * sd;
    high = o.high === 'robust' ? (polarity === 'positive' ? startLevel : endLevel) : checkFinite(fn, 'high', o.high);
    low = o.low === 'robust' ? (polarity === 'positive' ? endLevel : startLevel) : checkFinite(fn, 'low', o.low);
  } else {
    high = checkFinite(fn, 'high', o.high);
    low = checkFinite(fn, 'low', o.low);
  }
  if (!(low <= high)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: low (${low}) must be ≤ high (${high}).`, { fn, low, high });
  }
  // Work in a frame where pulses go up: y = x (positive) or −x (negative, levels swapped).
  const sign = polarity === 'positive' ? 1 : -1;
  const on = polarity === 'positive' ? high : -low;
  const off = polarity === 'positive' ? low : -high;
  const s: number[] = [];
  const e: number[] = [];
  const op: number[] = [];
  let state = sign * x[0]! >= on ? 1 : 0;
  if (state === 1) {
    s.push(0);
    op.push(1);
  }
  for (let i = 1; i < n; i++) {
    const y = sign * x[i]!;
    if (state === 0) {
      if (y >= on) {
        state = 1;
        s.push(i);
        op.push(0);
      }
    } else if (y <= off) {
      state = 0;
      e.push(i);
    }
  }
  if (state === 1) {
    e.push(n);
    op[op.length - 1] = op[op.length - 1]! | 2;
  }
  const raw: IndexPulses = { start: Int32Array.from(s), end: Int32Array.from(e), open: Uint8Array.from(op) };
  const warnings: ResultWarning[] = [];
  const db = debounce(raw, minGap, minWidth);
  const p = finishOpen(db.pulses, openPolicy, fn, warnings);
  const k = p.start.length;
  const starts = new Float64Array(k);
  const ends = new Float64Array(k);
  const widths = new Float64Array(k);
  const dt = 1 / signal.sampleRate;
  const crossing = (i: number, level: number): number => {
    // Interpolated time of the crossing between samples i − 1 and i (sample time when undefined).
    const ti = signal.t0 + i / signal.sampleRate;
    if (i <= 0 || i >= n) return ti;
    const a = sign * x[i - 1]!;
    const b = sign * x[i]!;
    if (a === b) return ti;
    return signal.t0 + (i - 1) / signal.sampleRate + ((level - a) / (b - a)) * dt;
  };
  for (let j = 0; j < k; j++) {
    starts[j] = (p.open[j]! & 1) !== 0 ? signal.t0 + p.start[j]! / signal.sampleRate : crossing(p.start[j]!, on);
    ends[j] = (p.open[j]! & 2) !== 0 ? signal.t0 + p.end[j]! / signal.sampleRate : crossing(p.end[j]!, off);
    widths[j] = ends[j]! - starts[j]!;
  }
  return {
    starts, ends, widths, startIndex: p.start, endIndex: p.end, open: p.open,
    thresholds: { high, low }, nMerged: db.nMerged, nDropped: db.nDropped, warnings,
  };
}

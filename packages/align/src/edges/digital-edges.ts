import {
  TuningforkError, checkFinite, checkInteger, checkNonNegative, checkOneOf, resolveOptions,
} from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { debounce, finishOpen, secToSamples } from '../internal/pulses.js';
import type { IndexPulses } from '../internal/pulses.js';
import { checkSignal } from '../internal/validate.js';

/** Pulses found on a digital or analog line. Times are seconds on the signal's clock. */
export interface EdgeResult {
  /** Pulse start times (the active edge), seconds. */
  readonly starts: Float64Array;
  /** Pulse end times (the inactive edge), seconds. */
  readonly ends: Float64Array;
  /** ends − starts, seconds (a lower bound for open pulses). */
  readonly widths: Float64Array;
  /** Index of the first active sample of each pulse. */
  readonly startIndex: Int32Array;
  /** Index of the first inactive sample after each pulse (the signal length when still active at the end). */
  readonly endIndex: Int32Array;
  /** 0 for complete pulses; bit 1 = already active at the first sample; bit 2 = still active at the last. */
  readonly open: Uint8Array;
  /** Levels used: the pulse starts at ≥ high and ends at ≤ low (digital: both equal the threshold). */
  readonly thresholds: { readonly high: number; readonly low: number };
  /** Pulses merged across short gaps, and pulses dropped as too short, by the debounce. */
  readonly nMerged: number;
  readonly nDropped: number;
  readonly warnings: readonly ResultWarning[];
}

/** Options of {@link digitalEdges}. */
export interface DigitalEdgesOptions {
  /** Level separating low from high: 'mid' = (min + max) / 2 of the line; a sample is high when above it. @defaultValue 'mid' */
  threshold?: 'mid' | number;
  /** Read bit `bit` (0 = least significant) of integer port words instead of thresholding; null to threshold. @defaultValue null */
  bit?: number | null;
  /** 'positive': pulses are high; 'negative': pulses are low (active-low TTL). @defaultValue 'positive' */
  polarity?: 'positive' | 'negative';
  /** Merge pulses separated by an inactive gap shorter than this, seconds (contact bounce). @defaultValue 0 */
  minGapSec?: number;
  /** After merging, drop pulses shorter than this, seconds. @defaultValue 0 */
  minWidthSec?: number;
  /** Pulses active at the first or last sample: keep and flag them, or drop them. @defaultValue 'flag' */
  openPulses?: 'flag' | 'drop';
}

const DEFAULTS = Object.freeze({
  threshold: 'mid' as 'mid' | number,
  bit: null as number | null,
  polarity: 'positive' as 'positive' | 'negative',
  minGapSec: 0,
  minWidthSec: 0,
  openPulses: 'flag' as 'flag' | 'drop',
});

/** Build times and widths from index pulses on a grid (sample times, no interpolation). */
function sampleTimes(p: IndexPulses, signal: UniformSignal): { starts: Float64Array; ends: Float64Array; widths: Float64Array } {
  const k = p.start.length;
  const starts = new Float64Array(k);
  const ends = new Float64Array(k);
  const widths = new Float64Array(k);
  for (let i = 0; i < k; i++) {
    starts[i] = signal.t0 + p.start[i]! / signal.sampleRate;
    ends[i] = signal.t0 + p.end[i]! / signal.sampleRate;
    widths[i] = (p.end[i]! - p.start[i]!) / signal.sampleRate;
  }
  return { starts, ends, widths };
}

/**
 * Pulses (TTL edges) of a digital line: start and end times and widths.
 *
 * The line is binarised (above `threshold`, or bit `bit` of integer port words), inverted for
 * `polarity: 'negative'`, and each run of active samples is a pulse. The start index is the first
 * active sample, `flatnonzero(diff(b) == 1) + 1` in numpy terms, the end index the first inactive
 * sample after it. Times are those samples' times `t0 + i / sampleRate` (no interpolation; for
 * sub-sample crossing times of an analog line use analogEdges). Debounce, in this order: merge
 * pulses whose inactive gap is shorter than `minGapSec`, then drop pulses shorter than
 * `minWidthSec`. Pulses active at the first or last sample are flagged in `open` (or dropped).
 *
 * @param line - The line as a UniformSignal (0/1, volts, or integer port words with `bit`).
 * @returns EdgeResult: `{ starts, ends, widths, startIndex, endIndex, open, thresholds, nMerged, nDropped, warnings }`.
 * @throws {TuningforkError} TF_NON_FINITE (NaN or ±Infinity sample, naming index and time);
 *   TF_BAD_VALUE (non-integer or negative word with `bit`); TF_BAD_OPTION / TF_UNKNOWN_OPTION.
 *
 * @example
 * ```ts
 * const b = Float64Array.from('0011011110001001110', Number);
 * digitalEdges({ values: b, sampleRate: 1, t0: 0 }).startIndex;            // [2, 5, 12, 15]
 * digitalEdges({ values: b, sampleRate: 1, t0: 0 }, { minGapSec: 2, minWidthSec: 2 }).startIndex; // [2, 15]
 * ```
 */
export function digitalEdges(line: UniformSignal, options: DigitalEdgesOptions = {}): EdgeResult {
  const fn = 'digitalEdges';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkSignal(fn, 'line', line, 1);
  const polarity = checkOneOf(fn, 'polarity', o.polarity, ['positive', 'negative'] as const);
  const minGap = secToSamples(checkNonNegative(fn, 'minGapSec', o.minGapSec), line.sampleRate);
  const minWidth = secToSamples(checkNonNegative(fn, 'minWidthSec', o.minWidthSec), line.sampleRate);
  const openPolicy = checkOneOf(fn, 'openPulses', o.openPulses, ['flag', 'drop'] as const);
  const x = line.values;
  const n = x.length;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i])) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: line sample ${i} (t=${line.t0 + i / line.sampleRate} s) is ${x[i]}; a digital line must be finite. Fill or cut the gap first.`, { fn, index: i });
    }
  }
  const warnings: ResultWarning[] = [];
  const active = new Uint8Array(n);
  let thr = NaN;
  if (o.bit !== null) {
    const bit = checkInteger(fn, 'bit', o.bit, 0, 52);
    const div = 2 ** bit;
    for (let i = 0; i < n; i++) {
      const v = x[i]!;
      if (!Number.isInteger(v) || v < 0) {
        throw new TuningforkError('TF_BAD_VALUE', `${fn}: line sample ${i} is ${v}; with { bit } every sample must be a non-negative integer port word.`, { fn, index: i });
      }
      active[i] = Math.floor(v / div) % 2;
    }
    thr = 0.5;
  } else {
    if (o.threshold === 'mid') {
      let lo = Infinity;
      let hi = -Infinity;
      for (let i = 0; i < n; i++) {
        if (x[i]! < lo) lo = x[i]!;
        if (x[i]! > hi) hi = x[i]!;
      }
      thr = 0.5 * (lo + hi);
      if (lo === hi) warnings.push({ code: 'constant-line', message: `${fn}: the line is constant (${lo}); no pulses.`, details: { value: lo } });
    } else {
      thr = checkFinite(fn, 'threshold', o.threshold);
    }
    for (let i = 0; i < n; i++) active[i] = x[i]! > thr ? 1 : 0;
  }
  if (polarity === 'negative') for (let i = 0; i < n; i++) active[i] = 1 - active[i]!;
  if (o.bit === null && o.threshold === 'mid' && warnings.length > 0) active.fill(0);

  const s: number[] = [];
  const e: number[] = [];
  const op: number[] = [];
  for (let i = 0; i < n; i++) {
    const a = active[i]!;
    const prev = i === 0 ? 0 : active[i - 1]!;
    if (a === 1 && prev === 0) {
      s.push(i);
      op.push(i === 0 ? 1 : 0);
    } else if (a === 0 && prev === 1) {
      e.push(i);
    }
  }
  if (e.length < s.length) {
    e.push(n);
    op[op.length - 1] = op[op.length - 1]! | 2;
  }
  const raw: IndexPulses = { start: Int32Array.from(s), end: Int32Array.from(e), open: Uint8Array.from(op) };
  const db = debounce(raw, minGap, minWidth);
  const p = finishOpen(db.pulses, openPolicy, fn, warnings);
  return {
    ...sampleTimes(p, line), startIndex: p.start, endIndex: p.end, open: p.open,
    thresholds: { high: thr, low: thr }, nMerged: db.nMerged, nDropped: db.nDropped, warnings,
  };
}

import { TuningforkError, toFloat64 } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';

/** Why an event got no row in a peri-event matrix. */
export type PeriExclusionReason =
  | 'missing-time'
  | 'outside-recording'
  | 'competing-event'
  | 'nan-in-window'
  | 'missing-baseline-anchor'
  | 'baseline-outside-recording';

/** Events left out of a matrix: `index[k]` is the input event index, `reason[k]` why. */
export interface PeriExclusions {
  readonly index: Uint32Array;
  readonly reason: readonly PeriExclusionReason[];
}

/** Collects exclusions in input order. */
export class ExclusionLog {
  private readonly idx: number[] = [];
  private readonly why: PeriExclusionReason[] = [];
  add(index: number, reason: PeriExclusionReason): void {
    this.idx.push(index);
    this.why.push(reason);
  }
  get size(): number {
    return this.idx.length;
  }
  result(): PeriExclusions {
    return { index: Uint32Array.from(this.idx), reason: this.why.slice() };
  }
  /** A warning summarising exclusions by reason (none when nothing was excluded). */
  warning(fn: string): ResultWarning[] {
    if (this.idx.length === 0) return [];
    const counts: Record<string, number> = {};
    for (const r of this.why) counts[r] = (counts[r] ?? 0) + 1;
    const text = Object.entries(counts).map(([r, n]) => `${n} ${r}`).join(', ');
    return [{ code: 'events-excluded', message: `${fn}: ${this.idx.length} event(s) excluded (${text}); see result.excluded.`, details: counts }];
  }
}

/** Finite competing-event times, sorted ascending (NaN entries mean "did not occur" and are skipped). */
export function sortedCompeting(fn: string, competing: ArrayLike<number> | null): Float64Array {
  if (competing === null) return new Float64Array(0);
  const c = toFloat64(competing);
  let n = 0;
  for (let i = 0; i < c.length; i++) {
    const v = c[i]!;
    if (v === Infinity || v === -Infinity) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: competing[${i}] is ${v}; competing event times must be finite seconds or NaN.`, { fn, index: i });
    }
    if (v === v) n++;
  }
  const out = new Float64Array(n);
  for (let i = 0, k = 0; i < c.length; i++) if (c[i] === c[i]) out[k++] = c[i]!;
  return out.sort();
}

/** First index k with sorted[k] ≥ t (sorted.length when none). */
export function lowerBound(sorted: Float64Array, t: number, lo = 0, hi = sorted.length): number {
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (sorted[mid]! < t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Competing events inside [te + a, te + b), ignoring any within `selfTol` seconds of te (so the
 * aligned list itself can be passed). Returns [first, end) indices into `sorted`, and whether any
 * non-self event lies inside.
 */
export function competingRange(sorted: Float64Array, te: number, a: number, b: number, selfTol: number): { lo: number; hi: number; any: boolean } {
  const lo = lowerBound(sorted, te + a);
  const hi = lowerBound(sorted, te + b, lo);
  let any = false;
  for (let k = lo; k < hi; k++) {
    if (Math.abs(sorted[k]! - te) > selfTol) {
      any = true;
      break;
    }
  }
  return { lo, hi, any };
}

/**
 * Mask with NaN the columns of one row affected by competing events: for an event at relative time
 * d > 0, columns with offset ≥ d; for d < 0, columns with offset ≤ d. Returns cells masked.
 */
export function maskCompeting(
  row: Float64Array, offsets: Float64Array, sorted: Float64Array, lo: number, hi: number, te: number, selfTol: number,
): number {
  let after = Infinity;
  let before = -Infinity;
  for (let k = lo; k < hi; k++) {
    const d = sorted[k]! - te;
    if (Math.abs(d) <= selfTol) continue;
    if (d > 0) after = Math.min(after, d);
    else before = Math.max(before, d);
  }
  let masked = 0;
  for (let c = 0; c < offsets.length; c++) {
    const r = offsets[c]!;
    if ((r >= after - 1e-12 || r <= before + 1e-12) && row[c] === row[c]) {
      row[c] = NaN;
      masked++;
    }
  }
  return masked;
}

/**
 * Apply a baseline to one row from the baseline values `b` (NaN propagates). Returns false when
 * the z-score is undefined (sd = 0), in which case the row becomes NaN.
 */
export function applyBaseline(row: Float64Array, b: Float64Array, mode: 'subtract' | 'zscore'): boolean {
  const n = b.length;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += (b[i]! - mean) / (i + 1);
  if (mode === 'subtract') {
    for (let c = 0; c < row.length; c++) row[c] = row[c]! - mean;
    return true;
  }
  let ss = 0;
  for (let i = 0; i < n; i++) {
    const d = b[i]! - mean;
    ss += d * d;
  }
  const sd = Math.sqrt(ss / (n - 1)); // correction 1 (sample sd)
  if (sd === 0) {
    row.fill(NaN);
    return false;
  }
  for (let c = 0; c < row.length; c++) row[c] = (row[c]! - mean) / sd;
  return true;
}

/** Count of non-NaN rows per column of a rows × cols matrix. */
export function countPerColumn(data: Float64Array, rows: number, cols: number): Uint32Array {
  const out = new Uint32Array(cols);
  for (let r = 0; r < rows; r++) {
    const o = r * cols;
    for (let c = 0; c < cols; c++) if (data[o + c] === data[o + c]) out[c]!++;
  }
  return out;
}

/** Column grid r = arange(−nPre, nPost) / rate with nPre = round(preSec·rate), nPost = round(postSec·rate). */
export function windowGrid(preSec: number, postSec: number, rate: number): { nPre: number; cols: number; offsets: Float64Array } {
  const nPre = Math.round(preSec * rate);
  const nPost = Math.round(postSec * rate);
  const cols = nPre + nPost;
  const offsets = new Float64Array(cols);
  for (let c = 0; c < cols; c++) offsets[c] = (c - nPre) / rate;
  return { nPre, cols, offsets };
}

import {
  TuningforkError, checkInteger, checkOneOf, checkPositive, resolveOptions, toFloat64,
} from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import { checkNumberArray } from '../internal/validate.js';

/**
 * Pulses of a barcode line: at least their start and end times (an {@link EdgeResult} of
 * digitalEdges or analogEdges fits), seconds on the line's clock. `open` (optional) flags pulses
 * cut by the start (bit 1) or end (bit 2) of the recording.
 */
export interface BarcodePulses {
  readonly starts: ArrayLike<number>;
  readonly ends: ArrayLike<number>;
  readonly open?: ArrayLike<number>;
}

/** Why a barcode candidate was not decoded. */
export type BarcodeRejection = 'header-width' | 'misaligned-edge' | 'overrun' | 'truncated';

/** Result of {@link decodeBarcodes}. */
export interface DecodeBarcodesResult {
  /** Start time (the header's active edge) of each decoded barcode, seconds: the sync time to pass to fitClockMap. */
  readonly times: Float64Array;
  /** The integer each barcode carries (0 … 2^nBits − 1). */
  readonly values: Float64Array;
  /** Candidates (a pulse after a quiet gap) that could not be decoded: their start time and the reason. */
  readonly rejected: { readonly times: Float64Array; readonly reasons: readonly BarcodeRejection[] };
  /** Caveats with stable codes: barcodes-rejected, barcodes-none. */
  readonly warnings: readonly ResultWarning[];
}

/** Options of {@link decodeBarcodes}. The format is a header pulse, a header gap, then `nBits` data cells. */
export interface DecodeBarcodesOptions {
  /** Duration of one data cell, seconds (required: it cannot be guessed). */
  bitSec: number;
  /** Data bits per barcode, 1–52 (required). */
  nBits: number;
  /** Width of the header pulse, seconds. @defaultValue 2 · bitSec */
  headerSec?: number;
  /** Inactive time between the header's end and the first data cell, seconds. @defaultValue bitSec */
  headerGapSec?: number;
  /** Order of the data cells: least significant bit first or most significant first. @defaultValue 'lsb-first' */
  bitOrder?: 'lsb-first' | 'msb-first';
  /** Largest misplacement of any edge (and of the header width) from its nominal time, seconds. @defaultValue 0.25 · bitSec */
  toleranceSec?: number;
  /** Inactive time before a pulse that makes it a barcode candidate (needed for the first barcode and after a rejected one), seconds. @defaultValue longer than any inactive run inside a barcode: headerGapSec + (nBits + 1) · bitSec */
  quietSec?: number;
  /** Start of the recording, seconds: a first pulse less than `quietSec` after it may be the tail of a barcode cut by the start and is rejected as 'truncated'. @defaultValue -Infinity (the first pulse is taken to be a header) */
  recordingStartSec?: number;
  /** End of the recording, seconds: a barcode that would end after it is rejected as 'truncated'. @defaultValue Infinity (every barcode is taken to be complete) */
  recordingEndSec?: number;
}

const DEFAULTS = Object.freeze({
  bitSec: NaN,
  nBits: NaN,
  headerSec: null as number | null,
  headerGapSec: null as number | null,
  bitOrder: 'lsb-first' as 'lsb-first' | 'msb-first',
  toleranceSec: null as number | null,
  quietSec: null as number | null,
  recordingStartSec: -Infinity,
  recordingEndSec: Infinity,
});

/**
 * Decode sync barcodes from the pulses of one line: each barcode's start time and the integer it
 * carries, so that fitClockMap can match the two clocks by value (`referenceCodes` /
 * `deviceCodes`) even when the barcodes are sent at a fixed period and either side drops some.
 *
 * **Format** (all times on the line's clock): the line is inactive for at least `quietSec`; a
 * header pulse of `headerSec`; `headerGapSec` inactive; then `nBits` cells of `bitSec` each, active
 * for a 1 and inactive for a 0, in `bitOrder`. Contiguous 1-cells form one pulse. The barcode ends
 * `headerSec + headerGapSec + nBits·bitSec` after its start. A sender that counts up one per
 * barcode gives a value that wraps after 2^nBits barcodes; fitClockMap resolves repeats by time.
 *
 * **Decoding.** A pulse opens a candidate at its start t0 when it is the first pulse, starts at
 * least `quietSec` after the previous pulse ended, or starts after the end of the barcode decoded
 * just before it (so barcodes may follow each other closely once the first is found). Its width must be `headerSec` ± `toleranceSec`
 * ('header-width'). Every later edge before the barcode's end must fall within `toleranceSec` of
 * a cell boundary t0 + headerSec + headerGapSec + m·bitSec, m = 0 … nBits ('misaligned-edge': a
 * wrong bitSec or a glitch); a pulse may not outlast the barcode ('overrun'), nor may the barcode
 * begin within `quietSec` of `recordingStartSec` or in a pulse cut by the recording's start, or
 * end after `recordingEndSec` or in a pulse cut by its end ('truncated': the line was not seen
 * quiet before the header, or not to the barcode's end). Pass both recording bounds (a line's
 * t0 and end) whenever the line may start or stop mid-barcode. Bit k is 1
 * when the middle of cell k lies inside a pulse. Rejected candidates are listed with their reason
 * and reported in a warning; they are never given a value. Clock drift within one barcode
 * (100 ppm × 0.5 s = 50 µs) is far below the tolerance.
 *
 * The format is a common practice for sync lines (a start marker, then the bits of a counter); it
 * follows no particular device's specification, so set every field to what your sender emits.
 *
 * @param pulses - Pulses of the line in time order (e.g. digitalEdges(line)).
 * @returns `{ times, values, rejected, warnings }`.
 * @throws {TuningforkError} TF_BAD_OPTION (bitSec or nBits missing or out of range, a header gap
 *   of 0, which would merge the header with a leading 1); TF_SHAPE_MISMATCH (starts and ends of
 *   different lengths); TF_BAD_EVENTS (non-finite or unordered pulse times, naming the pulse).
 *
 * @example
 * ```ts
 * const edges = digitalEdges(syncLine);                      // 1 kHz TTL line
 * const bc = decodeBarcodes(edges, { bitSec: 0.01, nBits: 16 });
 * bc.values;                                                 // e.g. [417, 418, 420, …]
 * ```
 */
export function decodeBarcodes(pulses: BarcodePulses, options: DecodeBarcodesOptions): DecodeBarcodesResult {
  const fn = 'decodeBarcodes';
  const o = resolveOptions(fn, DEFAULTS, options);
  if (o.bitSec === undefined || Number.isNaN(o.bitSec)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: bitSec (seconds per data cell) is required; it depends on the sender and cannot be guessed.`, { fn, option: 'bitSec' });
  if (o.nBits === undefined || Number.isNaN(o.nBits)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: nBits (data bits per barcode) is required; it depends on the sender and cannot be guessed.`, { fn, option: 'nBits' });
  const bitSec = checkPositive(fn, 'bitSec', o.bitSec);
  const nBits = checkInteger(fn, 'nBits', o.nBits, 1, 52);
  const headerSec = checkPositive(fn, 'headerSec', o.headerSec ?? 2 * bitSec);
  const headerGapSec = checkPositive(fn, 'headerGapSec', o.headerGapSec ?? bitSec);
  const bitOrder = checkOneOf(fn, 'bitOrder', o.bitOrder, ['lsb-first', 'msb-first'] as const);
  const tol = checkPositive(fn, 'toleranceSec', o.toleranceSec ?? 0.25 * bitSec);
  if (!(tol < 0.5 * bitSec) || !(tol < headerGapSec) || !(tol < headerSec)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: toleranceSec = ${tol} s must be below half a cell (${0.5 * bitSec} s), the header gap and the header width, or neighbouring edges become indistinguishable.`, { fn, option: 'toleranceSec' });
  }
  const dataSec = nBits * bitSec;
  const quietSec = checkPositive(fn, 'quietSec', o.quietSec ?? headerGapSec + dataSec + bitSec);
  const endSec = o.recordingEndSec;
  const startSec = o.recordingStartSec;
  for (const [name, v] of [['recordingStartSec', startSec], ['recordingEndSec', endSec]] as const) {
    if (typeof v !== 'number' || Number.isNaN(v)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a number of seconds (±Infinity if unknown), got ${String(v)}.`, { fn, option: name });
  }

  const S = toFloat64(checkNumberArray(fn, 'pulses.starts', pulses.starts));
  const E = toFloat64(checkNumberArray(fn, 'pulses.ends', pulses.ends));
  if (S.length !== E.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: pulses.starts has ${S.length} entries but pulses.ends has ${E.length}; pass one start and one end per pulse.`, { fn, starts: S.length, ends: E.length });
  }
  const open = pulses.open;
  for (let k = 0; k < S.length; k++) {
    const s = S[k]!;
    const e = E[k]!;
    if (!Number.isFinite(s) || !Number.isFinite(e) || !(e > s) || (k > 0 && !(s >= E[k - 1]!))) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: pulse ${k} (start ${s} s, end ${e} s) is not a finite pulse after pulse ${k - 1}; pulses must be in time order and must not overlap.`, { fn, index: k });
    }
  }

  const times: number[] = [];
  const values: number[] = [];
  const rejTimes: number[] = [];
  const reasons: BarcodeRejection[] = [];
  const dataStart = headerSec + headerGapSec;
  const length = dataStart + dataSec;
  let k = 0;
  let decodedEnd = -Infinity; // end of the last decoded barcode
  while (k < S.length) {
    if (k > 0 && S[k]! - E[k - 1]! < quietSec && !(S[k]! > decodedEnd + tol)) {
      k++;
      continue;
    }
    const t0 = S[k]!;
    const tEnd = t0 + length;
    // Pulses of this candidate: those starting before its end (plus the tolerance).
    let last = k;
    while (last + 1 < S.length && S[last + 1]! < tEnd + tol) last++;
    const cutAtStart = (k === 0 && t0 - startSec < quietSec) || (open !== undefined && (open[k]! & 1) !== 0);
    const reason = cutAtStart ? 'truncated' : checkCandidate(S, E, open, k, last, t0, tEnd, headerSec, dataStart, bitSec, nBits, tol, endSec);
    if (reason !== null) {
      rejTimes.push(t0);
      reasons.push(reason);
    } else {
      let value = 0;
      let q = k + 1;
      for (let b = 0; b < nBits; b++) {
        const mid = t0 + dataStart + (b + 0.5) * bitSec;
        while (q <= last && E[q]! <= mid) q++;
        const bit = q <= last && S[q]! <= mid ? 1 : 0;
        const weight = bitOrder === 'lsb-first' ? b : nBits - 1 - b;
        value += bit * 2 ** weight;
      }
      times.push(t0);
      values.push(value);
      decodedEnd = tEnd;
    }
    k = last + 1;
  }

  const warnings: ResultWarning[] = [];
  if (reasons.length > 0) {
    const counts: Record<string, number> = {};
    for (const r of reasons) counts[r] = (counts[r] ?? 0) + 1;
    warnings.push({
      code: 'barcodes-rejected',
      message: `${fn}: ${reasons.length} barcode candidate(s) could not be decoded (${Object.entries(counts).map(([r, c]) => `${c} ${r}`).join(', ')}; first at ${rejTimes[0]} s); check bitSec, nBits, headerSec and headerGapSec against the sender.`,
      details: { ...counts, first: rejTimes[0] },
    });
  }
  if (times.length === 0) warnings.push({ code: 'barcodes-none', message: `${fn}: no barcode was decoded from ${S.length} pulses.`, details: { pulses: S.length } });
  return { times: Float64Array.from(times), values: Float64Array.from(values), rejected: { times: Float64Array.from(rejTimes), reasons }, warnings };
}

/** Validate candidate pulses k … last against the format; null when it decodes cleanly. */
function checkCandidate(
  S: Float64Array, E: Float64Array, open: ArrayLike<number> | undefined, k: number, last: number, t0: number, tEnd: number,
  headerSec: number, dataStart: number, bitSec: number, nBits: number, tol: number, endSec: number,
): BarcodeRejection | null {
  if (tEnd > endSec + tol) return 'truncated';
  for (let q = k; q <= last; q++) if (open && (open[q]! & 2) !== 0) return 'truncated';
  if (Math.abs(E[k]! - t0 - headerSec) > tol) return 'header-width';
  // A data pulse starts at boundary m = 0 … nBits − 1 and ends at m = 1 … nBits.
  const onBoundary = (t: number, lo: number, hi: number): boolean => {
    const m = Math.round((t - t0 - dataStart) / bitSec);
    return m >= lo && m <= hi && Math.abs(t - (t0 + dataStart + m * bitSec)) <= tol;
  };
  for (let q = k + 1; q <= last; q++) {
    if (!onBoundary(S[q]!, 0, nBits - 1)) return 'misaligned-edge';
    if (E[q]! > tEnd + tol) return 'overrun';
    if (!onBoundary(E[q]!, 1, nBits)) return 'misaligned-edge';
  }
  return null;
}

import {
  TuningforkError, checkInteger, checkNonNegative, checkOneOf, checkPositive, checkRange, resolveOptions,
} from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import { findAnchors, fitPiece, groupAnchors, ipiTolerance, okUnder, rivalAlignment } from '../internal/clock-match.js';
import type { Anchors, PiecePairs } from '../internal/clock-match.js';
import { findCodeAnchors } from '../internal/code-anchors.js';
import { fitLine } from '../internal/ols.js';
import type { Line } from '../internal/ols.js';
import { checkCodes, checkSyncPulses } from '../internal/sync-inputs.js';

/** One stretch of the device clock without a jump: reference = offsetSec + slope · device. */
export interface ClockPiece {
  /** α, seconds: reference time at device time 0. */
  readonly offsetSec: number;
  /** β: reference seconds per device second. */
  readonly slope: number;
  /** (β − 1)·1e6: parts per million the device clock runs slow (> 0) or fast (< 0) against the reference. */
  readonly driftPpm: number;
  /** Device times of the first and last paired pulse: the synchronised range of this piece. */
  readonly deviceStart: number;
  readonly deviceEnd: number;
  /** Their reference times (mapped). */
  readonly referenceStart: number;
  readonly referenceEnd: number;
  /** Device pulse indices this piece covers (paired or not), inclusive. */
  readonly firstDevicePulse: number;
  readonly lastDevicePulse: number;
  /** Paired pulses used in the final fit. */
  readonly nPairs: number;
  /** Root-mean-square and largest |residual| of the pairs, seconds. */
  readonly rmsResidualSec: number;
  readonly maxResidualSec: number;
}

/** Result of {@link fitClockMap}: the fitted pieces, the pulse pairs and what stayed unmatched. */
export interface ClockMap {
  readonly pieces: readonly ClockPiece[];
  /** Paired pulses: indices into the reference and device pulse arrays, piece index, residual (s). */
  readonly pairs: {
    readonly reference: Int32Array;
    readonly device: Int32Array;
    readonly piece: Int32Array;
    readonly residualSec: Float64Array;
  };
  /** Pulses of each clock without a partner (dropped on the other side, outside the other's recording, or rejected as outliers). */
  readonly unmatchedReference: Int32Array;
  readonly unmatchedDevice: Int32Array;
  /** Over all pairs, seconds. */
  readonly rmsResidualSec: number;
  readonly maxResidualSec: number;
  /** Caveats with stable codes: sync-clock-jump, sync-large-drift, sync-large-residual, sync-piece-dropped, sync-many-unmatched. */
  readonly warnings: readonly ResultWarning[];
}

/** Options of {@link fitClockMap}. */
export interface FitClockMapOptions {
  /** Consecutive inter-pulse intervals (IPIs) compared to seed a match (K). @defaultValue 5 */
  seedIntervals?: number;
  /** Fixed part of the IPI agreement tolerance, seconds. @defaultValue 0.002 */
  intervalToleranceSec?: number;
  /** Drift-proportional part of the IPI tolerance, ppm of the IPI (2e-4 = 200 ppm). @defaultValue 200 */
  intervalTolerancePpm?: number;
  /** Pairing radius as a fraction of the smallest matched IPI. @defaultValue 0.25 */
  pairRadius?: number;
  /** Outlier cutoff in robust sd (1.4826·MAD) of the residuals. @defaultValue 5 */
  outlierSd?: number;
  /** Time resolution of the coarser clock, seconds; residuals up to 2× this are never outliers (2/fs_slow). @defaultValue 0.001 */
  resolutionSec?: number;
  /** Fewest pairs a clock piece needs; smaller pieces are dropped with a warning. @defaultValue 10 */
  minPairs?: number;
  /** Device-clock jumps (restarts): fit each stretch separately, or throw. @defaultValue 'split' */
  jumps?: 'split' | 'error';
  /**
   * The code each reference pulse carries (decodeBarcodes(...).values), one per pulse, NaN where
   * unknown; with `deviceCodes`, seeds come from equal codes instead of IPI windows, so periodic
   * barcodes match too. @defaultValue null (match by IPI pattern)
   */
  referenceCodes?: ArrayLike<number> | null;
  /** The code each device pulse carries; given together with `referenceCodes`. @defaultValue null */
  deviceCodes?: ArrayLike<number> | null;
}

const DEFAULTS = Object.freeze({
  seedIntervals: 5,
  intervalToleranceSec: 0.002,
  intervalTolerancePpm: 200,
  pairRadius: 0.25,
  outlierSd: 5,
  resolutionSec: 0.001,
  minPairs: 10,
  jumps: 'split' as 'split' | 'error',
  referenceCodes: null as ArrayLike<number> | null,
  deviceCodes: null as ArrayLike<number> | null,
});

/** Drift beyond this many ppm probably means a wrong nominal sample rate (flag only). */
const LARGE_DRIFT_PPM = 500;
/** Residuals beyond this many seconds deserve a look (flag only). */
const LARGE_RESIDUAL_SEC = 0.001;

function rmsMax(res: Float64Array): [number, number] {
  let ss = 0;
  let mx = 0;
  for (let i = 0; i < res.length; i++) {
    ss += res[i]! * res[i]!;
    mx = Math.max(mx, Math.abs(res[i]!));
  }
  return [res.length ? Math.sqrt(ss / res.length) : NaN, res.length ? mx : NaN];
}

/**
 * Fit the map from a second device's clock onto the reference (session) clock, from sync pulses
 * both recorded.
 *
 * **Method.** Model `t_ref = α + β·t_dev` per clock piece; drift ppm = (β − 1)·1e6. (1) Compute
 * the inter-pulse intervals (IPIs) of both trains. (2) Seeds: every window of K consecutive device
 * IPIs whose IPIs all agree within `intervalToleranceSec + intervalTolerancePpm·1e-6·IPI` with
 * exactly one window of reference IPIs (a window matching several is ambiguous and unused). Random
 * intervals make such windows unique; periodic pulses cannot be matched after drops. (3) Seeds are
 * grouped, in device order, into pieces: a seed whose reference time disagrees with its piece's
 * prediction, or a device clock going backwards, starts a new piece (a jump, e.g. a device
 * restart); pieces with fewer than `minPairs` pairs are dropped and the rest regrouped. (4) Each
 * piece: least-squares line on its seed pairs; map every device pulse into reference time and pair
 * it with the nearest reference pulse within `pairRadius`·(smallest IPI), one to one; OLS; drop
 * pairs with |residual| > max(outlierSd·1.4826·MAD, 2·resolutionSec); refit until the pairs stop
 * changing. The border between two pieces is the cut that pairs the most pulses. (4b) Without
 * codes, each piece is checked against its rivals: the same line moved by the reference interval
 * to the 1st–3rd neighbouring pulse on either side of its middle pair. If a rival pairs at least
 * half as many device pulses within the fit's outlier cutoff, the trains are too regular (e.g.
 * periodic) for the match to mean anything, and fitClockMap throws rather than return a map
 * that may be off by whole pulses. Random intervals leave a rival about 2·cutoff·rate of the
 * pulses (under 1 %). (5) Report α, β,
 * ppm, pairs, unmatched pulses per clock, RMS and maximum residual, and flags: |drift| > 500 ppm
 * (`sync-large-drift`, probably a wrong nominal rate) and max residual > 1 ms
 * (`sync-large-residual`) (common practice, no source). Use the same edge polarity on both sides:
 * a constant latency is indistinguishable from offset.
 *
 * **Barcodes.** With `referenceCodes` and `deviceCodes` (the values decodeBarcodes read from each
 * side's sync line, pulses = the barcodes' start times), step (2) takes as seeds the pulses whose
 * code occurs once in the other train, places repeated codes of a wrapped counter by the
 * nearest such unique code (internal/code-anchors.ts), and steps (3)–(5) run unchanged with
 * windows of one pulse. A clock stretch whose codes all repeat cannot be placed (every shift by
 * a wrap period fits periodic barcodes equally well): send enough bits not to wrap. The
 * codes only seed the match; pairing under the fitted line is by time, so a misread code costs
 * nothing beyond a dropped seed.
 *
 * Map device times with mapDeviceTimes, which refuses times outside the synchronised range unless
 * asked to extrapolate.
 *
 * @param referencePulses - Sync pulse times on the reference clock, seconds, strictly increasing.
 * @param devicePulses - The same pulses as the device logged them, seconds on its clock, in
 *   recorded order; strictly increasing except where the device clock was reset (a decrease
 *   starts a new piece).
 * @returns ClockMap `{ pieces, pairs, unmatchedReference, unmatchedDevice, rmsResidualSec, maxResidualSec, warnings }`.
 * @throws {TuningforkError} TF_SYNC_FAILED: too few pulses on either side (fewer than minPairs or
 *   seedIntervals + 1), no IPI pattern in common, only ambiguous matches (e.g. periodic pulses),
 *   pieces overlapping on the reference clock, or a jump with `jumps: 'error'`, or no code in
 *   common; TF_BAD_EVENTS: non-finite, unsorted or duplicate reference pulses, or duplicate
 *   consecutive device pulses; TF_SHAPE_MISMATCH: codes not one per pulse, or only one side's
 *   codes given; TF_BAD_VALUE: a code that is not a non-negative integer (or NaN);
 *   TF_BAD_OPTION / TF_UNKNOWN_OPTION.
 *
 * @example
 * ```ts
 * const map = fitClockMap(sessionPulses, devicePulses);
 * map.pieces[0].driftPpm;                               // e.g. 40.0
 * const t = mapDeviceTimes(map, deviceEventTimes);     // seconds on the session clock
 * ```
 */
export function fitClockMap(referencePulses: ArrayLike<number>, devicePulses: ArrayLike<number>, options: FitClockMapOptions = {}): ClockMap {
  const fn = 'fitClockMap';
  const o = resolveOptions(fn, DEFAULTS, options);
  const K = checkInteger(fn, 'seedIntervals', o.seedIntervals, 2, 100);
  const tolSec = checkNonNegative(fn, 'intervalToleranceSec', o.intervalToleranceSec);
  const tolPpm = checkNonNegative(fn, 'intervalTolerancePpm', o.intervalTolerancePpm);
  const radiusFrac = checkRange(fn, 'pairRadius', o.pairRadius, 0, 0.5);
  const outlierSd = checkPositive(fn, 'outlierSd', o.outlierSd);
  const resolution = checkNonNegative(fn, 'resolutionSec', o.resolutionSec);
  const minPairs = checkInteger(fn, 'minPairs', o.minPairs, 2);
  const jumps = checkOneOf(fn, 'jumps', o.jumps, ['split', 'error'] as const);
  const { A, B, resets } = checkSyncPulses(fn, referencePulses, devicePulses, jumps);
  const codes = checkCodes(fn, o.referenceCodes, o.deviceCodes, A.length, B.length);
  const W = codes ? 0 : K; // pulses per seed window minus one
  const need = Math.max(minPairs, W + 1);
  if (A.length < need || B.length < need) {
    throw new TuningforkError(
      'TF_SYNC_FAILED',
      `${fn}: too few sync pulses to fit a clock map: ${A.length} reference and ${B.length} device pulses; at least ${need} on each side are needed (minPairs ${minPairs}${codes ? '' : `, seedIntervals ${K}`}).`,
      { fn, reference: A.length, device: B.length, needed: need },
    );
  }
  const resetsBefore = new Int32Array(B.length);
  for (let j = 1; j < B.length; j++) resetsBefore[j] = resetsBefore[j - 1]! + (B[j]! < B[j - 1]! ? 1 : 0);
  const anc: Anchors = codes ? findCodeAnchors(A, B, codes.reference, codes.device, resetsBefore) : findAnchors(A, B, K, tolSec, tolPpm);
  if (anc.ai.length === 0 && codes) {
    throw new TuningforkError(
      'TF_SYNC_FAILED',
      `${fn}: no device code can be matched to one reference pulse (${anc.nAmbiguous} ambiguous): the two sides share no barcode value, or every value repeats (a counter that wrapped) and no unique value places the repeats in time. Check that both sides were decoded with the same format, and send enough bits not to wrap within a session.`,
      { fn, reason: anc.nAmbiguous > 0 ? 'ambiguous' : 'no-match', ambiguous: anc.nAmbiguous },
    );
  }
  if (anc.ai.length === 0) {
    if (anc.nAmbiguous > 0) {
      throw new TuningforkError(
        'TF_SYNC_FAILED',
        `${fn}: every matching window of ${K} inter-pulse intervals fits several places in the reference train (${anc.nAmbiguous} ambiguous windows): the pulses are too regular (periodic?) to be matched. Send random intervals or barcodes (decodeBarcodes, then referenceCodes / deviceCodes), or raise seedIntervals.`,
        { fn, ambiguous: anc.nAmbiguous, reason: 'ambiguous' },
      );
    }
    throw new TuningforkError(
      'TF_SYNC_FAILED',
      `${fn}: no window of ${K} inter-pulse intervals agrees between the two trains within ${tolSec} s + ${tolPpm} ppm. Check that both lists hold the same pulses, in seconds, with the same edge polarity.`,
      { fn, reason: 'no-match' },
    );
  }

  // Smallest IPI inside matched windows (with codes: of the whole device train) sets the pairing radius.
  let minIpi = Infinity;
  for (let k = 0; k < anc.bj.length; k++) {
    for (let m = 0; m < W; m++) minIpi = Math.min(minIpi, B[anc.bj[k]! + m + 1]! - B[anc.bj[k]! + m]!);
  }
  if (codes) for (let j = 1; j < B.length; j++) if (B[j]! > B[j - 1]!) minIpi = Math.min(minIpi, B[j]! - B[j - 1]!);
  const radius = radiusFrac * minIpi;
  const floorSec = 2 * resolution;
  const warnings: ResultWarning[] = [];

  // Group seeds into pieces; drop pieces with too few distinct pairs and regroup until stable.
  const active = new Uint8Array(anc.ai.length).fill(1);
  let groups: number[][] = [];
  for (let round = 0; round < 20; round++) {
    groups = groupAnchors(A, B, anc, active, W, ipiTolerance(1, tolSec, tolPpm), resetsBefore);
    let dropped = false;
    for (const g of groups) {
      const first = anc.bj[g[0]!]!;
      const last = anc.bj[g[g.length - 1]!]! + W;
      let distinct = 0;
      let covered = -1;
      for (const k of g) {
        const j = anc.bj[k]!;
        distinct += Math.min(W + 1, j + W - covered);
        covered = j + W;
      }
      // One IPI window is strong evidence and may seed a lone piece; one code is not.
      if (distinct < minPairs && (groups.length > 1 || codes)) {
        for (const k of g) active[k] = 0;
        dropped = true;
        warnings.push({ code: 'sync-piece-dropped', message: `${fn}: a stretch of ${distinct} seed-matched pulses (device pulses ${first}–${last}) disagrees with its neighbours and is too short to be a clock piece (minPairs ${minPairs}); ignored.`, details: { firstDevicePulse: first, lastDevicePulse: last } });
      }
    }
    if (!dropped) break;
  }

  // Interior fits (between each piece's first and last seed).
  const interior: { lo: number; hi: number; fit: PiecePairs }[] = groups.map((g) => {
    const lo = anc.bj[g[0]!]!;
    const hi = anc.bj[g[g.length - 1]!]! + W;
    const xs: number[] = [];
    const ys: number[] = [];
    let covered = -1;
    for (const k of g) {
      for (let m = 0; m <= W; m++) {
        const j = anc.bj[k]! + m;
        if (j <= covered) continue;
        xs.push(B[j]!);
        ys.push(A[anc.ai[k]! + m]!);
      }
      covered = anc.bj[k]! + W;
    }
    const start: Line = fitLine(xs, ys);
    return { lo, hi, fit: fitPiece(A, B, lo, hi, start, radius, outlierSd, floorSec) };
  });
  for (let p = 0; p + 1 < interior.length; p++) {
    if (interior[p]!.hi >= interior[p + 1]!.lo) interior[p]!.hi = interior[p + 1]!.lo - 1;
  }
  // Borders: the cut c (last device pulse of piece p) that pairs the most pulses in the gap.
  const cuts: number[] = [];
  for (let p = 0; p + 1 < interior.length; p++) {
    const a = interior[p]!;
    const b = interior[p + 1]!;
    const okA = okUnder(A, B, a.hi + 1, b.lo - 1, a.fit.line, a.fit.cutoff);
    const okB = okUnder(A, B, a.hi + 1, b.lo - 1, b.fit.line, b.fit.cutoff);
    let score = 0;
    for (let q = 0; q < okB.length; q++) score += okB[q]!;
    let best = score;
    let bestCut = a.hi;
    for (let q = 0; q < okA.length; q++) {
      score += okA[q]! - okB[q]!;
      if (score > best) {
        best = score;
        bestCut = a.hi + 1 + q;
      }
    }
    cuts.push(bestCut);
  }
  if (interior.length > 1) {
    if (jumps === 'error') {
      throw new TuningforkError('TF_SYNC_FAILED', `${fn}: the device clock jumps ${interior.length - 1} time(s) (first near device pulse ${cuts[0]! + 1}); pass { jumps: 'split' } to fit each stretch separately.`, { fn, cuts });
    }
    warnings.push({ code: 'sync-clock-jump', message: `${fn}: the device clock jumps ${interior.length - 1} time(s) (after device pulse(s) ${cuts.join(', ')}${resets > 0 ? `; ${resets} reset(s) where device time goes back` : ''}); each stretch has its own piece.`, details: { cuts } });
  }

  // Final fits over each piece's full range.
  const pieces: ClockPiece[] = [];
  const pRef: number[] = [];
  const pDev: number[] = [];
  const pPiece: number[] = [];
  const pRes: number[] = [];
  let lastRef = -1;
  for (let p = 0; p < interior.length; p++) {
    const lo = p === 0 ? 0 : cuts[p - 1]! + 1;
    const hi = p === interior.length - 1 ? B.length - 1 : cuts[p]!;
    const fit = fitPiece(A, B, lo, hi, interior[p]!.fit.line, radius, outlierSd, floorSec);
    const n = fit.ai.length;
    if (n < minPairs) {
      warnings.push({ code: 'sync-piece-dropped', message: `${fn}: device pulses ${lo}–${hi} gave only ${n} pairs (minPairs ${minPairs}); left unsynchronised.`, details: { firstDevicePulse: lo, lastDevicePulse: hi, pairs: n } });
      continue;
    }
    if (!codes) {
      const rival = rivalAlignment(A, B, lo, hi, fit);
      if (rival.pairs >= 0.5 * n) {
        throw new TuningforkError(
          'TF_SYNC_FAILED',
          `${fn}: the pulses are too regular to be matched: shifting device pulses ${lo}–${hi} by ${rival.shiftSec.toFixed(6)} s onto other reference pulses pairs ${rival.pairs} of them as well as the fit's ${n}. Periodic pulses cannot be re-matched after drops; send random intervals or barcodes (decodeBarcodes, then referenceCodes / deviceCodes).`,
          { fn, reason: 'ambiguous', piece: pieces.length, pairs: n, rivalPairs: rival.pairs, rivalShiftSec: rival.shiftSec },
        );
      }
    }
    if (fit.ai[0]! <= lastRef) {
      throw new TuningforkError('TF_SYNC_FAILED', `${fn}: clock piece ${pieces.length} (device pulses ${lo}–${hi}) maps onto reference pulses already used by the previous piece; the pulse trains cannot be matched consistently.`, { fn, piece: pieces.length });
    }
    lastRef = fit.ai[n - 1]!;
    const idx = pieces.length;
    const [rms, mx] = rmsMax(fit.res);
    const { a, b } = fit.line;
    const d0 = B[fit.bj[0]!]!;
    const d1 = B[fit.bj[n - 1]!]!;
    pieces.push({
      offsetSec: a, slope: b, driftPpm: (b - 1) * 1e6,
      deviceStart: d0, deviceEnd: d1, referenceStart: a + b * d0, referenceEnd: a + b * d1,
      firstDevicePulse: lo, lastDevicePulse: hi, nPairs: n, rmsResidualSec: rms, maxResidualSec: mx,
    });
    for (let k = 0; k < n; k++) {
      pRef.push(fit.ai[k]!);
      pDev.push(fit.bj[k]!);
      pPiece.push(idx);
      pRes.push(fit.res[k]!);
    }
    if (Math.abs((b - 1) * 1e6) > LARGE_DRIFT_PPM) {
      warnings.push({ code: 'sync-large-drift', message: `${fn}: piece ${idx} drifts ${((b - 1) * 1e6).toFixed(1)} ppm (> ${LARGE_DRIFT_PPM} ppm); check the device's nominal sample rate.`, details: { piece: idx, driftPpm: (b - 1) * 1e6 } });
    }
    if (mx > LARGE_RESIDUAL_SEC) {
      warnings.push({ code: 'sync-large-residual', message: `${fn}: piece ${idx} has a largest residual of ${(mx * 1e3).toFixed(3)} ms (> 1 ms); check pulse jitter and edge polarity.`, details: { piece: idx, maxResidualSec: mx } });
    }
  }
  if (pieces.length === 0) {
    throw new TuningforkError('TF_SYNC_FAILED', `${fn}: no clock piece has at least ${minPairs} paired pulses.`, { fn, reason: 'too-few-pairs' });
  }
  const usedA = new Uint8Array(A.length);
  const usedB = new Uint8Array(B.length);
  for (const i of pRef) usedA[i] = 1;
  for (const j of pDev) usedB[j] = 1;
  const unA: number[] = [];
  const unB: number[] = [];
  for (let i = 0; i < A.length; i++) if (!usedA[i]) unA.push(i);
  for (let j = 0; j < B.length; j++) if (!usedB[j]) unB.push(j);
  if (unA.length > A.length / 2 || unB.length > B.length / 2) {
    warnings.push({ code: 'sync-many-unmatched', message: `${fn}: more than half of one side's pulses are unmatched (${unA.length}/${A.length} reference, ${unB.length}/${B.length} device); the recordings may overlap only partly.`, details: { reference: unA.length, device: unB.length } });
  }
  const residualSec = Float64Array.from(pRes);
  const [rms, mx] = rmsMax(residualSec);
  return {
    pieces,
    pairs: { reference: Int32Array.from(pRef), device: Int32Array.from(pDev), piece: Int32Array.from(pPiece), residualSec },
    unmatchedReference: Int32Array.from(unA),
    unmatchedDevice: Int32Array.from(unB),
    rmsResidualSec: rms,
    maxResidualSec: mx,
    warnings,
  };
}


import { TuningforkError, checkBoolean, resolveOptions, toFloat64 } from '@tuningfork/core';
import { checkNumberArray } from '../internal/validate.js';
import type { ClockMap } from './fit-clock-map.js';

/** Options of {@link mapDeviceTimes}. */
export interface MapDeviceTimesOptions {
  /** Map times outside the synchronised range with the nearest piece's line instead of throwing. @defaultValue false */
  extrapolate?: boolean;
  /**
   * Clock piece of each time (same length as times), for device clocks that were reset so that
   * pieces share device times; null picks the piece whose synchronised range holds the time.
   * @defaultValue null
   */
  piece?: ArrayLike<number> | null;
}

const DEFAULTS = Object.freeze({ extrapolate: false, piece: null as ArrayLike<number> | null });

/**
 * Map device-clock times onto the reference clock with a fitted ClockMap.
 *
 * Each time t goes through its piece's line, `α + β·t`. The piece is `options.piece[i]` when
 * given, else the one whose synchronised range [deviceStart, deviceEnd] (first to last paired
 * pulse) holds t. Times outside every range are refused unless `extrapolate: true`, which uses the
 * piece nearest in device time. NaN maps to NaN.
 *
 * @param map - Result of fitClockMap.
 * @param times - Device times, seconds.
 * @returns Reference-clock times, seconds (Float64Array, same length).
 * @throws {TuningforkError} TF_SYNC_FAILED: a time outside the synchronised range (without
 *   `extrapolate`), or inside the ranges of several pieces (a reset; pass `piece`), naming the
 *   index and time; TF_SHAPE_MISMATCH / TF_BAD_OPTION for a bad `piece` array; TF_BAD_EVENTS for
 *   ±Infinity.
 */
export function mapDeviceTimes(map: ClockMap, times: ArrayLike<number>, options: MapDeviceTimesOptions = {}): Float64Array {
  const fn = 'mapDeviceTimes';
  const o = resolveOptions(fn, DEFAULTS, options);
  const extrapolate = checkBoolean(fn, 'extrapolate', o.extrapolate);
  const t = toFloat64(checkNumberArray(fn, 'times', times));
  const P = map.pieces;
  let given: ArrayLike<number> | null = null;
  if (o.piece !== null) {
    given = checkNumberArray(fn, 'piece', o.piece);
    if (given.length !== t.length) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: piece has ${given.length} entries, times has ${t.length}.`, { fn });
    }
  }
  const ranges = P.map((p, k) => `piece ${k}: ${p.deviceStart}–${p.deviceEnd} s`).join('; ');
  const out = new Float64Array(t.length);
  for (let i = 0; i < t.length; i++) {
    const x = t[i]!;
    if (x !== x) {
      out[i] = NaN;
      continue;
    }
    if (x === Infinity || x === -Infinity) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: times[${i}] is ${x}; device times must be finite seconds.`, { fn, index: i });
    }
    let k = -1;
    if (given !== null) {
      k = given[i]!;
      if (!Number.isInteger(k) || k < 0 || k >= P.length) {
        throw new TuningforkError('TF_BAD_OPTION', `${fn}: piece[${i}] is ${k}; expected an integer in [0, ${P.length - 1}].`, { fn, index: i });
      }
      const p = P[k]!;
      if (!extrapolate && (x < p.deviceStart || x > p.deviceEnd)) {
        throw new TuningforkError('TF_SYNC_FAILED', `${fn}: times[${i}] = ${x} s lies outside the synchronised range of piece ${k} (${p.deviceStart}–${p.deviceEnd} s). Pass { extrapolate: true } to extrapolate its line.`, { fn, index: i, time: x, piece: k });
      }
    } else {
      let count = 0;
      for (let q = 0; q < P.length; q++) {
        if (x >= P[q]!.deviceStart && x <= P[q]!.deviceEnd) {
          count++;
          k = q;
        }
      }
      if (count > 1) {
        throw new TuningforkError('TF_SYNC_FAILED', `${fn}: times[${i}] = ${x} s falls in the synchronised range of ${count} clock pieces (the device clock was reset: ${ranges}). Pass { piece } to say which stretch each time belongs to.`, { fn, index: i, time: x });
      }
      if (count === 0) {
        if (!extrapolate) {
          throw new TuningforkError('TF_SYNC_FAILED', `${fn}: times[${i}] = ${x} s lies outside the synchronised range (${ranges}). Pass { extrapolate: true } to extrapolate the nearest piece.`, { fn, index: i, time: x });
        }
        let best = Infinity;
        let tie = false;
        for (let q = 0; q < P.length; q++) {
          const d = x < P[q]!.deviceStart ? P[q]!.deviceStart - x : x - P[q]!.deviceEnd;
          if (d < best) {
            best = d;
            k = q;
            tie = false;
          } else if (d === best) {
            tie = true;
          }
        }
        if (tie) {
          throw new TuningforkError('TF_SYNC_FAILED', `${fn}: times[${i}] = ${x} s is equally near several clock pieces (${ranges}); pass { piece }.`, { fn, index: i, time: x });
        }
      }
    }
    const p = P[k]!;
    out[i] = p.offsetSec + p.slope * x;
  }
  return out;
}

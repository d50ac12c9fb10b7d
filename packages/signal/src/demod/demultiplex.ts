import { TuningforkError, checkFinite, formatValue, resolveOptions } from '@tuningfork/core';
import type { ResultWarning, TimestampedSignal } from '@tuningfork/core';
import { asF64 } from '../internal/validate.js';

/** Options of {@link demultiplexFrames}. */
export interface DemultiplexOptions {
  /** Excitation-state code of sensor (e.g. 470 nm) frames. @defaultValue 1 */
  signalState?: number;
  /** State code of isosbestic control (e.g. 405/415 nm) frames. @defaultValue 2 */
  controlState?: number;
  /** State code of dark (all LEDs off) frames, or null when there are none. @defaultValue null */
  darkState?: number | null;
}

/** Result of {@link demultiplexFrames}. */
export interface DemultiplexResult {
  /** Sensor frames (dark-subtracted when dark frames exist) at their own times. */
  readonly signal: TimestampedSignal;
  /** Control interpolated linearly onto the sensor times. */
  readonly control: TimestampedSignal;
  /** Control frames at their own times (dark-subtracted when dark frames exist). */
  readonly controlFrames: TimestampedSignal;
  /** 1 where the control value at a sensor time was extrapolated (held at the nearest control frame). */
  readonly extrapolated: Uint8Array;
  readonly nExtrapolated: number;
  /** Whether dark frames were subtracted. */
  readonly darkSubtracted: boolean;
  /** Frames per state code seen. */
  readonly counts: Readonly<Record<string, number>>;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ signalState: 1, controlState: 2, darkState: null } as const);

/** Linear interpolation of (tk, vk) at times t (clamped at the ends, clamped samples flagged). */
function interpClamped(t: Float64Array, tk: Float64Array, vk: Float64Array, flags: Uint8Array | null): Float64Array {
  const out = new Float64Array(t.length);
  const m = tk.length;
  let j = 0;
  for (let i = 0; i < t.length; i++) {
    const x = t[i]!;
    if (x <= tk[0]! || m === 1) {
      out[i] = vk[0]!;
      if (flags && x < tk[0]!) flags[i] = 1;
      if (flags && m === 1 && x > tk[0]!) flags[i] = 1;
      continue;
    }
    if (x >= tk[m - 1]!) {
      out[i] = vk[m - 1]!;
      if (flags && x > tk[m - 1]!) flags[i] = 1;
      continue;
    }
    while (tk[j + 1]! < x) j++;
    const u = (x - tk[j]!) / (tk[j + 1]! - tk[j]!);
    out[i] = vk[j]! + (vk[j + 1]! - vk[j]!) * u;
  }
  return out;
}

/**
 * Split time-division multiplexed photometry frames into sensor and control channels.
 *
 * Each frame's excitation state comes from `states` (the LED TTL recorded per frame), never from
 * its position, so dropped frames cannot swap the channels. Each channel keeps its own
 * timestamps (rate fs/n_states). When dark frames exist, the dark level (interpolated to each
 * frame's time) is subtracted. The control is then interpolated linearly onto the sensor times,
 * ready for {@link fitControl}; sensor times before the first or after the last control frame get
 * the nearest control value and are flagged in `extrapolated`.
 *
 * @param frames - Detector value and time of every frame (timestamps strictly increasing).
 * @param states - Excitation-state code per frame, same length.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (lengths), TF_IRREGULAR_SAMPLING (first
 *   non-increasing timestamp), TF_TOO_FEW_SAMPLES (no sensor or no control frames), TF_BAD_OPTION.
 * @example
 * ```ts
 * // frames [10,2,11,3,12,2,13,4] 10 ms apart, states alternating 1,2:
 * // signal [10,11,12,13] at 0,20,40,60 ms; control there [2, 2.5, 2.5, 3] (the first flagged)
 * ```
 *
 * References
 * - Akam, T. & Walton, M. E. (2019). pyPhotometry: open source Python based hardware and software
 *   for fiber photometry data acquisition. Sci. Rep. 9:3521. doi:10.1038/s41598-019-40207-7
 */
export function demultiplexFrames(frames: TimestampedSignal, states: ArrayLike<number>, options: DemultiplexOptions = {}): DemultiplexResult {
  const fn = 'demultiplexFrames';
  const opts = resolveOptions(fn, DEFAULTS, options);
  if (!frames || !(frames.values instanceof Float64Array) || !(frames.timestamps instanceof Float64Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: frames must be { values: Float64Array, timestamps: Float64Array }, got ${formatValue(frames)}.`, { fn });
  }
  const v = frames.values;
  const t = frames.timestamps;
  const n = v.length;
  if (t.length !== n) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: frames.values has ${n} entries but frames.timestamps has ${t.length}.`, { fn });
  const st = asF64(fn, 'states', states, n);
  const sS = checkFinite(fn, 'signalState', opts.signalState);
  const cS = checkFinite(fn, 'controlState', opts.controlState);
  const dS = opts.darkState === null ? null : checkFinite(fn, 'darkState', opts.darkState);
  if (sS === cS || (dS !== null && (dS === sS || dS === cS))) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: signalState, controlState and darkState must differ, got ${sS}, ${cS}, ${String(dS)}.`, { fn });
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(t[i]!)) throw new TuningforkError('TF_NON_FINITE', `${fn}: frames.timestamps[${i}] is ${t[i]}.`, { fn, index: i });
    if (i > 0 && !(t[i]! > t[i - 1]!)) {
      throw new TuningforkError('TF_IRREGULAR_SAMPLING', `${fn}: frame timestamps must strictly increase; frame ${i} at t=${t[i]} s follows t=${t[i - 1]} s.`, { fn, index: i, time: t[i] });
    }
  }
  const counts: Record<string, number> = {};
  const idx = { s: [] as number[], c: [] as number[], d: [] as number[] };
  let other = 0;
  let repeats = 0;
  for (let i = 0; i < n; i++) {
    const s = st[i]!;
    counts[String(s)] = (counts[String(s)] ?? 0) + 1;
    if (s === sS) idx.s.push(i);
    else if (s === cS) idx.c.push(i);
    else if (dS !== null && s === dS) idx.d.push(i);
    else other++;
    if (i > 0 && s === st[i - 1]) repeats++;
  }
  if (idx.s.length === 0 || idx.c.length === 0) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: found ${idx.s.length} sensor frame(s) (state ${sS}) and ${idx.c.length} control frame(s) (state ${cS}); both are needed. States seen: ${JSON.stringify(counts)}.`, { fn, counts });
  }
  const warnings: ResultWarning[] = [];
  if (other > 0) warnings.push({ code: 'UNKNOWN_STATES_IGNORED', message: `${fn}: ${other} frame(s) with other state codes ignored.`, details: { counts } });
  if (repeats > 0) warnings.push({ code: 'REPEATED_STATES', message: `${fn}: ${repeats} frame(s) repeat the previous frame's state (dropped frames?); states were read per frame, so channels stay correct.`, details: { repeats } });
  const pick = (list: number[]): { t: Float64Array; v: Float64Array } => ({ t: Float64Array.from(list, (i) => t[i]!), v: Float64Array.from(list, (i) => v[i]!) });
  const sig = pick(idx.s);
  const ctl = pick(idx.c);
  let darkSubtracted = false;
  if (idx.d.length > 0) {
    const dk = pick(idx.d);
    const dSig = interpClamped(sig.t, dk.t, dk.v, null);
    const dCtl = interpClamped(ctl.t, dk.t, dk.v, null);
    for (let i = 0; i < sig.v.length; i++) sig.v[i] = sig.v[i]! - dSig[i]!;
    for (let i = 0; i < ctl.v.length; i++) ctl.v[i] = ctl.v[i]! - dCtl[i]!;
    darkSubtracted = true;
  } else if (dS !== null) {
    warnings.push({ code: 'NO_DARK_FRAMES', message: `${fn}: darkState ${dS} given but no dark frames found; nothing subtracted.` });
  }
  const flags = new Uint8Array(sig.t.length);
  const cAt = interpClamped(sig.t, ctl.t, ctl.v, flags);
  let nEx = 0;
  for (let i = 0; i < flags.length; i++) nEx += flags[i]!;
  if (nEx > 0) warnings.push({ code: 'CONTROL_EXTRAPOLATED', message: `${fn}: ${nEx} sensor frame(s) lie outside the control frames' time span; their control value is held at the nearest control frame and flagged.`, details: { count: nEx } });
  return {
    signal: { values: sig.v, timestamps: sig.t },
    control: { values: cAt, timestamps: Float64Array.from(sig.t) },
    controlFrames: { values: ctl.v, timestamps: ctl.t },
    extrapolated: flags,
    nExtrapolated: nEx,
    darkSubtracted,
    counts,
    warnings,
  };
}

import { TuningforkError, checkInteger, checkFinite, checkPositive, resolveOptions } from '@tuningfork/core';
import type { TimestampedSignal, UniformSignal } from '@tuningfork/core';
import { savgolDerivative } from '../internal/savgol.js';

/** Options of {@link wheelVelocity}. */
export interface WheelVelocityOptions {
  /** Output rate, Hz. 'auto': the input's rate for a UniformSignal, 1000 Hz for timestamped positions. @defaultValue 'auto' */
  sampleRate?: 'auto' | number;
  /** Savitzky–Golay window, seconds (rounded to an odd number of samples, at least 3). @defaultValue 0.05 */
  windowSec?: number;
  /** Position units per input unit, e.g. 360 / (4 · 1024) degrees per count for an X4-decoded 1024 PPR encoder. @defaultValue 1 */
  scale?: number;
}

const DEFAULTS = Object.freeze({ sampleRate: 'auto' as 'auto' | number, windowSec: 0.05, scale: 1 });

/**
 * Wheel velocity from encoder position: interpolate onto a uniform grid, then differentiate with a
 * Savitzky–Golay quadratic filter.
 *
 * **Method.** Positions (counts or any unit; times `scale`) are read at `t0 + k / sampleRate` by
 * linear interpolation between logged samples (numpy.interp), from the first to the last
 * timestamp. The derivative is the Savitzky–Golay first derivative (polynomial order 2, window
 * `windowSec`), as scipy.signal.savgol_filter(pos, w, 2, deriv=1, delta=1/fs) with mode 'interp'
 * at the ends. An X4-decoded encoder with PPR lines gives 4·PPR counts per turn, so degrees =
 * 360·counts/(4·PPR) (1024 PPR → 0.08789° per count).
 *
 * References
 * - Savitzky, A. & Golay, M. J. E. (1964). Smoothing and differentiation of data by simplified
 *   least squares procedures. Anal. Chem. 36(8):1627–1639. doi:10.1021/ac60214a047
 *
 * @param position - Encoder position as a UniformSignal or a TimestampedSignal (strictly
 *   increasing timestamps, seconds).
 * @returns Velocity as a UniformSignal (position units × scale per second).
 * @throws {TuningforkError} TF_NON_FINITE (NaN position or timestamp); TF_IRREGULAR_SAMPLING
 *   (timestamps not strictly increasing); TF_TOO_FEW_SAMPLES (record shorter than the window);
 *   TF_BAD_OPTION / TF_UNKNOWN_OPTION.
 */
export function wheelVelocity(position: UniformSignal | TimestampedSignal, options: WheelVelocityOptions = {}): UniformSignal {
  const fn = 'wheelVelocity';
  const o = resolveOptions(fn, DEFAULTS, options);
  const windowSec = checkPositive(fn, 'windowSec', o.windowSec);
  const scale = checkFinite(fn, 'scale', o.scale);
  const values = position.values;
  if (!(values instanceof Float64Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: position.values must be a Float64Array.`, { fn });
  }
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) throw new TuningforkError('TF_NON_FINITE', `${fn}: position sample ${i} is ${values[i]}; fill gaps first.`, { fn, index: i });
  }
  let grid: Float64Array;
  let rate: number;
  let t0: number;
  if ('timestamps' in position) {
    const ts = position.timestamps;
    if (ts.length !== values.length) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${ts.length} timestamps for ${values.length} positions.`, { fn });
    }
    for (let i = 0; i < ts.length; i++) {
      if (!Number.isFinite(ts[i])) throw new TuningforkError('TF_NON_FINITE', `${fn}: timestamp ${i} is ${ts[i]}.`, { fn, index: i });
      if (i > 0 && !(ts[i]! > ts[i - 1]!)) {
        throw new TuningforkError('TF_IRREGULAR_SAMPLING', `${fn}: timestamp ${i} (${ts[i]} s) does not follow ${ts[i - 1]} s; timestamps must strictly increase.`, { fn, index: i });
      }
    }
    rate = o.sampleRate === 'auto' ? 1000 : checkPositive(fn, 'sampleRate', o.sampleRate);
    t0 = ts[0]!;
    const n = ts.length === 0 ? 0 : Math.floor((ts[ts.length - 1]! - t0) * rate + 1e-9) + 1;
    grid = new Float64Array(n);
    let j = 0;
    for (let k = 0; k < n; k++) {
      const t = t0 + k / rate;
      while (j + 1 < ts.length - 1 && ts[j + 1]! <= t) j++;
      if (j + 1 >= ts.length) {
        grid[k] = values[j]!;
        continue;
      }
      const a = ts[j]!;
      const b = ts[j + 1]!;
      grid[k] = t >= b ? values[j + 1]! : values[j]! + ((t - a) / (b - a)) * (values[j + 1]! - values[j]!);
    }
  } else {
    const src = position as UniformSignal;
    if (!Number.isFinite(src.sampleRate) || src.sampleRate <= 0) {
      throw new TuningforkError('TF_BAD_SAMPLE_RATE', `${fn}: position.sampleRate must be a finite number of Hz > 0, got ${src.sampleRate}.`, { fn });
    }
    rate = o.sampleRate === 'auto' ? src.sampleRate : checkPositive(fn, 'sampleRate', o.sampleRate);
    t0 = src.t0;
    if (rate === src.sampleRate) {
      grid = values;
    } else {
      const n = Math.floor(((values.length - 1) / src.sampleRate) * rate + 1e-9) + 1;
      grid = new Float64Array(n);
      for (let k = 0; k < n; k++) {
        const p = (k / rate) * src.sampleRate;
        const i = Math.min(Math.floor(p), values.length - 1);
        const f = p - i;
        grid[k] = f === 0 || i + 1 >= values.length ? values[i]! : values[i]! + f * (values[i + 1]! - values[i]!);
      }
    }
  }
  let w = Math.round(windowSec * rate);
  if (w % 2 === 0) w += 1;
  w = Math.max(3, w);
  checkInteger(fn, 'window samples', w, 3);
  if (grid.length < w) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${grid.length} samples at ${rate} Hz, fewer than the ${w}-sample window (${windowSec} s).`, { fn, n: grid.length, window: w });
  }
  const v = savgolDerivative(grid, (w - 1) >> 1, 1 / rate);
  if (scale !== 1) for (let i = 0; i < v.length; i++) v[i] = v[i]! * scale;
  return { values: v, sampleRate: rate, t0 };
}

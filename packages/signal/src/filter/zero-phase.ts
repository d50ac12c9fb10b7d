import { TuningforkError, checkInteger, checkOneOf, resolveOptions } from '@tuningfork/core';
import { sosBackward, sosForward, tfInPlace } from '../internal/sos-kernel.js';
import { toSos } from '../internal/sos-input.js';
import type { SosInput } from '../internal/sos-input.js';
import { asF64, requireFinite } from '../internal/validate.js';
import { lfilterZiRaw, normaliseTf, sosfiltZiRaw } from './iir-filter.js';

/** How the input is extended at both ends before zero-phase filtering. */
export type PadType = 'odd' | 'even' | 'constant' | 'none';

/** Options of zero-phase filtering ({@link sosfiltfilt}, {@link filtfilt}, {@link zeroPhasePlan}). */
export interface ZeroPhaseOptions {
  /**
   * End extension: 'odd' (point reflection about the end sample, scipy default), 'even' (mirror),
   * 'constant' (repeat the end sample), 'none' (no extension). @defaultValue 'odd'
   */
  padType?: PadType;
  /**
   * Samples added at each end; null uses scipy's default, 3·(2·nSections + 1 − min(#b2 = 0, #a2 = 0))
   * for sections or 3·max(len a, len b) for (b, a). Ignored for padType 'none'. @defaultValue null
   */
  padLen?: number | null;
}

const DEFAULTS = Object.freeze({ padType: 'odd', padLen: null } as const);

/** A reusable zero-phase filter that owns its scratch memory. */
export interface ZeroPhasePlan {
  /** Pad length in samples at each end (0 for padType 'none'). */
  readonly padLen: number;
  readonly padType: PadType;
  /**
   * Filter x forward and backward; writes into `out` (may be x itself) or a new array.
   * @throws {TuningforkError} TF_TOO_FEW_SAMPLES when x.length ≤ padLen; TF_NON_FINITE at the first NaN.
   */
  apply(x: Float64Array, out?: Float64Array): Float64Array;
  /** As `apply` without the length and NaN checks (for callers that have checked already). */
  applyUnchecked(x: Float64Array, out?: Float64Array): Float64Array;
}

function resolvePad(fn: string, options: ZeroPhaseOptions, defaultPad: number): { padType: PadType; padLen: number } {
  const opts = resolveOptions(fn, DEFAULTS, options);
  const padType = checkOneOf(fn, 'padType', opts.padType, ['odd', 'even', 'constant', 'none'] as const);
  const padLen = padType === 'none' ? 0 : opts.padLen === null ? defaultPad : checkInteger(fn, 'padLen', opts.padLen, 0);
  return { padType, padLen };
}

/** Fill left (edge values) and right (edge values) extensions of x, as scipy odd/even/const_ext. */
function extensions(x: Float64Array, edge: number, padType: PadType, left: Float64Array, right: Float64Array): void {
  const n = x.length;
  const x0 = x[0]!;
  const xn = x[n - 1]!;
  for (let j = 0; j < edge; j++) {
    // left[j] corresponds to x[edge - j] mirrored; right[j] to x[n - 2 - j].
    const l = x[edge - j]!;
    const r = x[n - 2 - j]!;
    if (padType === 'odd') {
      left[j] = 2 * x0 - l;
      right[j] = 2 * xn - r;
    } else if (padType === 'even') {
      left[j] = l;
      right[j] = r;
    } else {
      left[j] = x0;
      right[j] = xn;
    }
  }
}

function tooShort(fn: string, n: number, padLen: number): TuningforkError {
  return new TuningforkError(
    'TF_TOO_FEW_SAMPLES',
    `${fn}: the input has ${n} samples but zero-phase filtering with padLen ${padLen} needs more than ${padLen}. Use a longer input, a lower order, or a smaller padLen.`,
    { fn, n, padLen },
  );
}

/**
 * Build a reusable zero-phase (forward–backward) filter from second-order sections.
 *
 * `plan.apply(x, out)` gives exactly scipy.signal.sosfiltfilt(sos, x, padtype, padlen) while
 * allocating only the two pad buffers once. Extensions are held separately, so no padded copy of
 * the (possibly long) input is made; `out` may alias `x` for in-place filtering.
 *
 * @throws {TuningforkError} TF_BAD_OPTION, TF_UNKNOWN_OPTION (options), TF_SHAPE_MISMATCH (sections).
 * @example
 * ```ts
 * const lp = zeroPhasePlan(butterworth({ order: 4, cutoffHz: 10, sampleRate: 1000 }));
 * const y = lp.apply(x);
 * ```
 */
export function zeroPhasePlan(sos: SosInput, options: ZeroPhaseOptions = {}): ZeroPhasePlan {
  const fn = 'zeroPhasePlan';
  const s = toSos(fn, sos);
  let zb = 0;
  let za = 0;
  for (let k = 0; k < s.nSections; k++) {
    if (s.sos[k * 6 + 2] === 0) zb++;
    if (s.sos[k * 6 + 5] === 0) za++;
  }
  const { padType, padLen } = resolvePad(fn, options, 3 * (2 * s.nSections + 1 - Math.min(zb, za)));
  const zi0 = sosfiltZiRaw(s.sos, s.nSections);
  const state = new Float64Array(2 * s.nSections);
  const left = new Float64Array(padLen);
  const right = new Float64Array(padLen);
  return {
    padLen,
    padType,
    apply(x: Float64Array, out?: Float64Array): Float64Array {
      const n = x.length;
      if (n <= padLen) throw tooShort('sosfiltfilt', n, padLen);
      requireFinite('sosfiltfilt', 'x', x);
      return this.applyUnchecked(x, out);
    },
    applyUnchecked(x: Float64Array, out?: Float64Array): Float64Array {
      const n = x.length;
      const y = out ?? new Float64Array(n);
      if (y.length !== n) throw new TuningforkError('TF_SHAPE_MISMATCH', `sosfiltfilt: out has length ${y.length}, expected ${n}.`, { length: y.length, expected: n });
      if (padLen > 0) extensions(x, padLen, padType, left, right);
      const first = padLen > 0 ? left[0]! : x[0]!;
      for (let k = 0; k < state.length; k++) state[k] = zi0[k]! * first;
      if (padLen > 0) sosForward(s.sos, s.nSections, left, 0, padLen, state);
      sosForward(s.sos, s.nSections, y, 0, n, state, x);
      if (padLen > 0) sosForward(s.sos, s.nSections, right, 0, padLen, state);
      const last = padLen > 0 ? right[padLen - 1]! : y[n - 1]!;
      for (let k = 0; k < state.length; k++) state[k] = zi0[k]! * last;
      if (padLen > 0) sosBackward(s.sos, s.nSections, right, 0, padLen, state);
      sosBackward(s.sos, s.nSections, y, 0, n, state);
      return y;
    },
  };
}

/**
 * Zero-phase filtering with second-order sections (scipy.signal.sosfiltfilt, method 'pad').
 *
 * Extends x at both ends (padType, padLen), filters forward from the steady state `zi·ext[0]`,
 * filters the result backward from `zi·y[last]`, and strips the pads. The magnitude response is
 * squared (0.5 at a Butterworth cutoff) and the phase is zero. Edges remain affected for a few
 * time constants whatever the padding.
 *
 * @param sos - Sections (e.g. `butterworth(...)`).
 * @param x - Samples (finite). NaN is refused: split gapped data with {@link filterSignal}.
 * @returns Filtered samples, same length.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES when x.length ≤ padLen (length 15 with a 4th-order
 *   filter fails, 16 works); TF_NON_FINITE with the first bad index; TF_BAD_OPTION.
 * @example
 * ```ts
 * const y = sosfiltfilt(butterworth({ order: 4, cutoffHz: 20, sampleRate: 1000 }), x);
 * ```
 *
 * References
 * - Gustafsson, F. (1996). Determining the initial states in forward-backward filtering.
 *   IEEE Trans. Signal Process. 44(4):988–992. doi:10.1109/78.492552
 */
export function sosfiltfilt(sos: SosInput, x: ArrayLike<number>, options: ZeroPhaseOptions = {}): Float64Array {
  const xx = asF64('sosfiltfilt', 'x', x);
  return zeroPhasePlan(sos, options).apply(xx);
}

/**
 * Zero-phase filtering with a transfer function (scipy.signal.filtfilt, method 'pad').
 *
 * As {@link sosfiltfilt} but for (b, a); the default pad is 3·max(len a, len b). Prefer sections
 * for orders above about 4.
 *
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES, TF_NON_FINITE, TF_BAD_OPTION.
 */
export function filtfilt(b: ArrayLike<number>, a: ArrayLike<number>, x: ArrayLike<number>, options: ZeroPhaseOptions = {}): Float64Array {
  const fn = 'filtfilt';
  const ntaps = Math.max(b.length, a.length);
  const tf = normaliseTf(fn, b, a);
  const { padType, padLen } = resolvePad(fn, options, 3 * ntaps);
  const xx = asF64(fn, 'x', x);
  const n = xx.length;
  if (n <= padLen) throw tooShort(fn, n, padLen);
  requireFinite(fn, 'x', xx);
  const zi0 = lfilterZiRaw(tf.b, tf.a);
  const state = new Float64Array(zi0.length);
  const left = new Float64Array(padLen);
  const right = new Float64Array(padLen);
  if (padLen > 0) extensions(xx, padLen, padType, left, right);
  const y = Float64Array.from(xx);
  const first = padLen > 0 ? left[0]! : y[0]!;
  for (let k = 0; k < state.length; k++) state[k] = zi0[k]! * first;
  if (padLen > 0) tfInPlace(tf.b, tf.a, left, 0, padLen, state, 1);
  tfInPlace(tf.b, tf.a, y, 0, n, state, 1);
  if (padLen > 0) tfInPlace(tf.b, tf.a, right, 0, padLen, state, 1);
  const last = padLen > 0 ? right[padLen - 1]! : y[n - 1]!;
  for (let k = 0; k < state.length; k++) state[k] = zi0[k]! * last;
  if (padLen > 0) tfInPlace(tf.b, tf.a, right, 0, padLen, state, -1);
  tfInPlace(tf.b, tf.a, y, 0, n, state, -1);
  return y;
}

import { TuningforkError, formatValue, resolveOptions } from '@tuningfork/core';
import { solveRefined } from '../internal/refine.js';
import { sosForward, tfInPlace } from '../internal/sos-kernel.js';
import { toSos } from '../internal/sos-input.js';
import type { SosInput } from '../internal/sos-input.js';
import { asF64, requireFinite } from '../internal/validate.js';

/** Options of {@link sosfilt} and {@link lfilter}. */
export interface IirFilterOptions {
  /**
   * Initial state: 2 values per section for `sosfilt` (row-major nSections × 2), max(len a, len b) − 1
   * values for `lfilter`; null starts from rest (zeros). Scale {@link sosfiltZi}/{@link lfilterZi}
   * by the first sample to start in steady state. @defaultValue null
   */
  zi?: ArrayLike<number> | null;
}

/** Output of a causal IIR pass. */
export interface IirFilterResult {
  /** Filtered samples, same length as the input. */
  readonly y: Float64Array;
  /** Final state (same layout as `zi`), to continue filtering a following block. */
  readonly state: Float64Array;
}

const DEFAULTS = Object.freeze({ zi: null });

/**
 * Causal filtering through cascaded second-order sections (scipy.signal.sosfilt).
 *
 * Each section runs in direct form II transposed: `y = b0·x + z0; z0 = b1·x − a1·y + z1;
 * z1 = b2·x − a2·y`, with the same operation order as scipy, so results agree to rounding.
 *
 * @param sos - Sections ({@link IirFilter}, n × 6 Matrix or flat array), a0 = 1 in each.
 * @param x - Input samples (finite).
 * @returns `{ y, state }`.
 * @throws {TuningforkError} TF_NON_FINITE naming the first NaN/Infinity index (filters do not
 *   propagate gaps; split the data at gaps with {@link filterSignal}); TF_SHAPE_MISMATCH for a zi
 *   of the wrong length.
 */
export function sosfilt(sos: SosInput, x: ArrayLike<number>, options: IirFilterOptions = {}): IirFilterResult {
  const fn = 'sosfilt';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const s = toSos(fn, sos);
  const xx = asF64(fn, 'x', x);
  requireFinite(fn, 'x', xx);
  const state = opts.zi === null ? new Float64Array(2 * s.nSections) : Float64Array.from(asF64(fn, 'zi', opts.zi, 2 * s.nSections));
  requireFinite(fn, 'zi', state);
  const y = Float64Array.from(xx);
  sosForward(s.sos, s.nSections, y, 0, y.length, state);
  return { y, state };
}

/** Normalise (b, a) by a[0] and zero-pad to a common length (scipy lfilter conventions). */
export function normaliseTf(fn: string, b: ArrayLike<number>, a: ArrayLike<number>): { b: Float64Array; a: Float64Array } {
  const bb = asF64(fn, 'b', b);
  let aa = asF64(fn, 'a', a);
  requireFinite(fn, 'b', bb);
  requireFinite(fn, 'a', aa);
  let lead = 0;
  while (lead < aa.length - 1 && aa[lead] === 0) lead++;
  aa = aa.subarray(lead);
  if (aa.length === 0 || aa[0] === 0 || bb.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: a must have a non-zero leading coefficient and b at least one coefficient, got a = ${formatValue(Array.from(a))}.`, { fn });
  }
  const m = Math.max(aa.length, bb.length);
  const bn = new Float64Array(m);
  const an = new Float64Array(m);
  const a0 = aa[0]!;
  for (let i = 0; i < bb.length; i++) bn[i] = a0 === 1 ? bb[i]! : bb[i]! / a0;
  for (let i = 0; i < aa.length; i++) an[i] = a0 === 1 ? aa[i]! : aa[i]! / a0;
  return { b: bn, a: an };
}

/**
 * Causal filtering by a transfer function b(z)/a(z) in direct form II transposed (scipy.signal.lfilter).
 *
 * Coefficients are divided by a[0]. For orders above about 4, or cutoffs far below Nyquist,
 * prefer second-order sections ({@link sosfilt}): the (b, a) form loses precision.
 *
 * @throws {TuningforkError} TF_NON_FINITE (first bad index named), TF_SHAPE_MISMATCH, TF_BAD_OPTION (a[0] = 0).
 */
export function lfilter(b: ArrayLike<number>, a: ArrayLike<number>, x: ArrayLike<number>, options: IirFilterOptions = {}): IirFilterResult {
  const fn = 'lfilter';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const tf = normaliseTf(fn, b, a);
  const xx = asF64(fn, 'x', x);
  requireFinite(fn, 'x', xx);
  const m = tf.b.length;
  const state = opts.zi === null ? new Float64Array(m - 1) : Float64Array.from(asF64(fn, 'zi', opts.zi, m - 1));
  requireFinite(fn, 'zi', state);
  const y = Float64Array.from(xx);
  tfInPlace(tf.b, tf.a, y, 0, y.length, state, 1);
  return { y, state };
}

/** Steady-state initial conditions of a normalised (b, a) for a unit step (no validation). */
export function lfilterZiRaw(b: Float64Array, a: Float64Array): Float64Array {
  const n = b.length;
  if (n <= 1) return new Float64Array(0);
  const m = n - 1;
  // I − companion(a)ᵀ: companion(a)ᵀ has −a[1:] in column 0 and ones on the superdiagonal.
  const A = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    A[i * m + i] = 1;
    A[i * m + 0] = A[i * m + 0]! + a[i + 1]!;
    if (i + 1 < m) A[i * m + i + 1] = A[i * m + i + 1]! - 1;
  }
  const B = new Float64Array(m);
  for (let i = 0; i < m; i++) B[i] = b[i + 1]! - a[i + 1]! * b[0]!;
  return solveRefined(A, m, B);
}

/**
 * Initial state of {@link lfilter} for the steady state of a unit step (scipy.signal.lfilter_zi).
 *
 * Solves `(I − Aᵀ)·zi = b[1:] − a[1:]·b[0]` with A the companion matrix of a, by LU with partial
 * pivoting and iterative refinement in doubled precision (the system is ill-conditioned for
 * high-order or narrow-band filters). Multiply by the first input sample to start a filter
 * without a transient.
 *
 * @throws {TuningforkError} TF_FIT_FAILED when the filter has a pole at z = 1 (no steady state).
 *
 * References
 * - Gustafsson, F. (1996). Determining the initial states in forward-backward filtering.
 *   IEEE Trans. Signal Process. 44(4):988–992. doi:10.1109/78.492552
 */
export function lfilterZi(b: ArrayLike<number>, a: ArrayLike<number>): Float64Array {
  const tf = normaliseTf('lfilterZi', b, a);
  return lfilterZiRaw(tf.b, tf.a);
}

/** Unit-step steady-state initial state of second-order sections (no validation). */
export function sosfiltZiRaw(sos: Float64Array, nSections: number): Float64Array {
  const zi = new Float64Array(2 * nSections);
  let scale = 1;
  for (let s = 0; s < nSections; s++) {
    const o = s * 6;
    const b = sos.subarray(o, o + 3);
    const a = sos.subarray(o + 3, o + 6);
    const z = lfilterZiRaw(b, a);
    zi[2 * s] = scale * z[0]!;
    zi[2 * s + 1] = scale * z[1]!;
    scale *= (b[0]! + b[1]! + b[2]!) / (a[0]! + a[1]! + a[2]!);
  }
  return zi;
}

/**
 * Initial state of {@link sosfilt} for the steady state of a unit step (scipy.signal.sosfilt_zi).
 *
 * Each section's state is its own `lfilterZi`, scaled by the DC gain of the sections before it.
 * Layout: row-major nSections × 2.
 *
 * @throws {TuningforkError} TF_BAD_OPTION / TF_SHAPE_MISMATCH for malformed sections.
 */
export function sosfiltZi(sos: SosInput): Float64Array {
  const s = toSos('sosfiltZi', sos);
  return sosfiltZiRaw(s.sos, s.nSections);
}

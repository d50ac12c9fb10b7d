import { TuningforkError, checkInteger, checkOneOf, checkPositive, checkSampleRate, resolveOptions } from '@tuningfork/core';
import { butterPrototype, cheby1Prototype, digitalDesign, zpkToSos, zpkToTf } from '../internal/iir-design.js';
import type { BandType, Zpk } from '../internal/iir-design.js';

/** Pass band of an IIR design. */
export type FilterType = BandType;

/**
 * A digital IIR filter in two equivalent forms: second-order sections (preferred for filtering)
 * and the transfer function (b, a).
 */
export interface IirFilter {
  /** Design family. */
  readonly family: 'butterworth' | 'chebyshev1';
  readonly type: FilterType;
  /** Filter order N (band-pass designs have 2N poles). */
  readonly order: number;
  /** Cutoff(s) in Hz: one for low/high-pass, [low, high] for band-pass. */
  readonly cutoffHz: readonly number[];
  /** Sample rate the design is for, Hz. */
  readonly sampleRate: number;
  /**
   * Second-order sections, row-major nSections × 6: `[b0, b1, b2, 1, a1, a2]` per row, in
   * scipy's order (sections with poles nearest the unit circle last; overall gain in row 0).
   */
  readonly sos: Float64Array;
  readonly nSections: number;
  /** Transfer-function numerator and denominator (highest power first, a[0] = 1). */
  readonly b: Float64Array;
  readonly a: Float64Array;
  /**
   * Pad length used by zero-phase filtering by default: `3·(2·nSections + 1 − min(#b2 = 0, #a2 = 0))`
   * (scipy `sosfiltfilt`; equals `3·max(len(a), len(b))` of `filtfilt`).
   */
  readonly padLen: number;
}

/** Options of {@link butterworth}. `cutoffHz` and `sampleRate` are required. */
export interface ButterworthOptions {
  /** Filter order, 1–8 (band-pass: order per band edge, as scipy). @defaultValue 4 */
  order?: number;
  /** Cutoff in Hz (−3 dB point of a single pass); `[lowHz, highHz]` for 'bandpass'. Required. */
  cutoffHz?: number | readonly [number, number];
  /** Sample rate in Hz. Pass 2 to give cutoffs as fractions of Nyquist (scipy without `fs`). Required. */
  sampleRate?: number;
  /** Pass band. @defaultValue 'lowpass' */
  type?: FilterType;
}

/** Options of {@link chebyshev1}. */
export interface Chebyshev1Options extends ButterworthOptions {
  /** Peak-to-peak pass-band ripple, dB. @defaultValue 0.05 */
  rippleDb?: number;
}

const BUTTER_DEFAULTS = Object.freeze({ order: 4, cutoffHz: undefined, sampleRate: undefined, type: 'lowpass' } as const);
const CHEBY_DEFAULTS = Object.freeze({ ...BUTTER_DEFAULTS, rippleDb: 0.05 } as const);

const MAX_ORDER = 8;

function normalised(fn: string, type: FilterType, cutoff: unknown, sampleRate: number): number[] {
  const nyq = sampleRate / 2;
  const raw = type === 'bandpass' ? cutoff : [cutoff];
  const list = Array.isArray(raw) || raw instanceof Float64Array ? Array.from(raw as ArrayLike<unknown>) : null;
  if (list === null || list.length !== (type === 'bandpass' ? 2 : 1)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: cutoffHz must be ${type === 'bandpass' ? 'a pair [lowHz, highHz]' : 'a single number of Hz'} for type '${type}', got ${JSON.stringify(cutoff)}.`, { fn, option: 'cutoffHz' });
  }
  const out = list.map((c: unknown, i: number) => {
    checkPositive(fn, `cutoffHz${type === 'bandpass' ? `[${i}]` : ''}`, c);
    const w = (c as number) / nyq;
    if (!(w > 0 && w < 1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: cutoffHz ${String(c)} must lie strictly between 0 and the Nyquist frequency ${nyq} Hz (sampleRate ${sampleRate} Hz).`, { fn, option: 'cutoffHz', value: c, nyquist: nyq });
    }
    return w;
  });
  if (out.length === 2 && !(out[0]! < out[1]!)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: cutoffHz must be [lowHz, highHz] with lowHz < highHz, got ${JSON.stringify(cutoff)}.`, { fn, option: 'cutoffHz' });
  }
  return out;
}

function finish(family: IirFilter['family'], type: FilterType, order: number, cutoffHz: readonly number[], sampleRate: number, zpk: Zpk): IirFilter {
  const { sos, nSections } = zpkToSos(zpk);
  const { b, a } = zpkToTf(zpk);
  let zb = 0;
  let za = 0;
  for (let s = 0; s < nSections; s++) {
    if (sos[s * 6 + 2] === 0) zb++;
    if (sos[s * 6 + 5] === 0) za++;
  }
  const padLen = 3 * (2 * nSections + 1 - Math.min(zb, za));
  return Object.freeze({ family, type, order, cutoffHz: Object.freeze([...cutoffHz]), sampleRate, sos, nSections, b, a, padLen });
}

function common(fn: string, opts: { order: unknown; cutoffHz: unknown; sampleRate: unknown; type: unknown }): { order: number; type: FilterType; wn: number[]; cutoffHz: number[]; sampleRate: number } {
  const order = checkInteger(fn, 'order', opts.order, 1, MAX_ORDER);
  const type = checkOneOf(fn, 'type', opts.type, ['lowpass', 'highpass', 'bandpass'] as const);
  if (opts.sampleRate === undefined) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: sampleRate (Hz) is required.`, { fn, option: 'sampleRate' });
  }
  const sampleRate = checkSampleRate(fn, opts.sampleRate);
  if (opts.cutoffHz === undefined) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: cutoffHz is required.`, { fn, option: 'cutoffHz' });
  }
  const wn = normalised(fn, type, opts.cutoffHz, sampleRate);
  const cutoffHz = type === 'bandpass' ? Array.from(opts.cutoffHz as ArrayLike<number>) : [opts.cutoffHz as number];
  return { order, type, wn, cutoffHz, sampleRate };
}

/**
 * Design a digital Butterworth low-, high- or band-pass filter.
 *
 * Follows scipy.signal.butter exactly: analog prototype poles `−exp(iπm/2N)`, pre-warped
 * cutoff `4·tan(π·Wn/2)` with `Wn = cutoffHz/(sampleRate/2)`, low/high/band-pass transform,
 * bilinear transform, then second-order sections paired and ordered as `zpk2sos(…, pairing='nearest')`.
 * Results agree with `butter(N, Wn, btype, output='sos')` and `output='ba'` to rounding error.
 * A single pass has gain 1/√2 (−3 dB) at the cutoff; a zero-phase pass squares it (0.5).
 *
 * @param options - `{ order (1–8), cutoffHz, sampleRate, type }`.
 * @returns The filter as second-order sections and as (b, a), plus its default zero-phase pad length.
 * @throws {TuningforkError} TF_BAD_OPTION for an order outside 1–8 or a cutoff not in (0, Nyquist);
 *   TF_BAD_SAMPLE_RATE; TF_UNKNOWN_OPTION.
 * @example
 * ```ts
 * const lp = butterworth({ order: 4, cutoffHz: 10, sampleRate: 1000 });
 * lp.sos.subarray(6, 12); // [1, 2, 1, 1, -1.9492159580, 0.9530698953]
 * ```
 *
 * Method: Butterworth (1930) maximally flat magnitude response; bilinear transform with
 * frequency pre-warping (Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., §7.1).
 *
 * References
 * - Butterworth, S. (1930). On the theory of filter amplifiers. Wireless Engineer 7:536–541.
 * - Oppenheim, A. V. & Schafer, R. W. (2010). Discrete-Time Signal Processing, 3rd ed. Pearson.
 */
export function butterworth(options: ButterworthOptions): IirFilter {
  const fn = 'butterworth';
  const opts = resolveOptions(fn, BUTTER_DEFAULTS, options);
  const c = common(fn, opts);
  return finish('butterworth', c.type, c.order, c.cutoffHz, c.sampleRate, digitalDesign(butterPrototype(c.order), c.type, c.wn));
}

/**
 * Design a digital Chebyshev type I filter (equiripple pass band), as scipy.signal.cheby1.
 *
 * Same path as {@link butterworth} with the Chebyshev I prototype: ε = √(10^(rp/10) − 1),
 * μ = asinh(1/ε)/N, poles −sinh(μ + iπm/2N); even orders are scaled to −rp dB at DC. Here
 * `cutoffHz` is the pass-band edge where the gain leaves the ripple band (not −3 dB).
 *
 * @throws {TuningforkError} TF_BAD_OPTION, TF_BAD_SAMPLE_RATE, TF_UNKNOWN_OPTION.
 *
 * References
 * - Parks, T. W. & Burrus, C. S. (1987). Digital Filter Design, ch. 7. Wiley.
 */
export function chebyshev1(options: Chebyshev1Options): IirFilter {
  const fn = 'chebyshev1';
  const opts = resolveOptions(fn, CHEBY_DEFAULTS, options);
  const c = common(fn, opts);
  const rp = checkPositive(fn, 'rippleDb', opts.rippleDb);
  return finish('chebyshev1', c.type, c.order, c.cutoffHz, c.sampleRate, digitalDesign(cheby1Prototype(c.order, rp), c.type, c.wn));
}

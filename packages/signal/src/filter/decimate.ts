import { TuningforkError, checkBoolean, checkInteger, checkOneOf, checkPositive, resolveOptions } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';
import { sosForward } from '../internal/sos-kernel.js';
import { checkUniform, requireFinite } from '../internal/validate.js';
import { chebyshev1 } from './design.js';
import { zeroPhasePlan } from './zero-phase.js';

/** Options of {@link decimate}. */
export interface DecimateOptions {
  /** Order of the Chebyshev I anti-alias filter. @defaultValue 8 */
  order?: number;
  /** Its pass-band ripple, dB. @defaultValue 0.05 */
  rippleDb?: number;
  /** Forward–backward (zero-phase) anti-alias filtering; false = one causal pass from rest (scipy `zero_phase=False`). @defaultValue true */
  zeroPhase?: boolean;
  /**
   * 'auto' splits a factor above 13 into stages of at most 13 (each stage exactly as scipy); 'single'
   * applies one stage whatever the factor (scipy's behaviour, unstable for large factors). @defaultValue 'auto'
   */
  stages?: 'auto' | 'single';
}

const DEFAULTS = Object.freeze({ order: 8, rippleDb: 0.05, zeroPhase: true, stages: 'auto' } as const);

function stagesOf(q: number): number[] {
  if (q <= 13) return [q];
  const factors: number[] = [];
  let r = q;
  for (let f = 13; f >= 2 && r > 1; f--) {
    while (r % f === 0 && r > 1) {
      factors.push(f);
      r /= f;
    }
  }
  if (r !== 1) return [];
  // Merge small factors while the product stays ≤ 13.
  factors.sort((a, b) => b - a);
  const merged: number[] = [];
  for (const f of factors) {
    const i = merged.findIndex((m) => m * f <= 13);
    if (i >= 0) merged[i] = merged[i]! * f;
    else merged.push(f);
  }
  return merged.sort((a, b) => b - a);
}

/**
 * Downsample by an integer factor after an anti-alias filter (scipy.signal.decimate, IIR).
 *
 * Designs `cheby1(order, rippleDb, 0.8/q)` (cutoff at 0.8 of the new Nyquist frequency), filters
 * zero-phase with {@link sosfiltfilt} (default padding), and keeps every q-th sample from sample
 * 0. The output starts at the same t0 and has rate sampleRate/q. For q ≤ 13 (or stages 'single')
 * the result equals `scipy.signal.decimate(x, q)`; larger factors are split into stages of ≤ 13
 * (each prime factor must then be ≤ 13). Zero-phase filtering doubles the ripple (≈ 1 %).
 *
 * @param signal - Input (finite values).
 * @param factor - Integer q ≥ 1 (1 returns a copy).
 * @throws {TuningforkError} TF_BAD_OPTION (factor not an integer ≥ 1, or a prime factor > 13 with
 *   stages 'auto'), TF_NON_FINITE (first NaN index and time), TF_TOO_FEW_SAMPLES (input not longer
 *   than the filter's pad length, 27 samples for order 8).
 */
export function decimate(signal: UniformSignal, factor: number, options: DecimateOptions = {}): UniformSignal {
  const fn = 'decimate';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const q = checkInteger(fn, 'factor', factor, 1);
  const order = checkInteger(fn, 'order', opts.order, 1, 8);
  const ripple = checkPositive(fn, 'rippleDb', opts.rippleDb);
  const zeroPhase = checkBoolean(fn, 'zeroPhase', opts.zeroPhase);
  const stageMode = checkOneOf(fn, 'stages', opts.stages, ['auto', 'single'] as const);
  requireFinite(fn, 'signal.values', signal.values, signal);
  const stages = stageMode === 'single' ? [q] : stagesOf(q);
  if (stages.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: factor ${q} has a prime factor above 13, so it cannot be split into stable stages. Choose a factor whose prime factors are ≤ 13, or pass { stages: 'single' }.`, { fn, factor: q });
  }
  let x = signal.values;
  let rate = signal.sampleRate;
  for (const s of stages) {
    if (s === 1) {
      x = Float64Array.from(x);
      continue;
    }
    const design = chebyshev1({ order, rippleDb: ripple, cutoffHz: 0.8 / s, sampleRate: 2 });
    let y: Float64Array;
    if (zeroPhase) {
      y = zeroPhasePlan(design).apply(x);
    } else {
      y = Float64Array.from(x);
      sosForward(design.sos, design.nSections, y, 0, y.length, new Float64Array(2 * design.nSections));
    }
    const m = Math.ceil(y.length / s);
    const d = new Float64Array(m);
    for (let k = 0; k < m; k++) d[k] = y[k * s]!;
    x = d;
    rate /= s;
  }
  return { values: x, sampleRate: rate, t0: signal.t0 };
}

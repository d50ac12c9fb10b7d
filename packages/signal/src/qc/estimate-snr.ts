import { TuningforkError, checkPositive, resolveOptions } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';
import { butterworth } from '../filter/design.js';
import { zeroPhasePlan } from '../filter/zero-phase.js';
import { medianOf } from '../internal/select.js';
import { checkUniform, requireFinite } from '../internal/validate.js';
import { MAD_TO_SD } from '../correction/z-score.js';

/** Options of {@link estimateSnr}. */
export interface SnrOptions {
  /** Signal band [low, high], Hz. @defaultValue [0.1, 3] */
  bandHz?: readonly [number, number];
  /** Noise = residual above this frequency, Hz. @defaultValue 5 */
  noiseAboveHz?: number;
}

/** Result of {@link estimateSnr}. */
export interface SnrEstimate {
  /** sd(band-passed) / (1.4826·MAD(high-passed)). */
  readonly snr: number;
  readonly signalSd: number;
  readonly noiseSd: number;
}

/** Noise sd at or below this fraction of max|x| is rounding residue, not noise. */
const NOISE_FLOOR = 1e-12;

const DEFAULTS = Object.freeze({ bandHz: [0.1, 3] as readonly [number, number], noiseAboveHz: 5 });

/**
 * Signal-to-noise ratio of a photometry channel (SIGNALS.md §1.8; common practice, no source):
 * the standard deviation of the 0.1–3 Hz band (where sensor transients live) over a robust
 * standard deviation (1.4826·MAD) of everything above 5 Hz. Both filters are zero-phase
 * Butterworth (band-pass order 2, high-pass order 4).
 *
 * A trace with no measurable noise above `noiseAboveHz` (robust noise sd ≤ 1e-12·max|x|: a
 * constant, piecewise-linear or noise-free synthetic channel, or a dead one) has no defined SNR:
 * the ratio would be rounding error over rounding error (NaN, ±Infinity or ~10¹³), so it throws.
 *
 * @throws {TuningforkError} TF_NON_FINITE, TF_BAD_OPTION (bands above Nyquist), TF_TOO_FEW_SAMPLES,
 *   TF_DEGENERATE_SIGNAL (no measurable noise, see above).
 */
export function estimateSnr(signal: UniformSignal, options: SnrOptions = {}): SnrEstimate {
  const fn = 'estimateSnr';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const band = opts.bandHz;
  if (!Array.isArray(band) || band.length !== 2) throw new TuningforkError('TF_BAD_OPTION', `${fn}: bandHz must be [low, high].`, { fn });
  const noiseHz = checkPositive(fn, 'noiseAboveHz', opts.noiseAboveHz);
  requireFinite(fn, 'signal.values', signal.values, signal);
  const fs = signal.sampleRate;
  const bp = butterworth({ order: 2, type: 'bandpass', cutoffHz: [band[0], band[1]], sampleRate: fs });
  const hp = butterworth({ order: 4, type: 'highpass', cutoffHz: noiseHz, sampleRate: fs });
  const x = signal.values;
  const yb = zeroPhasePlan(bp).apply(x);
  let m = 0;
  for (let i = 0; i < yb.length; i++) m += yb[i]!;
  m /= yb.length;
  let ss = 0;
  for (let i = 0; i < yb.length; i++) ss += (yb[i]! - m) * (yb[i]! - m);
  const signalSd = Math.sqrt(ss / yb.length);
  const yh = zeroPhasePlan(hp).apply(x, yb);
  const med = medianOf(yh);
  for (let i = 0; i < yh.length; i++) yh[i] = Math.abs(yh[i]! - med);
  const noiseSd = MAD_TO_SD * medianOf(yh);
  let maxAbs = 0;
  for (let i = 0; i < x.length; i++) maxAbs = Math.max(maxAbs, Math.abs(x[i]!));
  // Filtering leaves rounding residue of order 1e-16·max|x|; a noise floor within 1e-12 of it
  // (far below any detector's noise) means there is nothing to measure.
  if (!(noiseSd > NOISE_FLOOR * maxAbs)) {
    throw new TuningforkError(
      'TF_DEGENERATE_SIGNAL',
      `${fn}: signal has no measurable noise above ${noiseHz} Hz (robust sd ${noiseSd} against max|x| = ${maxAbs}); the SNR is undefined for a constant, noise-free or dead channel.`,
      { fn, parameter: 'signal', noiseSd, maxAbs },
    );
  }
  return { snr: signalSd / noiseSd, signalSd, noiseSd };
}

import { TuningforkError, checkNonNegative, checkPositive, resolveOptions } from '@tuningfork/core';
import { medianInPlace } from '../internal/select.js';
import type { PowerSpectrum } from './welch.js';

/** Options of {@link findSpectralPeaks}. */
export interface SpectralPeakOptions {
  /** Minimum height over the local median, dB. @defaultValue 10 */
  minProminenceDb?: number;
  /** Half-width of the neighbourhood whose median is the local floor, Hz. @defaultValue 5 */
  neighbourhoodHz?: number;
  /** Ignore peaks below this frequency (the 1/f rise near DC), Hz. @defaultValue 0.5 */
  minHz?: number;
}

/** A narrow-band peak of a power spectrum. */
export interface SpectralPeak {
  readonly frequencyHz: number;
  readonly power: number;
  /** 10·log10(power / local median), dB. */
  readonly prominenceDb: number;
}

const DEFAULTS = Object.freeze({ minProminenceDb: 10, neighbourhoodHz: 5, minHz: 0.5 } as const);

/**
 * Narrow-band peaks of a spectrum: local maxima standing more than `minProminenceDb` above the
 * median power of the bins within ±neighbourhoodHz (heartbeat, mains 50/60 Hz and harmonics, frame
 * rates). Thresholds are common practice. Sorted by prominence, largest first.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when frequencies and power differ in length.
 */
export function findSpectralPeaks(spectrum: Pick<PowerSpectrum, 'frequencies' | 'power'>, options: SpectralPeakOptions = {}): SpectralPeak[] {
  const fn = 'findSpectralPeaks';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const minDb = checkNonNegative(fn, 'minProminenceDb', opts.minProminenceDb);
  const half = checkPositive(fn, 'neighbourhoodHz', opts.neighbourhoodHz);
  const minHz = checkNonNegative(fn, 'minHz', opts.minHz);
  const f = spectrum.frequencies;
  const p = spectrum.power;
  if (f.length !== p.length) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${f.length} frequencies but ${p.length} power values.`, { fn });
  const n = p.length;
  const peaks: SpectralPeak[] = [];
  if (n < 3) return peaks;
  const df = f[1]! - f[0]!;
  const w = Math.max(2, Math.round(half / df));
  const buf = new Float64Array(2 * w + 1);
  for (let k = 1; k < n - 1; k++) {
    if (f[k]! < minHz) continue;
    if (!(p[k]! > p[k - 1]! && p[k]! >= p[k + 1]!)) continue;
    const a = Math.max(0, k - w);
    const b = Math.min(n - 1, k + w);
    let m = 0;
    for (let j = a; j <= b; j++) buf[m++] = p[j]!;
    const med = medianInPlace(buf, m);
    const db = 10 * Math.log10(p[k]! / med);
    if (db > minDb) peaks.push({ frequencyHz: f[k]!, power: p[k]!, prominenceDb: db });
  }
  return peaks.sort((x, y) => y.prominenceDb - x.prominenceDb);
}

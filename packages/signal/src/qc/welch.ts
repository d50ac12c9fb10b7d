import { TuningforkError, checkInteger, checkOneOf, resolveOptions } from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { realDft } from '../internal/fft.js';
import { medianInPlace } from '../internal/select.js';
import { checkUniform, requireFinite } from '../internal/validate.js';

/** Options of {@link welch} (defaults are scipy.signal.welch's). */
export interface WelchOptions {
  /** Samples per segment (scipy `nperseg`); shortened to the input length when longer. @defaultValue 256 */
  segmentLength?: number;
  /** Samples shared by neighbouring segments; null = ⌊segmentLength/2⌋. @defaultValue null */
  overlap?: number | null;
  /** Taper (periodic form, as scipy `get_window`). @defaultValue 'hann' */
  window?: 'hann' | 'hamming' | 'boxcar';
  /** Per-segment detrending. @defaultValue 'constant' */
  detrend?: 'constant' | 'linear' | 'none';
  /** 'density' (units²/Hz) or 'spectrum' (units²). @defaultValue 'density' */
  scaling?: 'density' | 'spectrum';
  /** Segment average: 'mean', or 'median' with scipy's bias correction. @defaultValue 'mean' */
  average?: 'mean' | 'median';
}

/** One-sided power spectrum. */
export interface PowerSpectrum {
  /** Bin frequencies 0, Δf, …, Hz (Δf = sampleRate/segmentLength). */
  readonly frequencies: Float64Array;
  /** Power per bin (units²/Hz for 'density'). */
  readonly power: Float64Array;
  readonly segmentLength: number;
  readonly segments: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ segmentLength: 256, overlap: null, window: 'hann', detrend: 'constant', scaling: 'density', average: 'mean' } as const);

/** Periodic window exactly as scipy (general cosine evaluated on linspace(−π, π, M + 1)). */
function windowValues(kind: 'hann' | 'hamming' | 'boxcar', m: number): Float64Array {
  const w = new Float64Array(m);
  // scipy returns ones for M ≤ 1 (_len_guards); the cosine formula would give hann(1) = [0] (NaN power).
  if (kind === 'boxcar' || m <= 1) return w.fill(1);
  const alpha = kind === 'hann' ? 0.5 : 0.54;
  const step = (2 * Math.PI) / m; // linspace(−π, π, m + 1): step = 2π/m
  for (let i = 0; i < m; i++) {
    const fac = i * step + -Math.PI;
    w[i] = alpha + (1 - alpha) * Math.cos(fac);
  }
  return w;
}

function medianBias(n: number): number {
  let s = 1;
  for (let i = 1; 2 * i <= n - 1; i++) s += 1 / (2 * i + 1) - 1 / (2 * i);
  return s;
}

/**
 * Welch power spectral density estimate (scipy.signal.welch, one-sided).
 *
 * Splits the signal into segments of `segmentLength` samples stepping by segmentLength − overlap
 * (a trailing partial segment is ignored), detrends each, multiplies by the window, and averages
 * `|FFT|²/(fs·Σw²)` ('density') or `|FFT|²/(Σw)²` ('spectrum'), doubling all bins except DC and
 * Nyquist. Defaults equal scipy's: Hann (periodic), 256 samples, 50 % overlap, constant detrend,
 * mean average. White noise of variance σ² has density 2σ²/fs; ΣP·Δf equals the mean square.
 * FFTs use fft.js (Bluestein for lengths that are not powers of two).
 *
 * @param signal - Input; values must be finite.
 * @throws {TuningforkError} TF_NON_FINITE (first NaN index and time), TF_TOO_FEW_SAMPLES (empty
 *   input), TF_BAD_OPTION (overlap ≥ segmentLength).
 * @example
 * ```ts
 * // sin(2π·12.5 t), fs = 100, 1000 samples → peak 0.853333 at 12.5 Hz, ΣPΔf = 0.5
 * const { frequencies, power } = welch({ values: x, sampleRate: 100, t0: 0 });
 * ```
 *
 * References
 * - Welch, P. D. (1967). The use of fast Fourier transform for the estimation of power spectra.
 *   IEEE Trans. Audio Electroacoust. 15(2):70–73. doi:10.1109/TAU.1967.1161901
 */
export function welch(signal: UniformSignal, options: WelchOptions = {}): PowerSpectrum {
  const fn = 'welch';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const x = signal.values;
  const n = x.length;
  if (n === 0) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: the signal is empty.`, { fn });
  requireFinite(fn, 'signal.values', x, signal, 'Split the recording at gaps and estimate each part, or interpolate short gaps first.');
  const warnings: ResultWarning[] = [];
  let nper = checkInteger(fn, 'segmentLength', opts.segmentLength, 1);
  if (nper > n) {
    warnings.push({ code: 'SEGMENT_SHORTENED', message: `${fn}: segmentLength ${nper} exceeds the ${n} samples; using ${n}.`, details: { requested: nper, used: n } });
    nper = n;
  }
  const overlap = opts.overlap === null ? nper >> 1 : checkInteger(fn, 'overlap', opts.overlap, 0);
  if (overlap >= nper) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: overlap (${overlap}) must be smaller than segmentLength (${nper}).`, { fn, overlap, segmentLength: nper });
  }
  const windowKind = checkOneOf(fn, 'window', opts.window, ['hann', 'hamming', 'boxcar'] as const);
  const detrend = checkOneOf(fn, 'detrend', opts.detrend, ['constant', 'linear', 'none'] as const);
  const scaling = checkOneOf(fn, 'scaling', opts.scaling, ['density', 'spectrum'] as const);
  const average = checkOneOf(fn, 'average', opts.average, ['mean', 'median'] as const);
  const fs = signal.sampleRate;
  const w = windowValues(windowKind, nper);
  let sw = 0;
  let sw2 = 0;
  for (let i = 0; i < nper; i++) {
    sw += w[i]!;
    sw2 += w[i]! * w[i]!;
  }
  const scale = scaling === 'density' ? 1 / (fs * sw2) : 1 / (sw * sw);
  const step = nper - overlap;
  const segments = Math.floor((n - nper) / step) + 1;
  const nb = (nper >> 1) + 1;
  const dft = realDft(nper);
  const seg = new Float64Array(nper);
  const acc = new Float64Array(nb);
  const all = average === 'median' ? new Float64Array(nb * segments) : null;
  // Linear detrend helpers: t centred on its mean.
  const tc = (nper - 1) / 2;
  let stt = 0;
  for (let i = 0; i < nper; i++) stt += (i - tc) * (i - tc);
  for (let s = 0; s < segments; s++) {
    const off = s * step;
    if (detrend === 'none') {
      for (let i = 0; i < nper; i++) seg[i] = x[off + i]! * w[i]!;
    } else {
      let mean = 0;
      for (let i = 0; i < nper; i++) mean += x[off + i]!;
      mean /= nper;
      let slope = 0;
      if (detrend === 'linear' && stt > 0) {
        let sxy = 0;
        for (let i = 0; i < nper; i++) sxy += (i - tc) * (x[off + i]! - mean);
        slope = sxy / stt;
      }
      for (let i = 0; i < nper; i++) seg[i] = (x[off + i]! - mean - slope * (i - tc)) * w[i]!;
    }
    const spec = dft.bins(seg);
    // One-sided: every bin but DC (and Nyquist for even nper) counts twice.
    const lastSingle = nper % 2 === 0 ? nb - 1 : nb;
    if (all) {
      for (let k = 0; k < nb; k++) {
        const re = spec[2 * k]!, im = spec[2 * k + 1]!;
        const p = (re * re + im * im) * scale;
        all[k * segments + s] = k > 0 && k !== lastSingle ? 2 * p : p;
      }
    } else {
      acc[0] = acc[0]! + (spec[0]! * spec[0]! + spec[1]! * spec[1]!) * scale;
      for (let k = 1; k < nb; k++) {
        const re = spec[2 * k]!, im = spec[2 * k + 1]!;
        const p = (re * re + im * im) * scale;
        acc[k] = acc[k]! + (k !== lastSingle ? p * 2 : p);
      }
    }
  }
  const power = new Float64Array(nb);
  if (all) {
    const bias = medianBias(segments);
    for (let k = 0; k < nb; k++) power[k] = medianInPlace(all.subarray(k * segments, (k + 1) * segments)) / bias;
  } else {
    for (let k = 0; k < nb; k++) power[k] = acc[k]! / segments;
  }
  const frequencies = new Float64Array(nb);
  for (let k = 0; k < nb; k++) frequencies[k] = (k * fs) / nper;
  return { frequencies, power, segmentLength: nper, segments, warnings };
}

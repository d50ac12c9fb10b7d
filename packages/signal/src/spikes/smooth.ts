import { TuningforkError, checkOneOf, checkPositive, checkFinite, resolveOptions } from '@tuningfork/core';
import { asF64 } from '../internal/validate.js';

/** Boundary handling of {@link gaussianSmooth} (scipy.ndimage modes). */
export type SmoothMode = 'constant' | 'reflect' | 'nearest' | 'mirror' | 'wrap';

/** Options of {@link gaussianSmooth}. */
export interface GaussianSmoothOptions {
  /**
   * Values beyond the ends: 'constant' (cval), 'reflect' (d c b a | a b c d | d c b a),
   * 'nearest', 'mirror' (d c b | a b c d | c b a), 'wrap'. 'reflect' is scipy's default but
   * duplicates spikes near the edges; prefer 'constant' on a padded window. @defaultValue 'constant'
   */
  mode?: SmoothMode;
  /** Value outside the data for 'constant'. @defaultValue 0 */
  cval?: number;
  /** Kernel radius in standard deviations: radius = ⌊truncate·σ + 0.5⌋ bins. @defaultValue 4 */
  truncate?: number;
}

const G_DEFAULTS = Object.freeze({ mode: 'constant', cval: 0, truncate: 4 } as const);

function mapIndex(i: number, n: number, mode: SmoothMode): number {
  if (i >= 0 && i < n) return i;
  switch (mode) {
    case 'nearest':
      return i < 0 ? 0 : n - 1;
    case 'wrap':
      return ((i % n) + n) % n;
    case 'reflect': {
      const p = 2 * n;
      const j = ((i % p) + p) % p;
      return j < n ? j : p - 1 - j;
    }
    case 'mirror': {
      if (n === 1) return 0;
      const p = 2 * n - 2;
      const j = ((i % p) + p) % p;
      return j < n ? j : p - j;
    }
    default:
      return -1;
  }
}

/** Normalised Gaussian weights for offsets −r … r (scipy `_gaussian_kernel1d`, order 0). */
export function gaussianKernel(sigma: number, radius: number): Float64Array {
  const w = new Float64Array(2 * radius + 1);
  const c = -0.5 / (sigma * sigma);
  let s = 0;
  for (let i = -radius; i <= radius; i++) {
    const v = Math.exp(c * i * i);
    w[i + radius] = v;
    s += v;
  }
  for (let i = 0; i < w.length; i++) w[i] = w[i]! / s;
  return w;
}

/**
 * Gaussian smoothing of a sampled series (scipy.ndimage.gaussian_filter1d, order 0).
 *
 * Correlates x with normalised weights exp(−k²/2σ²), k = −r … r, r = ⌊truncate·σ + 0.5⌋, using
 * the chosen boundary mode. To smooth binned spike counts into a rate, bin with
 * {@link binSpikes} (output 'rate') and pass σ in bins (σ_s / binSec); the area (Σ rate·Δ) is
 * preserved in 'constant' mode away from the edges. NaN propagates to every output within r bins.
 *
 * @param x - Samples.
 * @param sigmaBins - Standard deviation in samples (> 0).
 * @throws {TuningforkError} TF_BAD_OPTION for σ ≤ 0 or an unknown mode.
 * @example
 * ```ts
 * const imp = new Float64Array(41); imp[20] = 1;
 * gaussianSmooth(imp, 2)[20]; // 0.1994746479
 * ```
 */
export function gaussianSmooth(x: ArrayLike<number>, sigmaBins: number, options: GaussianSmoothOptions = {}): Float64Array {
  const fn = 'gaussianSmooth';
  const opts = resolveOptions(fn, G_DEFAULTS, options);
  const xx = asF64(fn, 'x', x);
  const sigma = checkPositive(fn, 'sigmaBins', sigmaBins);
  const mode = checkOneOf(fn, 'mode', opts.mode, ['constant', 'reflect', 'nearest', 'mirror', 'wrap'] as const);
  const cval = checkFinite(fn, 'cval', opts.cval);
  const truncate = checkPositive(fn, 'truncate', opts.truncate);
  const r = Math.floor(truncate * sigma + 0.5);
  const w = gaussianKernel(sigma, r);
  const n = xx.length;
  const y = new Float64Array(n);
  if (n === 0) return y;
  const at = (i: number): number => {
    const j = mapIndex(i, n, mode);
    return j < 0 ? cval : xx[j]!;
  };
  for (let i = 0; i < n; i++) {
    // Symmetric kernel: centre term, then pairs from the outermost in (ndimage's order).
    let s = xx[i]! * w[r]!;
    if (i - r >= 0 && i + r < n) {
      for (let k = r; k >= 1; k--) s += (xx[i - k]! + xx[i + k]!) * w[r + k]!;
    } else {
      for (let k = r; k >= 1; k--) s += (at(i - k) + at(i + k)) * w[r + k]!;
    }
    y[i] = s;
  }
  return y;
}

/** Options of {@link causalSmooth}. */
export interface CausalSmoothOptions {
  /** 'half-gaussian' (exp(−k²/2s²), k ≥ 0) or 'exponential' (exp(−k/s)). @defaultValue 'half-gaussian' */
  kernel?: 'half-gaussian' | 'exponential';
  /** Kernel length in scale units: radius = ⌊truncate·s + 0.5⌋ bins. @defaultValue 4 */
  truncate?: number;
}

const C_DEFAULTS = Object.freeze({ kernel: 'half-gaussian', truncate: 4 } as const);

/** Result of {@link causalSmooth}. */
export interface CausalSmoothResult {
  readonly values: Float64Array;
  /** The normalised kernel, k[0] weighting the current sample. */
  readonly kernel: Float64Array;
  /** Mean delay Σ k·w_k of the kernel, in samples (the lag this smoothing adds). */
  readonly meanLagBins: number;
}

/**
 * Causal smoothing: each output is a weighted mean of the current and past samples only.
 *
 * Weights w_k ∝ exp(−k²/2s²) (half-Gaussian) or exp(−k/s) (exponential), k = 0 … ⌊truncate·s + 0.5⌋,
 * normalised to sum 1. Samples before the start count as 0 (the first outputs are biased low by
 * the missing weight). Causal kernels delay responses: the continuous mean lags are s·√(2/π)
 * (half-Gaussian) and s (exponential); the discrete lag is reported.
 *
 * @param x - Samples (NaN propagates).
 * @param scaleBins - σ (half-Gaussian) or τ (exponential) in samples, > 0.
 * @throws {TuningforkError} TF_BAD_OPTION.
 */
export function causalSmooth(x: ArrayLike<number>, scaleBins: number, options: CausalSmoothOptions = {}): CausalSmoothResult {
  const fn = 'causalSmooth';
  const opts = resolveOptions(fn, C_DEFAULTS, options);
  const xx = asF64(fn, 'x', x);
  const s = checkPositive(fn, 'scaleBins', scaleBins);
  const kind = checkOneOf(fn, 'kernel', opts.kernel, ['half-gaussian', 'exponential'] as const);
  const truncate = checkPositive(fn, 'truncate', opts.truncate);
  const r = Math.floor(truncate * s + 0.5);
  const k = new Float64Array(r + 1);
  let sum = 0;
  for (let i = 0; i <= r; i++) {
    const v = kind === 'half-gaussian' ? Math.exp((-0.5 * i * i) / (s * s)) : Math.exp(-i / s);
    k[i] = v;
    sum += v;
  }
  let lag = 0;
  for (let i = 0; i <= r; i++) {
    k[i] = k[i]! / sum;
    lag += i * k[i]!;
  }
  const n = xx.length;
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let acc = 0;
    const m = Math.min(r, i);
    for (let j = 0; j <= m; j++) acc += k[j]! * xx[i - j]!;
    y[i] = acc;
  }
  if (!Number.isFinite(lag)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: kernel could not be normalised (scale ${s}).`, { fn });
  return { values: y, kernel: k, meanLagBins: lag };
}

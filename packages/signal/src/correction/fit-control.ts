import { TuningforkError, checkInteger, checkOneOf, checkPositive, resolveOptions } from '@tuningfork/core';
import { select, medianInPlace } from '../internal/select.js';
import { asF64, requireFinite } from '../internal/validate.js';

/** Fitting method of {@link fitControl}. */
export type ControlFitMethod = 'ols' | 'huber' | 'bisquare';

/** Options of {@link fitControl}. */
export interface FitControlOptions {
  /** 'ols', or robust IRLS with 'huber' or 'bisquare' (Tukey biweight) weights. @defaultValue 'bisquare' */
  method?: ControlFitMethod;
  /** Tuning constant; null = 95 %-efficiency value (Huber 1.345, bisquare 4.685). @defaultValue null */
  tuning?: number | null;
  /** IRLS iteration cap. @defaultValue 100 */
  maxIterations?: number;
  /** Stop when max|Δβ| < tolerance·max(1, max|β|). @defaultValue 1e-10 */
  tolerance?: number;
  /** Use every k-th sample for the fit (the fitted line applies to all samples). @defaultValue 1 */
  stride?: number;
}

/** A line signal ≈ intercept + slope·control, with IRLS diagnostics. */
export interface ControlFit {
  readonly intercept: number;
  readonly slope: number;
  readonly method: ControlFitMethod;
  /** Tuning constant used (NaN for OLS). */
  readonly tuning: number;
  /** IRLS iterations performed (0 for OLS). */
  readonly iterations: number;
  /** True when the stopping rule was met within maxIterations (always true for OLS). */
  readonly converged: boolean;
  /** Robust residual scale median|r|/0.6745 of the last iteration (OLS: of the OLS residuals). */
  readonly scale: number;
  /** Samples used in the fit. */
  readonly nUsed: number;
  /** Fraction of samples with weight < 0.5 at the end (0 for OLS): how much was treated as outlier. */
  readonly downweighted: number;
  /** Ordinary R² of the OLS fit on the same samples. */
  readonly olsRSquared: number;
}

const DEFAULTS = Object.freeze({ method: 'bisquare', tuning: null, maxIterations: 100, tolerance: 1e-10, stride: 1 } as const);

/** Normal-consistency constant of the MAD used by the specification: s = median|r| / 0.6745. */
const MAD_CONST = 0.6745;

/**
 * Median of |y − (a + b·x)| over the strided samples, exact. When a previous median is known, one
 * pass counts the values below a bracket prev·(1 ± width) and collects those inside; the median is
 * then selected among the few collected values. Falls back to a full selection when the bracket
 * misses (the result is exact either way; the bracket only saves work).
 */
function medianAbsResidual(x: Float64Array, y: Float64Array, stride: number, a: number, b: number, prev: number, width: number, buf: Float64Array): number {
  const n = x.length;
  const m = Math.ceil(n / stride);
  const k1 = (m - 1) >> 1;
  const k2 = m >> 1;
  if (prev > 0 && Number.isFinite(prev)) {
    const lo = prev * (1 - width);
    const hi = prev * (1 + width);
    let below = 0;
    let cnt = 0;
    for (let i = 0; i < n; i += stride) {
      const r = Math.abs(y[i]! - (a + b * x[i]!));
      below += r < lo ? 1 : 0;
      if (r >= lo && r <= hi) buf[cnt++] = r;
    }
    if (below <= k1 && k2 < below + cnt) {
      const j1 = k1 - below;
      const v1 = select(buf, j1, 0, cnt - 1);
      if (k2 === k1) return v1;
      let v2 = Infinity;
      for (let j = j1 + 1; j < cnt; j++) if (buf[j]! < v2) v2 = buf[j]!;
      return (v1 + v2) / 2;
    }
  }
  let c = 0;
  for (let i = 0; i < n; i += stride) buf[c++] = Math.abs(y[i]! - (a + b * x[i]!));
  return medianInPlace(buf, c);
}

/** Centred sums of a line fit y ≈ a + b·x over the strided samples. */
export interface OlsMoments {
  /** Samples used. */
  readonly m: number;
  readonly mx: number;
  readonly my: number;
  /** Σ(x − x̄)², Σ(x − x̄)(y − ȳ), Σ(y − ȳ)². */
  readonly sxx: number;
  readonly sxy: number;
  readonly syy: number;
}

/**
 * Means (compensated: a second pass adds the mean residual) and centred sums of squares and
 * products of x and y over every `stride`-th sample: OLS slope = sxy/sxx, R² = sxy²/(sxx·syy).
 * Inputs must be finite.
 *
 * @throws {TuningforkError} TF_DEGENERATE_SIGNAL when x is constant (sd < 1e-6·|mean| or zero).
 */
export function olsMoments(fn: string, x: Float64Array, y: Float64Array, stride = 1): OlsMoments {
  const n = x.length;
  const m = Math.ceil(n / stride);
  // Global (strided) means, compensated.
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < n; i += stride) {
    sx += x[i]!;
    sy += y[i]!;
  }
  let mx = sx / m;
  let my = sy / m;
  let cx = 0;
  let cy = 0;
  for (let i = 0; i < n; i += stride) {
    cx += x[i]! - mx;
    cy += y[i]! - my;
  }
  mx += cx / m;
  my += cy / m;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i += stride) {
    const dx = x[i]! - mx;
    const dy = y[i]! - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  const sdx = Math.sqrt(sxx / m);
  if (!(sdx > 1e-6 * Math.abs(mx)) || sxx === 0) {
    throw new TuningforkError(
      'TF_DEGENERATE_SIGNAL',
      `${fn}: the control has standard deviation ${sdx} against mean ${mx} (< 1e-6 of |mean|); it carries no shared artefact to fit. Skip motion correction for this site.`,
      { fn, sd: sdx, mean: mx },
    );
  }
  return { m, mx, my, sxx, sxy, syy };
}

/**
 * Fit the control channel to the signal channel: signal ≈ intercept + slope·control.
 *
 * OLS, or iteratively reweighted least squares (IRLS) as specified in SIGNALS.md §1.6: start from
 * OLS; each iteration computes the residual scale s = median|r|/0.6745, weights (bisquare
 * u = r/(c·s), w = (1 − u²)² for |u| < 1 else 0; Huber u = r/s, w = min(1, k/|u|)), and a weighted
 * least-squares line; stop when max|Δβ| < 1e-10·max(1, max|β|) or after maxIterations
 * (converged = false). Transients of the sensor are outliers to the shared-artefact relation; a
 * robust fit keeps them from tilting the line. Weighted sums are accumulated about the global
 * means, so large offsets cost no precision; the median uses exact linear-time selection.
 *
 * @param signal - Sensor channel samples (finite).
 * @param control - Isosbestic control samples, same length (finite, not constant).
 * @returns The line and IRLS diagnostics (iterations, convergence, scale, fraction down-weighted).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (unequal lengths), TF_NON_FINITE (first bad index),
 *   TF_TOO_FEW_SAMPLES (< 3 samples), TF_DEGENERATE_SIGNAL (control sd < 1e-6·|mean| or zero).
 * @example
 * ```ts
 * // SIGNALS.md §1.6: bisquare 4.685 → intercept 1.00506744, slope 1.99909406, 8 iterations
 * const fit = fitControl(y, x, { method: 'bisquare' });
 * ```
 *
 * References
 * - Holland, P. W. & Welsch, R. E. (1977). Robust regression using iteratively reweighted
 *   least-squares. Commun. Stat. Theory Methods 6(9):813–827. doi:10.1080/03610927708827533
 * - Huber, P. J. (1964). Robust estimation of a location parameter. Ann. Math. Stat. 35(1):73–101.
 *   doi:10.1214/aoms/1177703732
 * - Keevers, L. J. & Jean-Richard-dit-Bressel, P. (2025). Obtaining artifact-corrected signals in
 *   fiber photometry via isosbestic signals, robust regression, and dF/F calculations.
 *   Neurophotonics 12:025003 (title from memory).
 */
export function fitControl(signal: ArrayLike<number>, control: ArrayLike<number>, options: FitControlOptions = {}): ControlFit {
  const fn = 'fitControl';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const y = asF64(fn, 'signal', signal);
  const x = asF64(fn, 'control', control);
  if (x.length !== y.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: signal has ${y.length} samples but control has ${x.length}; they must be on one grid.`, { fn, signal: y.length, control: x.length });
  }
  const method = checkOneOf(fn, 'method', opts.method, ['ols', 'huber', 'bisquare'] as const);
  const c = method === 'ols' ? NaN : opts.tuning === null ? (method === 'huber' ? 1.345 : 4.685) : checkPositive(fn, 'tuning', opts.tuning);
  const maxIt = checkInteger(fn, 'maxIterations', opts.maxIterations, 1);
  const tol = checkPositive(fn, 'tolerance', opts.tolerance);
  const stride = checkInteger(fn, 'stride', opts.stride, 1);
  requireFinite(fn, 'signal', y);
  requireFinite(fn, 'control', x);
  const n = x.length;
  const m = Math.ceil(n / stride);
  if (m < 3) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: need at least 3 samples for the fit, got ${m}.`, { fn, n: m });

  const { mx, my, sxx, sxy, syy } = olsMoments(fn, x, y, stride);
  // Centred coordinates: yc ≈ ac + b·xc. OLS: ac = 0.
  let b = sxy / sxx;
  let ac = 0;
  const olsR2 = syy > 0 ? (sxy * sxy) / (sxx * syy) : NaN;
  const toOrig = (a0: number, b0: number): [number, number] => [my + a0 - b0 * mx, b0];
  let [intercept, slope] = toOrig(ac, b);
  const buf = new Float64Array(m);
  if (method === 'ols') {
    const s = medianAbsResidual(x, y, stride, intercept, slope, NaN, 0, buf) / MAD_CONST;
    return { intercept, slope, method, tuning: NaN, iterations: 0, converged: true, scale: s, nUsed: m, downweighted: 0, olsRSquared: olsR2 };
  }
  let it = 0;
  let converged = false;
  let prevMed = NaN;
  let width = 0.25;
  let s = NaN;
  let low = 0;
  while (it < maxIt) {
    it++;
    const med = medianAbsResidual(x, y, stride, intercept, slope, prevMed, width, buf);
    // Next bracket: a few times the last relative change of the median (it shrinks as IRLS converges).
    if (prevMed > 0) width = Math.min(0.25, Math.max(1e-4, (4 * Math.abs(med - prevMed)) / med));
    prevMed = med;
    s = med / MAD_CONST;
    if (!(s > 0)) {
      // Perfect fit for more than half the data: the weights are undefined; the current line is exact.
      converged = true;
      break;
    }
    let sw = 0, swx = 0, swy = 0, swxx = 0, swxy = 0;
    low = 0;
    const inv = method === 'bisquare' ? 1 / (c * s) : 1 / s;
    for (let i = 0; i < n; i += stride) {
      const dx = x[i]! - mx;
      const dy = y[i]! - my;
      const r = dy - (ac + b * dx);
      const u = r * inv;
      let w: number;
      if (method === 'bisquare') {
        const au = Math.abs(u);
        if (au < 1) {
          const t = 1 - u * u;
          w = t * t;
        } else w = 0;
      } else {
        const au = Math.abs(u);
        w = au <= c ? 1 : c / au;
      }
      if (w < 0.5) low++;
      sw += w;
      swx += w * dx;
      swy += w * dy;
      swxx += w * dx * dx;
      swxy += w * dx * dy;
    }
    const den = swxx - (swx * swx) / sw;
    if (!(sw > 0) || !(den > 0)) {
      throw new TuningforkError('TF_FIT_FAILED', `${fn}: all weights vanished at IRLS iteration ${it} (tuning ${c} too small for these data?).`, { fn, iteration: it });
    }
    const bNew = (swxy - (swx * swy) / sw) / den;
    const aNew = (swy - bNew * swx) / sw;
    const [iNew, sNew] = toOrig(aNew, bNew);
    const d = Math.max(Math.abs(iNew - intercept), Math.abs(sNew - slope));
    ac = aNew;
    b = bNew;
    intercept = iNew;
    slope = sNew;
    if (d < tol * Math.max(1, Math.abs(iNew), Math.abs(sNew))) {
      converged = true;
      break;
    }
  }
  return { intercept, slope, method, tuning: c, iterations: it, converged, scale: s, nUsed: m, downweighted: low / m, olsRSquared: olsR2 };
}

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

/** Weight of one scaled residual u (Huber: min(1, c/|u|); bisquare: (1 − u²)² for |u| < 1, else 0). */
function irlsWeight(method: 'huber' | 'bisquare', u: number, c: number): number {
  const au = Math.abs(u);
  if (method === 'bisquare') {
    if (au < 1) {
      const t = 1 - u * u;
      return t * t;
    }
    return 0;
  }
  return au <= c ? 1 : c / au;
}

/**
 * One IRLS step's weighted sums about the means, in one pass: [Σw, Σw·dx, Σw·dy, Σw·dx²,
 * Σw·dx·dy, #(w < 0.5)] with dx = x − mx, dy = y − my, u = (dy − (ac + b·dx))·inv.
 */
function directSums(x: Float64Array, y: Float64Array, stride: number, mx: number, my: number, ac: number, b: number, inv: number, method: 'huber' | 'bisquare', c: number): number[] {
  let sw = 0, swx = 0, swy = 0, swxx = 0, swxy = 0, low = 0;
  for (let i = 0; i < x.length; i += stride) {
    const dx = x[i]! - mx;
    const dy = y[i]! - my;
    const w = irlsWeight(method, (dy - (ac + b * dx)) * inv, c);
    if (w < 0.5) low++;
    sw += w;
    swx += w * dx;
    swy += w * dy;
    swxx += w * dx * dx;
    swxy += w * dx * dy;
  }
  return [sw, swx, swy, swxx, swxy, low];
}

/** Relative margin around class boundaries, far above the rounding of the residuals. */
const MARGIN = 1e-9;
/** Bisquare weight (1 − u²)² is below 0.5 exactly when |u| > √(1 − √0.5). */
const BISQUARE_HALF = Math.sqrt(1 - Math.SQRT1_2);

/**
 * The median of |residual| and the next IRLS sums in a single pass over the data, for when the
 * median is bracketed by [lo, hi] (the previous median ± a few times its last change).
 *
 * The weights depend on the scale s = median/0.6745, unknown until the pass ends; but with the
 * median in [lo, hi] the weight threshold T = c·s lies in a known interval, so most samples can be
 * classed during the pass: |r| below it (Huber w = 1; bisquare w = (1 − r²/T²)², summed as
 * Σf − 2Σr²f/T² + Σr⁴f/T⁴), above it (Huber w = T/|r|, summed as T·Σf/|r|; bisquare w = 0), and
 * the few near it, whose dx, dy are kept and weighted exactly once s is known. The count of
 * w < 0.5 is classed the same way around its own threshold. Sums are regrouped, so they equal the
 * two-pass sums up to rounding. When the median falls outside the bracket, run() reports NaN and
 * the caller takes the two-pass route; when too many samples sit near a threshold, finish()
 * returns null and the caller computes the sums directly.
 */
class FusedPass {
  private readonly method: 'huber' | 'bisquare';
  private readonly c: number;
  /** Collects |r| inside the median's bracket; free between run() calls (the two-pass median borrows it). */
  readonly buf: Float64Array;
  /** dx, dy of samples near the weight threshold; |r| of samples near the w = 0.5 threshold. */
  private readonly near: Float64Array;
  private readonly nearLow: Float64Array;
  /** Huber: [n, Σdx, Σdy, Σdx², Σdx·dy] below, the same of f/|r| above; bisquare: f, r²f, r⁴f below. */
  private readonly acc = new Float64Array(15);
  private nNear = 0;
  private nNearLow = 0;
  private lowSure = 0;
  private overflow = false;
  private mx = 0;
  private my = 0;
  private ac = 0;
  private b = 0;

  constructor(method: 'huber' | 'bisquare', c: number, m: number) {
    this.method = method;
    this.c = c;
    this.buf = new Float64Array(m);
    const cap = (m >> 3) + 16;
    this.near = new Float64Array(2 * cap);
    this.nearLow = new Float64Array(cap);
  }

  run(x: Float64Array, y: Float64Array, stride: number, a0: number, b0: number, mx: number, my: number, ac: number, b: number, lo: number, hi: number): { median: number } {
    const n = x.length;
    const m = this.buf.length;
    const buf = this.buf;
    const near = this.near;
    const nearLow = this.nearLow;
    const capNear = near.length >> 1;
    const capLow = nearLow.length;
    const acc = this.acc;
    acc.fill(0);
    this.mx = mx;
    this.my = my;
    this.ac = ac;
    this.b = b;
    // T = c·median/0.6745 for both weight families; w < 0.5 at |r| > 2T (Huber) or > 0.541·T (bisquare).
    const tLo = (this.c * lo) / MAD_CONST * (1 - MARGIN);
    const tHi = (this.c * hi) / MAD_CONST * (1 + MARGIN);
    const huber = this.method === 'huber';
    const k = huber ? 2 : BISQUARE_HALF;
    const lLo = k * tLo;
    const lHi = k * tHi;
    let below = 0;
    let cnt = 0;
    let nNear = 0;
    let nNearLow = 0;
    let lowSure = 0;
    let overflow = false;
    let a0s = 0, a1 = 0, a2 = 0, a3 = 0, a4 = 0;
    let q0 = 0, q1 = 0, q2 = 0, q3 = 0, q4 = 0;
    let p0 = 0, p1 = 0, p2 = 0, p3 = 0, p4 = 0;
    for (let i = 0; i < n; i += stride) {
      const xi = x[i]!;
      const yi = y[i]!;
      const ro = Math.abs(yi - (a0 + b0 * xi));
      if (ro < lo) below++;
      else if (ro <= hi) buf[cnt++] = ro;
      const dx = xi - mx;
      const dy = yi - my;
      const r = dy - (ac + b * dx);
      const ar = Math.abs(r);
      if (ar < tLo) {
        if (huber) {
          a0s += 1;
          a1 += dx;
          a2 += dy;
          a3 += dx * dx;
          a4 += dx * dy;
        } else {
          const r2 = r * r;
          const r4 = r2 * r2;
          const xx = dx * dx;
          const xy = dx * dy;
          a0s += 1; a1 += dx; a2 += dy; a3 += xx; a4 += xy;
          q0 += r2; q1 += r2 * dx; q2 += r2 * dy; q3 += r2 * xx; q4 += r2 * xy;
          p0 += r4; p1 += r4 * dx; p2 += r4 * dy; p3 += r4 * xx; p4 += r4 * xy;
          if (ar > lHi) lowSure++;
          else if (ar >= lLo) {
            if (nNearLow < capLow) nearLow[nNearLow++] = ar;
            else overflow = true;
          }
        }
      } else if (ar > tHi) {
        if (huber) {
          const inv = 1 / ar;
          const xq = dx * inv;
          q0 += inv;
          q1 += xq;
          q2 += dy * inv;
          q3 += xq * dx;
          q4 += xq * dy;
          if (ar > lHi) lowSure++;
          else if (ar >= lLo) {
            if (nNearLow < capLow) nearLow[nNearLow++] = ar;
            else overflow = true;
          }
        } else lowSure++;
      } else if (nNear < capNear) {
        near[2 * nNear] = dx;
        near[2 * nNear + 1] = dy;
        nNear++;
      } else overflow = true;
    }
    acc[0] = a0s; acc[1] = a1; acc[2] = a2; acc[3] = a3; acc[4] = a4;
    acc[5] = q0; acc[6] = q1; acc[7] = q2; acc[8] = q3; acc[9] = q4;
    acc[10] = p0; acc[11] = p1; acc[12] = p2; acc[13] = p3; acc[14] = p4;
    this.nNear = nNear;
    this.nNearLow = nNearLow;
    this.lowSure = lowSure;
    this.overflow = overflow;
    const k1 = (m - 1) >> 1;
    const k2 = m >> 1;
    if (!(below <= k1 && k2 < below + cnt)) return { median: NaN };
    const j1 = k1 - below;
    const v1 = select(buf, j1, 0, cnt - 1);
    if (k2 === k1) return { median: v1 };
    let v2 = Infinity;
    for (let j = j1 + 1; j < cnt; j++) if (buf[j]! < v2) v2 = buf[j]!;
    return { median: (v1 + v2) / 2 };
  }

  /** The sums of the last run() for the weights' inv (1/s Huber, 1/(c·s) bisquare), or null when near-threshold samples overflowed. */
  finish(inv: number): number[] | null {
    if (this.overflow) return null;
    const acc = this.acc;
    const c = this.c;
    let sw: number, swx: number, swy: number, swxx: number, swxy: number;
    if (this.method === 'huber') {
      const t = c / inv;
      sw = acc[0]! + t * acc[5]!;
      swx = acc[1]! + t * acc[6]!;
      swy = acc[2]! + t * acc[7]!;
      swxx = acc[3]! + t * acc[8]!;
      swxy = acc[4]! + t * acc[9]!;
    } else {
      const i2 = inv * inv;
      const i4 = i2 * i2;
      const poly = (j: number): number => acc[j]! - 2 * i2 * acc[5 + j]! + i4 * acc[10 + j]!;
      sw = poly(0);
      swx = poly(1);
      swy = poly(2);
      swxx = poly(3);
      swxy = poly(4);
    }
    let low = this.lowSure;
    for (let j = 0; j < this.nNearLow; j++) if (irlsWeight(this.method, this.nearLow[j]! * inv, c) < 0.5) low++;
    // Samples near the threshold, weighted exactly: `near` holds (dx, dy) pairs, read as x and y
    // with stride 2 about zero means.
    const k = 2 * this.nNear;
    const [w0, w1, w2, w3, w4, wl] = directSums(this.near.subarray(0, k), this.near.subarray(1, k + 1), 2, 0, 0, this.ac, this.b, inv, this.method, c) as [number, number, number, number, number, number];
    return [sw + w0, swx + w1, swy + w2, swxx + w3, swxy + w4, low + wl];
  }
}

/** Largest |v| over the strided samples allowed without rescaling, and the smallest non-zero one. */
const SAFE_HIGH = 2 ** 128;
const SAFE_LOW = 2 ** -128;

/** 0 when max|v| over the strided samples lies in [2^−128, 2^128] (or is 0); else e with max|v|·2^−e in [0.5, 1). */
function rescaleExponent(v: Float64Array, stride: number): number {
  let mx = 0;
  for (let i = 0; i < v.length; i += stride) {
    const a = Math.abs(v[i]!);
    if (a > mx) mx = a;
  }
  if (mx === 0 || (mx >= SAFE_LOW && mx <= SAFE_HIGH)) return 0;
  let e = Math.floor(Math.log2(mx)) + 1;
  // log2 may round across a power of two: make max·2^−e land in [0.5, 1).
  while (mx * 2 ** -e >= 1) e++;
  while (mx * 2 ** -e < 0.5) e--;
  return e;
}

/** v·2^−e (exact: a power-of-two scaling of values that stay normal). */
function scaledCopy(v: Float64Array, e: number): Float64Array {
  if (e === 0) return v;
  const out = new Float64Array(v.length);
  // Two factors, each within the double range, for exponents beyond ±1023.
  const h = Math.trunc(e / 2);
  const f1 = 2 ** -h;
  const f2 = 2 ** -(e - h);
  for (let i = 0; i < v.length; i++) out[i] = v[i]! * f1 * f2;
  return out;
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
 * means, so large offsets cost no precision; the median uses exact linear-time selection. From
 * the second iteration on, the median and the weighted sums share one pass over the data (the
 * sums regrouped by weight class, equal to the two-pass sums up to rounding), which halves the
 * memory traffic of long full-rate fits. Data whose magnitude lies beyond 2^±128 (≈ 3·10^±38),
 * where squares and fourth powers would overflow or underflow, are fitted as exact power-of-two
 * rescaled copies and the line is scaled back.
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
  // Magnitudes beyond 2^±128 would overflow or underflow the squares and fourth powers of the
  // IRLS sums (NaN or "all weights vanished"). The fit is equivariant under scaling, so fit exact
  // power-of-two rescaled copies and scale the line back (never taken for data inside the range).
  const ex = rescaleExponent(x, stride);
  const ey = rescaleExponent(y, stride);
  if (ex !== 0 || ey !== 0) {
    const f = fitControl(scaledCopy(y, ey), scaledCopy(x, ex), options);
    return { ...f, intercept: f.intercept * 2 ** ey, slope: f.slope * 2 ** (ey - ex), scale: f.scale * 2 ** ey };
  }

  const { mx, my, sxx, sxy, syy } = olsMoments(fn, x, y, stride);
  // Centred coordinates: yc ≈ ac + b·xc. OLS: ac = 0.
  let b = sxy / sxx;
  let ac = 0;
  const olsR2 = syy > 0 ? (sxy * sxy) / (sxx * syy) : NaN;
  const toOrig = (a0: number, b0: number): [number, number] => [my + a0 - b0 * mx, b0];
  let [intercept, slope] = toOrig(ac, b);
  if (method === 'ols') {
    const s = medianAbsResidual(x, y, stride, intercept, slope, NaN, 0, new Float64Array(m)) / MAD_CONST;
    return { intercept, slope, method, tuning: NaN, iterations: 0, converged: true, scale: s, nUsed: m, downweighted: 0, olsRSquared: olsR2 };
  }
  let it = 0;
  let converged = false;
  let prevMed = NaN;
  let width = 0.25;
  let s = NaN;
  let low = 0;
  const fused = new FusedPass(method, c, m);
  const buf = fused.buf;
  while (it < maxIt) {
    it++;
    // With a bracket for the median, one pass over the data yields both the median and the sums
    // (FusedPass); otherwise, or when the bracket misses, the median and the sums take a pass each.
    let med = NaN;
    let sums: readonly number[] | null = null;
    if (prevMed > 0 && Number.isFinite(prevMed)) {
      const r = fused.run(x, y, stride, intercept, slope, mx, my, ac, b, prevMed * (1 - width), prevMed * (1 + width));
      med = r.median;
      if (med === med && med > 0) sums = fused.finish(method === 'bisquare' ? 1 / (c * (med / MAD_CONST)) : 1 / (med / MAD_CONST));
    }
    if (!(med === med)) med = medianAbsResidual(x, y, stride, intercept, slope, NaN, 0, buf);
    // Next bracket: a few times the last relative change of the median (it shrinks as IRLS converges).
    if (prevMed > 0) width = Math.min(0.25, Math.max(1e-4, (4 * Math.abs(med - prevMed)) / med));
    prevMed = med;
    s = med / MAD_CONST;
    if (!(s > 0)) {
      // Perfect fit for more than half the data: the weights are undefined; the current line is exact.
      converged = true;
      break;
    }
    const inv = method === 'bisquare' ? 1 / (c * s) : 1 / s;
    sums ??= directSums(x, y, stride, mx, my, ac, b, inv, method, c);
    const [sw, swx, swy, swxx, swxy, lowCount] = sums as [number, number, number, number, number, number];
    low = lowCount;
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

import { TuningforkError, checkInteger, checkPositive, resolveOptions } from '@tuningfork/core';
import { asF64, requireFinite } from '../internal/validate.js';

/** Options of {@link airPls}. Defaults are the published ones (chosen for spectra). */
export interface AirPlsOptions {
  /** Smoothness λ of the Whittaker step. @defaultValue 100 */
  lambda?: number;
  /** Order d of the difference penalty (1 or 2; use 2 for bleaching). @defaultValue 1 */
  order?: number;
  /** Iteration cap (the last iteration's baseline is returned). @defaultValue 15 */
  maxIterations?: number;
  /** Stop when Σ|r| over r < 0 falls below this fraction of Σ|y|. @defaultValue 0.001 */
  tolerance?: number;
}

/** Result of {@link airPls}. */
export interface AirPlsResult {
  readonly baseline: Float64Array;
  /** Iterations performed (the iteration at which the stopping rule was tested true, or the cap). */
  readonly iterations: number;
  /** True when the stopping rule was met before the cap. */
  readonly converged: boolean;
}

const DEFAULTS = Object.freeze({ lambda: 100, order: 1, maxIterations: 15, tolerance: 0.001 } as const);

/**
 * λ giving a Whittaker smoother (uniform weights, difference order d) a gain of 0.5 at `cutoffHz`:
 * the smoother's gain is 1/(1 + λ(2 sin(ω/2))^(2d)), so λ ≈ (fs/(2π·fc))^(2d) (SIGNALS.md §1.5).
 */
export function whittakerLambda(sampleRate: number, cutoffHz: number, order: number): number {
  return (sampleRate / (2 * Math.PI * cutoffHz)) ** (2 * order);
}

/** Solve (diag(w) + λDᵀD)z = w∘y by banded Cholesky (bandwidth d). */
function whittaker(y: Float64Array, w: Float64Array, lambda: number, d: number): Float64Array {
  const n = y.length;
  const bw = d + 1; // band storage: A[i][i − k] for k = 0 … d at a[i * bw + k]
  const a = new Float64Array(n * bw);
  const coef = d === 1 ? [-1, 1] : [1, -2, 1];
  for (let k = 0; k + d < n; k++) {
    for (let p = 0; p <= d; p++) {
      for (let q = 0; q <= p; q++) {
        // Row k of D touches columns k … k + d.
        a[(k + p) * bw + (p - q)] = a[(k + p) * bw + (p - q)]! + lambda * coef[p]! * coef[q]!;
      }
    }
  }
  for (let i = 0; i < n; i++) a[i * bw] = a[i * bw]! + w[i]!;
  // In-place banded Cholesky: A = L·Lᵀ.
  for (let i = 0; i < n; i++) {
    for (let k = Math.min(d, i); k >= 0; k--) {
      const j = i - k;
      let s = a[i * bw + k]!;
      for (let m = 1; m <= d - k && j - m >= 0 && m + k <= d; m++) s -= a[i * bw + k + m]! * a[j * bw + m]!;
      if (k === 0) {
        if (!(s > 0)) throw new TuningforkError('TF_FIT_FAILED', `airPls: the smoothing system is not positive definite at sample ${i} (all weights zero nearby?).`, { index: i });
        a[i * bw] = Math.sqrt(s);
      } else a[i * bw + k] = s / a[j * bw]!;
    }
  }
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = w[i]! * y[i]!;
    for (let k = 1; k <= Math.min(d, i); k++) s -= a[i * bw + k]! * z[i - k]!;
    z[i] = s / a[i * bw]!;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = z[i]!;
    for (let k = 1; k <= d && i + k < n; k++) s -= a[(i + k) * bw + k]! * z[i + k]!;
    z[i] = s / a[i * bw]!;
  }
  return z;
}

/**
 * Adaptive iteratively reweighted penalised least squares (airPLS) baseline.
 *
 * **Method** (Zhang, Chen & Liang 2010). A Whittaker smoother solves (W + λDᵀD)z = Wy with D the
 * d-th difference matrix, starting from w = 1. After iteration i: r = y − z, S = Σ|r| over r < 0;
 * stop if S < tolerance·Σ|y| or i = maxIterations; otherwise w = 0 where r ≥ 0,
 * w = exp(i|r|/S) where r < 0, and both end weights exp(i·max(r<0)/S). Points above the baseline
 * (transients) thus lose their weight, so the baseline follows the lower envelope. Peaks are
 * assumed positive: flip the sign for decreasing sensors. Solved by banded Cholesky, O(n·d²).
 *
 * @param y - Samples (finite).
 * @throws {TuningforkError} TF_NON_FINITE, TF_TOO_FEW_SAMPLES (n ≤ order), TF_BAD_OPTION.
 * @example
 * ```ts
 * // y = 1 + .01x + 3e^(−(x−100)²/50), x = 0…199, d = 2, λ = 1e4 → stops at i = 4, z[100] = 2.0052261
 * ```
 *
 * References
 * - Zhang, Z.-M., Chen, S. & Liang, Y.-Z. (2010). Baseline correction using adaptive iteratively
 *   reweighted penalized least squares. Analyst 135(5):1138–1146. doi:10.1039/b922045c
 * - Eilers, P. H. C. (2003). A perfect smoother. Anal. Chem. 75(14):3631–3636. doi:10.1021/ac034173t
 */
export function airPls(y: ArrayLike<number>, options: AirPlsOptions = {}): AirPlsResult {
  const fn = 'airPls';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const x = asF64(fn, 'y', y);
  requireFinite(fn, 'y', x);
  const lambda = checkPositive(fn, 'lambda', opts.lambda);
  const d = checkInteger(fn, 'order', opts.order, 1, 2);
  const maxIt = checkInteger(fn, 'maxIterations', opts.maxIterations, 1);
  const tol = checkPositive(fn, 'tolerance', opts.tolerance);
  const n = x.length;
  if (n <= d) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: need more than ${d} samples, got ${n}.`, { fn, n });
  let sumAbs = 0;
  for (let i = 0; i < n; i++) sumAbs += Math.abs(x[i]!);
  const w = new Float64Array(n).fill(1);
  let z: Float64Array = new Float64Array(n);
  let it = 0;
  let converged = false;
  for (let i = 1; i <= maxIt; i++) {
    it = i;
    z = whittaker(x, w, lambda, d);
    let S = 0;
    let maxNeg = -Infinity;
    for (let k = 0; k < n; k++) {
      const r = x[k]! - z[k]!;
      if (r < 0) {
        S -= r;
        if (r > maxNeg) maxNeg = r;
      }
    }
    if (S < tol * sumAbs) {
      converged = true;
      break;
    }
    if (i === maxIt) break;
    for (let k = 0; k < n; k++) {
      const r = x[k]! - z[k]!;
      w[k] = r >= 0 ? 0 : Math.exp((i * -r) / S);
    }
    const end = Math.exp((i * maxNeg) / S);
    w[0] = end;
    w[n - 1] = end;
  }
  return { baseline: z, iterations: it, converged };
}

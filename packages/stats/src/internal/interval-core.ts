/**
 * Per-statistic interval arithmetic shared by every bootstrap in this package: the percentile
 * interval, the BCa adjusted levels (INFERENCE.md §1.1; scipy's conventions), the jackknife
 * acceleration, and the flags that become result warnings. Inputs are trusted.
 */
import { normalCdf, normalQuantile } from '../distributions/normal.js';
import { twoQuantilesInPlace } from './select.js';

/** Bit flags describing what went wrong for one statistic (one time bin). */
export const FLAG_DEGENERATE = 1; // all replicates equal, or θ̂ outside their range (z0 = ±∞): NaN
export const FLAG_ZERO_ACCELERATION = 2; // Σd² = 0: acceleration set to 0
export const FLAG_UNSTABLE_LEVEL = 4; // 1 − a(z0 + z) ≤ 0 for one bound: that bound is NaN
export const FLAG_NO_REPLICATES = 8; // no finite replicates at all: NaN

/** Scratch output of `intervalInPlace`. */
export interface IntervalScratch {
  low: number;
  high: number;
  z0: number;
  flags: number;
  /** Two-slot buffer for quantiles. */
  readonly q: Float64Array;
}

export function makeIntervalScratch(): IntervalScratch {
  return { low: NaN, high: NaN, z0: NaN, flags: 0, q: new Float64Array(2) };
}

/**
 * Confidence interval from `n` finite replicates in reps[0..n) (reordered in place).
 *
 * percentile: [q(α), q(1 − α)] with α = (1 − level)/2.
 * bca: z0 = Φ⁻¹((#{θ* < θ̂} + #{θ* ≤ θ̂})/(2B)) (scipy's tie convention), levels
 * α1,2 = Φ(z0 + (z0 + z)/(1 − a(z0 + z))) with z = Φ⁻¹(α), Φ⁻¹(1 − α), then [q(α1), q(α2)].
 * `accelFlags` carries FLAG_ZERO_ACCELERATION from the jackknife step.
 */
export function intervalInPlace(
  reps: Float64Array, n: number, estimate: number, bca: boolean, alpha: number, accel: number,
  accelFlags: number, out: IntervalScratch,
): void {
  out.flags = 0;
  out.z0 = NaN;
  if (n === 0) {
    out.low = NaN;
    out.high = NaN;
    out.flags = FLAG_NO_REPLICATES;
    return;
  }
  if (!bca) {
    twoQuantilesInPlace(reps, n, alpha, 1 - alpha, out.q);
    out.low = out.q[0]!;
    out.high = out.q[1]!;
    return;
  }
  out.flags |= accelFlags;
  let below = 0;
  let atOrBelow = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = reps[i]!;
    if (v < estimate) below++;
    if (v <= estimate) atOrBelow++;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  const z0 = normalQuantile((below + atOrBelow) / (2 * n));
  out.z0 = z0;
  if (!Number.isFinite(z0) || min === max || !(estimate === estimate)) {
    out.low = NaN;
    out.high = NaN;
    out.flags |= FLAG_DEGENERATE;
    return;
  }
  const zLo = normalQuantile(alpha);
  const zHi = -zLo;
  const n1 = z0 + zLo;
  const n2 = z0 + zHi;
  const d1 = 1 - accel * n1;
  const d2 = 1 - accel * n2;
  const a1 = d1 > 0 ? normalCdf(z0 + n1 / d1) : NaN;
  const a2 = d2 > 0 ? normalCdf(z0 + n2 / d2) : NaN;
  if (!(d1 > 0) || !(d2 > 0)) out.flags |= FLAG_UNSTABLE_LEVEL;
  if (a1 === a1 && a2 === a2 && a1 <= a2) {
    twoQuantilesInPlace(reps, n, a1, a2, out.q);
    out.low = out.q[0]!;
    out.high = out.q[1]!;
  } else {
    out.low = a1 === a1 ? quantileOne(reps, n, a1, out.q) : NaN;
    out.high = a2 === a2 ? quantileOne(reps, n, a2, out.q) : NaN;
  }
}

function quantileOne(reps: Float64Array, n: number, p: number, q: Float64Array): number {
  twoQuantilesInPlace(reps, n, p, p, q);
  return q[0]!;
}

/**
 * Jackknife acceleration in scipy's multi-sample form: for each sample j with leave-one-out
 * values θ_(i), U_i = (n_j − 1)(θ̄ − θ_(i)); a = (1/6)·Σ_j ΣU³/n_j³ / (Σ_j ΣU²/n_j²)^{3/2}.
 * With one sample this equals E&T's a = Σd³ / (6(Σd²)^{3/2}), d_i = θ̄ − θ_(i).
 * `num`/`den` accumulate over samples; call `accelerationFrom(num, den)` at the end.
 */
export function accumulateJackknife(values: Float64Array, n: number, acc: Float64Array): void {
  let mean = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = values[i]!;
    mean += v;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (min === max) return; // all equal: d = 0 exactly (the summed mean may differ in the last bit)
  mean /= n;
  let s2 = 0;
  let s3 = 0;
  for (let i = 0; i < n; i++) {
    const u = (n - 1) * (mean - values[i]!);
    const u2 = u * u;
    s2 += u2;
    s3 += u2 * u;
  }
  acc[0]! += s3 / (n * n * n);
  acc[1]! += s2 / (n * n);
}

/** Acceleration from accumulated sums; flags FLAG_ZERO_ACCELERATION (a = 0) when Σ U² = 0. */
export function accelerationFrom(num: number, den: number): { a: number; flags: number } {
  if (!(den > 0)) return { a: 0, flags: den === 0 ? FLAG_ZERO_ACCELERATION : FLAG_DEGENERATE };
  return { a: num / 6 / Math.pow(den, 1.5), flags: 0 };
}

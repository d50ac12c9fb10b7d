/**
 * Standard normal distribution: cumulative distribution function Φ and its inverse Φ⁻¹.
 * Both are plain functions of one number (no options), used by the BCa interval and by tests.
 */

const SQRT_2PI = 2.5066282746310002; // √(2π)

/** Standard normal density φ(x) = exp(−x²/2)/√(2π). */
export function normalDensity(x: number): number {
  return Math.exp(-0.5 * x * x) / SQRT_2PI;
}

/**
 * Standard normal cumulative distribution function Φ(x) = P(Z ≤ x).
 *
 * Accurate to a few units in the last place of the result over the whole real line (relative
 * accuracy also in the lower tail, e.g. Φ(−30) ≈ 4.9e−198). Φ(NaN) = NaN, Φ(±∞) = 1 or 0.
 *
 * **Method.** For |x| < 2: Φ(x) = ½ + φ(x)·(x + x³/3 + x⁵/(3·5) + …), the Taylor series of
 * Marsaglia (2004), summed until the terms no longer change the sum. For |x| ≥ 2 the tail
 * Q(|x|) = φ(x)/(|x| + 1/(|x| + 2/(|x| + 3/(|x| + …)))) is evaluated by the modified Lentz
 * method (Laplace's continued fraction, Abramowitz & Stegun 26.2.14), and Φ(x) = Q(−x) or 1 − Q(x).
 *
 * References
 * - Marsaglia, G. (2004). Evaluating the normal distribution. Journal of Statistical Software
 *   11(4):1–11. doi:10.18637/jss.v011.i04
 * - Abramowitz, M. & Stegun, I. A. (1964). Handbook of Mathematical Functions, eq. 26.2.14.
 *   National Bureau of Standards AMS 55.
 * - Cody, W. J. (1969). Rational Chebyshev approximations for the error function. Mathematics
 *   of Computation 23(107):631–637. doi:10.1090/S0025-5718-1969-0247736-4 (splitting of x²)
 * - Lentz, W. J. (1976). Generating Bessel functions in Mie scattering calculations using
 *   continued fractions. Applied Optics 15(3):668–671. doi:10.1364/AO.15.000668
 */
export function normalCdf(x: number): number {
  if (x !== x) return NaN;
  if (x === Infinity) return 1;
  if (x === -Infinity) return 0;
  const ax = Math.abs(x);
  if (ax < 2) {
    let term = x;
    let sum = x;
    const x2 = x * x;
    for (let k = 3; k < 200; k += 2) {
      term *= x2 / k;
      const next = sum + term;
      if (next === sum) break;
      sum = next;
    }
    return 0.5 + normalDensity(x) * sum;
  }
  const q = upperTail(ax);
  return x > 0 ? 1 - q : q;
}

/** Q(a) = 1 − Φ(a) for a ≥ 2 by Laplace's continued fraction (modified Lentz). */
function upperTail(a: number): number {
  if (a > 40) return 0; // below the smallest subnormal
  const tiny = 1e-300;
  // CF: a + 1/(a + 2/(a + 3/(a + ...))) written as b0 + K(k / a).
  let f = a;
  let c = a;
  let d = 0;
  for (let k = 1; k < 5000; k++) {
    d = a + k * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = a + k / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  // exp(−a²/2) with a² split as in Cody (1969) so the large exponent loses no accuracy.
  const as = Math.trunc(a * 16) / 16;
  const dens = (Math.exp(-0.5 * as * as) * Math.exp(-0.5 * (a - as) * (a + as))) / SQRT_2PI;
  return dens / f;
}

// Wichura (1988), AS 241 PPND16: coefficients of the three rational approximations.
const A = [3.3871328727963666080, 1.3314166789178437745e2, 1.9715909503065514427e3, 1.3731693765509461125e4,
  4.5921953931549871457e4, 6.7265770927008700853e4, 3.3430575583588128105e4, 2.5090809287301226727e3] as const;
const B = [1, 4.2313330701600911252e1, 6.8718700749205790830e2, 5.3941960214247511077e3, 2.1213794301586595867e4,
  3.9307895800092710610e4, 2.8729085735721942674e4, 5.2264952788528545610e3] as const;
const C = [1.42343711074968357734, 4.63033784615654529590, 5.76949722146069140550, 3.64784832476320460504,
  1.27045825245236838258, 2.41780725177450611770e-1, 2.27238449892691845833e-2, 7.74545014278341407640e-4] as const;
const D = [1, 2.05319162663775882187, 1.67638483018380384940, 6.89767334985100004550e-1, 1.48103976427480074590e-1,
  1.51986665636164571966e-2, 5.47593808499534494600e-4, 1.05075007164441684324e-9] as const;
const E = [6.65790464350110377720, 5.46378491116411436990, 1.78482653991729133580, 2.96560571828504891230e-1,
  2.65321895265761230930e-2, 1.24266094738807843860e-3, 2.71155556874348757815e-5, 2.01033439929228813265e-7] as const;
const F = [1, 5.99832206555887937690e-1, 1.36929880922735805310e-1, 1.48753612908506148525e-2,
  7.86869131145613259100e-4, 1.84631831751005468180e-5, 1.42151175831644588870e-7, 2.04426310338993978564e-15] as const;

function horner(c: readonly number[], x: number): number {
  let v = c[c.length - 1]!;
  for (let i = c.length - 2; i >= 0; i--) v = v * x + c[i]!;
  return v;
}

/**
 * Standard normal quantile Φ⁻¹(p): the z with Φ(z) = p.
 *
 * Relative accuracy about 1e−16 (Wichura's stated accuracy). p = 0 → −∞, p = 1 → +∞,
 * p outside [0, 1] or NaN → NaN (callers that need an error check p themselves).
 *
 * **Method.** Algorithm AS 241 (PPND16): a rational approximation of degree 7/7 in
 * r = 0.180625 − (p − ½)² for |p − ½| ≤ 0.425, and in r = √(−ln min(p, 1 − p)) − 1.6 or − 5
 * in the tails.
 *
 * References
 * - Wichura, M. J. (1988). Algorithm AS 241: The percentage points of the normal distribution.
 *   Journal of the Royal Statistical Society, Series C (Applied Statistics) 37(3):477–484.
 *   doi:10.2307/2347330
 */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  const q = p - 0.5;
  if (Math.abs(q) <= 0.425) {
    const r = 0.180625 - q * q;
    return (q * horner(A, r)) / horner(B, r);
  }
  let r = q < 0 ? p : 1 - p;
  r = Math.sqrt(-Math.log(r));
  let value: number;
  if (r <= 5) {
    r -= 1.6;
    value = horner(C, r) / horner(D, r);
  } else {
    r -= 5;
    value = horner(E, r) / horner(F, r);
  }
  return q < 0 ? -value : value;
}

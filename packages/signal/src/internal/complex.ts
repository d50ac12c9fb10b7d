/**
 * Small complex arithmetic for filter design (a few dozen values, so plain objects are fine).
 * Operations follow numpy's complex128 loops where the rounding order matters (Smith division,
 * glibc-style principal square root), so designs agree with scipy to the last bits.
 */
export interface Complex {
  readonly re: number;
  readonly im: number;
}

export function cx(re: number, im = 0): Complex {
  return { re, im };
}

export function cadd(a: Complex, b: Complex): Complex {
  return { re: a.re + b.re, im: a.im + b.im };
}

export function csub(a: Complex, b: Complex): Complex {
  return { re: a.re - b.re, im: a.im - b.im };
}

export function cneg(a: Complex): Complex {
  return { re: -a.re, im: -a.im };
}

export function cconj(a: Complex): Complex {
  return { re: a.re, im: -a.im };
}

export function cmul(a: Complex, b: Complex): Complex {
  return { re: a.re * b.re - a.im * b.im, im: a.re * b.im + a.im * b.re };
}

/** Complex division by Smith's method, as numpy's complex128 `divide` loop. */
export function cdiv(a: Complex, b: Complex): Complex {
  const br = Math.abs(b.re);
  const bi = Math.abs(b.im);
  if (br >= bi) {
    if (br === 0 && bi === 0) return { re: a.re / br, im: a.im / br };
    const rat = b.im / b.re;
    const scl = 1 / (b.re + b.im * rat);
    return { re: (a.re + a.im * rat) * scl, im: (a.im - a.re * rat) * scl };
  }
  const rat = b.re / b.im;
  const scl = 1 / (b.im + b.re * rat);
  return { re: (a.re * rat + a.im) * scl, im: (a.im * rat - a.re) * scl };
}

export function cabs(a: Complex): number {
  return Math.hypot(a.re, a.im);
}

/** Principal square root (branch cut on the negative real axis; sign of im kept). */
export function csqrt(a: Complex): Complex {
  const x = a.re;
  const y = a.im;
  if (x === 0 && y === 0) return { re: 0, im: y };
  const d = Math.hypot(x, y);
  if (x > 0) {
    const r = Math.sqrt(0.5 * (d + x));
    return { re: r, im: 0.5 * (y / r) };
  }
  const s = Math.sqrt(0.5 * (d - x));
  const r = Math.abs(0.5 * (y / s));
  return { re: r, im: y < 0 || Object.is(y, -0) ? -s : s };
}

/** exp(a). */
export function cexp(a: Complex): Complex {
  const e = Math.exp(a.re);
  if (a.im === 0) return { re: e, im: a.im };
  return { re: e * Math.cos(a.im), im: e * Math.sin(a.im) };
}

/** sinh(a) = sinh(re)cos(im) + i cosh(re)sin(im). */
export function csinh(a: Complex): Complex {
  if (a.im === 0) return { re: Math.sinh(a.re), im: a.im };
  return { re: Math.sinh(a.re) * Math.cos(a.im), im: Math.cosh(a.re) * Math.sin(a.im) };
}

/** Product of a list (sequential, left to right), 1 for an empty list. */
export function cprod(list: readonly Complex[]): Complex {
  let p: Complex = { re: 1, im: 0 };
  for (const z of list) p = cmul(p, z);
  return p;
}

/** True when the value is exactly real (numpy `isreal`: imaginary part == 0). */
export function isReal(a: Complex): boolean {
  return a.im === 0;
}

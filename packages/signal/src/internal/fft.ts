/**
 * Real-input DFT of any length on top of fft.js (power-of-two radix-4). Non-power-of-two lengths
 * use Bluestein's chirp-z algorithm with a power-of-two convolution.
 */
import FFT from 'fft.js';

const plans = new Map<number, FFT>();

function plan(n: number): FFT {
  let p = plans.get(n);
  if (!p) {
    p = new FFT(n);
    plans.set(n, p);
  }
  return p;
}

export function isPowerOfTwo(n: number): boolean {
  return n >= 2 && (n & (n - 1)) === 0;
}

/** A reusable real DFT of length n returning bins 0 … ⌊n/2⌋ as interleaved [re, im]. */
export interface RealDft {
  readonly n: number;
  /** Transform x (length n) into out (length 2·(⌊n/2⌋ + 1)). */
  forward(x: Float64Array, out: Float64Array): void;
  /**
   * Transform x and return a reused internal buffer whose first 2·(⌊n/2⌋ + 1) values are the
   * bins (no copy; zeros may carry a sign). Valid until the next call.
   */
  bins(x: Float64Array): Float64Array;
}

export function realDft(n: number): RealDft {
  const half = (n >> 1) + 1;
  if (n === 1) {
    const one = new Float64Array(2);
    const forward = (x: Float64Array, out: Float64Array): void => { out[0] = x[0]!; out[1] = 0; };
    return { n, forward, bins(x) { forward(x, one); return one; } };
  }
  if (isPowerOfTwo(n)) {
    const f = plan(n);
    const buf = new Float64Array(2 * n);
    return {
      n,
      forward(x: Float64Array, out: Float64Array): void {
        f.realTransform(buf, x);
        for (let k = 0; k < 2 * half; k++) out[k] = buf[k]!;
        // fft.js may emit −0; normalise to +0 for stable comparisons.
        for (let k = 0; k < 2 * half; k++) if (out[k] === 0) out[k] = 0;
      },
      bins(x: Float64Array): Float64Array {
        f.realTransform(buf, x);
        return buf;
      },
    };
  }
  // Bluestein: X_k = conj(w_k) · Σ_j (x_j conj(w_j)) w_{k−j}, w_j = exp(iπ j²/n).
  let m = 1;
  while (m < 2 * n - 1) m <<= 1;
  const f = plan(m);
  const wr = new Float64Array(n);
  const wi = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const r = (j * j) % (2 * n); // exact for n < 2^26
    const ang = (Math.PI * r) / n;
    wr[j] = Math.cos(ang);
    wi[j] = Math.sin(ang);
  }
  // FFT of the chirp filter b_j = w_j for |j| < n, wrapped.
  const b = new Float64Array(2 * m);
  b[0] = wr[0]!;
  b[1] = wi[0]!;
  for (let j = 1; j < n; j++) {
    b[2 * j] = wr[j]!;
    b[2 * j + 1] = wi[j]!;
    b[2 * (m - j)] = wr[j]!;
    b[2 * (m - j) + 1] = wi[j]!;
  }
  const bf = new Float64Array(2 * m);
  f.transform(bf, b);
  const a = new Float64Array(2 * m);
  const af = new Float64Array(2 * m);
  const conv = new Float64Array(2 * m);
  const binsOut = new Float64Array(2 * half);
  const forward = (x: Float64Array, out: Float64Array): void => {
    a.fill(0);
    for (let j = 0; j < n; j++) {
      // x_j · conj(w_j)
      a[2 * j] = x[j]! * wr[j]!;
      a[2 * j + 1] = -x[j]! * wi[j]!;
    }
    f.transform(af, a);
    for (let k = 0; k < m; k++) {
      const ar = af[2 * k]!, ai = af[2 * k + 1]!, br = bf[2 * k]!, bi = bf[2 * k + 1]!;
      af[2 * k] = ar * br - ai * bi;
      af[2 * k + 1] = ar * bi + ai * br;
    }
    f.inverseTransform(conv, af);
    for (let k = 0; k < half; k++) {
      const cr = conv[2 * k]!, ci = conv[2 * k + 1]!;
      // conj(w_k) · conv_k
      out[2 * k] = cr * wr[k]! + ci * wi[k]!;
      out[2 * k + 1] = ci * wr[k]! - cr * wi[k]!;
    }
  };
  return {
    n,
    forward,
    bins(x: Float64Array): Float64Array {
      forward(x, binsOut);
      return binsOut;
    },
  };
}

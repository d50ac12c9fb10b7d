/**
 * Circular cross-correlation by FFT (fft.js, power-of-two sizes) for any length n.
 *
 * fft.js only transforms powers of two, and a circular correlation of length n is not a circular
 * correlation of a padded length. We therefore zero-pad both series to N ≥ 2n − 1 (a power of
 * two), where the length-N circular correlation equals the *linear* correlation
 * lin(m) = Σ_t a(t)·b(t − m) without wrap-around, and fold it back exactly:
 *   c(k) = Σ_t a(t)·b((t − k) mod n) = lin(k) + lin(k − n),  k = 0 … n − 1,
 * with lin(k) at index k and lin(k − n) at index N − n + k of the padded result. The spectrum
 * product is A·conj(B) (conj on the shifted series; conj on A reverses the shift direction).
 */
import FFT from 'fft.js';

const plans = new Map<number, FFT>();
/** Reused work buffers of length 2N per transform size (JS is single-threaded; never returned). */
const work = new Map<number, { a: Float64Array; b: Float64Array }>();

function buffers(N: number): { a: Float64Array; b: Float64Array } {
  let w = work.get(N);
  if (!w) {
    w = { a: new Float64Array(2 * N), b: new Float64Array(2 * N) };
    work.set(N, w);
  }
  return w;
}

/** Smallest power of two ≥ max(2, 2n − 1). */
export function paddedSize(n: number): number {
  let N = 2;
  while (N < 2 * n - 1) N *= 2;
  return N;
}

export function fftPlan(N: number): FFT {
  let f = plans.get(N);
  if (!f) {
    f = new FFT(N);
    plans.set(N, f);
  }
  return f;
}

/** Full complex spectrum (interleaved, length 2N) of x zero-padded to N. */
export function realSpectrum(x: Float64Array, N: number, scratch?: Float64Array): Float64Array {
  const f = fftPlan(N);
  const input = scratch && scratch.length === N ? scratch : new Float64Array(N);
  input.set(x.subarray(0, Math.min(x.length, N)));
  input.fill(0, Math.min(x.length, N));
  const out = new Float64Array(2 * N);
  f.realTransform(out, input);
  f.completeSpectrum(out);
  return out;
}

/**
 * c1(k) = Σ_t a1(t)·b((t−k) mod n) and (when a2 is given) c2 likewise, k = 0 … n−1, from full
 * spectra A1, A2, B of zero-padded length-n series. Two real correlations share one complex
 * inverse transform (real and imaginary parts).
 */
export function circularCorrelation(a1: Float64Array, a2: Float64Array | null, b: Float64Array, n: number, N: number, out1: Float64Array, out2: Float64Array | null): void {
  const f = fftPlan(N);
  const z = new Float64Array(2 * N);
  for (let i = 0; i < 2 * N; i += 2) {
    const br = b[i]!;
    const bi = -b[i + 1]!;
    const ar = a1[i]!;
    const ai = a1[i + 1]!;
    let re = ar * br - ai * bi;
    let im = ar * bi + ai * br;
    if (a2) {
      const cr = a2[i]!;
      const ci = a2[i + 1]!;
      // add i·(A2·conj(B))
      re -= cr * bi + ci * br;
      im += cr * br - ci * bi;
    }
    z[i] = re;
    z[i + 1] = im;
  }
  const r = new Float64Array(2 * N);
  f.inverseTransform(r, z);
  out1[0] = r[0]!;
  if (out2) out2[0] = r[1]!;
  for (let k = 1; k < n; k++) {
    const j = 2 * (N - n + k);
    out1[k] = r[2 * k]! + r[j]!;
    if (out2) out2[k] = r[2 * k + 1]! + r[j + 1]!;
  }
}

/**
 * Segment-window variant for a source supported on rows [a, a + L) only:
 *   R(m) = Σ_{i<L} s(a+i)·y((a + i − m) mod n),  m = 0 … n − 1,
 * computed as a linear correlation of s' = s[a … a+L) with the window z(i) = y((a − n + 1 + i) mod n),
 * i < n + L − 1, so that R(n − 1 − j) = Σ_i s'(i)·z(i + j) for j = 0 … n − 1. Any power of two
 * N ≥ n + L − 1 holds this without wrap-around (smaller than the 2n − 1 of the full-length route
 * when L < n). `S` is the full spectrum of s' zero-padded to N, `Z` that of z; two sources
 * share one inverse transform.
 */
export function windowSize(n: number, L: number): number {
  let N = 2;
  while (N < n + L - 1) N *= 2;
  return N;
}

/** Half spectrum (bins 0 … N/2, interleaved, length N + 2) of x zero-padded to N. */
export function halfSpectrum(x: Float64Array, N: number, scratch: Float64Array): Float64Array {
  const f = fftPlan(N);
  scratch.set(x.subarray(0, Math.min(x.length, N)));
  scratch.fill(0, Math.min(x.length, N), N);
  const out = buffers(N).a;
  f.realTransform(out, scratch.subarray(0, N));
  return out.slice(0, N + 2);
}

/** Half spectrum of the y window for segment start a (length n + L − 1, zero-padded to N). */
export function windowSpectrum(y: Float64Array, a: number, L: number, N: number, scratch: Float64Array): Float64Array {
  const n = y.length;
  const len = n + L - 1;
  let src = (((a - n + 1) % n) + n) % n;
  const win = scratch.subarray(0, N);
  for (let i = 0; i < len; i++) {
    win[i] = y[src]!;
    src++;
    if (src === n) src = 0;
  }
  win.fill(0, len, N);
  const f = fftPlan(N);
  const out = buffers(N).a;
  f.realTransform(out, win);
  return out.slice(0, N + 2);
}

/**
 * R1 (and R2) as defined above from half spectra S1 (S2) of the sources and Z1 (Z2) of their
 * windows (the two may belong to different segments). P = conj(S)·Z is Hermitian for real
 * series, so the full spectrum of P1 + i·P2 is built from the half spectra: bin k gets
 * P1[k] + i·P2[k], bin N − k gets conj(P1[k]) + i·conj(P2[k]).
 */
export function windowCorrelation(s1: Float64Array, s2: Float64Array | null, z: Float64Array, n: number, N: number, out1: Float64Array, out2: Float64Array | null, z2: Float64Array = z): void {
  const f = fftPlan(N);
  const { a: prod, b: r } = buffers(N);
  const half = N >> 1;
  const invN = 1 / N;
  for (let k = 0; k <= half; k++) {
    const i = 2 * k;
    const zr = z[i]!;
    const zi = z[i + 1]!;
    const ar = s1[i]!;
    const ai = -s1[i + 1]!;
    const p1r = ar * zr - ai * zi;
    const p1i = ar * zi + ai * zr;
    let p2r = 0;
    let p2i = 0;
    if (s2) {
      const br = s2[i]!;
      const bi = -s2[i + 1]!;
      const wr = z2[i]!;
      const wi = z2[i + 1]!;
      p2r = br * wr - bi * wi;
      p2i = br * wi + bi * wr;
    }
    // The inverse transform as a forward one of the conjugate scaled by 1/N (the conjugate of
    // the result is taken when reading it): saves fft.js's separate scaling pass.
    prod[i] = (p1r - p2i) * invN;
    prod[i + 1] = -(p1i + p2r) * invN;
    if (k > 0 && k < half) {
      const j = 2 * (N - k);
      prod[j] = (p1r + p2i) * invN;
      prod[j + 1] = -(-p1i + p2r) * invN;
    }
  }
  f.transform(r, prod);
  for (let m = 0; m < n; m++) {
    const j = n - 1 - m;
    out1[m] = r[2 * j]!;
    if (out2) out2[m] = -r[2 * j + 1]!;
  }
}

/**
 * First derivative by a Savitzky–Golay quadratic fit over a window of w = 2m + 1 samples,
 * matching scipy.signal.savgol_filter(x, w, 2, deriv=1, delta, mode='interp'): interior samples
 * use the centred least-squares slope Σ k·x[i+k] / Σ k² (a quadratic and a linear fit share it on
 * a symmetric window); the first and last m samples take the derivative of the quadratic fitted
 * to the first / last w samples. Requires x.length ≥ w.
 */
export function savgolDerivative(x: Float64Array, m: number, delta: number, out = new Float64Array(x.length)): Float64Array {
  const n = x.length;
  const w = 2 * m + 1;
  let s2 = 0;
  let s4 = 0;
  for (let k = -m; k <= m; k++) {
    s2 += k * k;
    s4 += k * k * k * k;
  }
  const inv = 1 / (s2 * delta);
  for (let i = m; i < n - m; i++) {
    let acc = 0;
    for (let k = 1; k <= m; k++) acc += k * (x[i + k]! - x[i - k]!);
    out[i] = acc * inv;
  }
  // Edge windows: quadratic b0 + b1·u + b2·u² on u = −m … m; derivative b1 + 2·b2·u.
  const edge = (first: number, from: number, to: number) => {
    let t0 = 0;
    let t1 = 0;
    let t2 = 0;
    for (let k = -m; k <= m; k++) {
      const v = x[first + m + k]!;
      t0 += v;
      t1 += k * v;
      t2 += k * k * v;
    }
    const b1 = t1 / s2;
    const b2 = (w * t2 - s2 * t0) / (w * s4 - s2 * s2);
    for (let i = from; i < to; i++) out[i] = (b1 + 2 * b2 * (i - first - m)) / delta;
  };
  edge(0, 0, Math.min(m, n));
  edge(n - w, Math.max(n - m, m), n);
  return out;
}

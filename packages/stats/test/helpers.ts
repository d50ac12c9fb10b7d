/** Small statistics used as bootstrap callbacks in the tests (textbook definitions). */

/** Plug-in variance Σ(x − x̄)²/n (E&T 1993, eq. 14.1; numpy np.var). */
export function plugInVariance(s: Float64Array, n: number): number {
  let m = 0;
  for (let i = 0; i < n; i++) m += s[i]!;
  m /= n;
  let v = 0;
  for (let i = 0; i < n; i++) v += (s[i]! - m) ** 2;
  return v / n;
}

/** Pearson correlation of the two columns of an n × 2 row-major sample. */
export function correlation2(s: Float64Array, n: number): number {
  let mx = 0, my = 0;
  for (let i = 0; i < n; i++) { mx += s[2 * i]!; my += s[2 * i + 1]!; }
  mx /= n; my /= n;
  let sxy = 0, sxx = 0, syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = s[2 * i]! - mx, dy = s[2 * i + 1]! - my;
    sxy += dx * dy; sxx += dx * dx; syy += dy * dy;
  }
  return sxy / Math.sqrt(sxx * syy);
}

export function meanOf(s: Float64Array, n: number): number {
  let m = 0;
  for (let i = 0; i < n; i++) m += s[i]!;
  return m / n;
}

/** Row-major matrix from nested arrays. */
export function matrixOf(rows: readonly (readonly number[])[] | ArrayLike<ArrayLike<number>>): { data: Float64Array; rows: number; cols: number } {
  const r = Array.from(rows as ArrayLike<ArrayLike<number>>, (x) => Array.from(x));
  return { data: Float64Array.from(r.flat()), rows: r.length, cols: r[0]!.length };
}

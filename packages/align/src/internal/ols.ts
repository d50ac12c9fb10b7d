/** Ordinary least-squares line y = a + b·x on the listed points (centred sums for accuracy). */
export interface Line {
  readonly a: number;
  readonly b: number;
}

/** Fit y = a + b·x over indices `idx` of x, y (or all points when idx is omitted). NaN when < 2 distinct x. */
export function fitLine(x: ArrayLike<number>, y: ArrayLike<number>, idx?: ArrayLike<number>, count?: number): Line {
  const n = idx === undefined ? x.length : (count ?? idx.length);
  if (n < 2) return { a: NaN, b: NaN };
  let mx = 0;
  let my = 0;
  for (let k = 0; k < n; k++) {
    const i = idx === undefined ? k : idx[k]!;
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= n;
  my /= n;
  let sxx = 0;
  let sxy = 0;
  for (let k = 0; k < n; k++) {
    const i = idx === undefined ? k : idx[k]!;
    const dx = x[i]! - mx;
    sxx += dx * dx;
    sxy += dx * (y[i]! - my);
  }
  if (!(sxx > 0)) return { a: NaN, b: NaN };
  const b = sxy / sxx;
  return { a: my - b * mx, b };
}

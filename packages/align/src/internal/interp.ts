/**
 * Linear-interpolation kernels on a uniform grid, in sample-index coordinates: sample i of `x`
 * sits at position i. Values between samples follow numpy.interp's rule (straight line between
 * neighbours); positions outside [0, n − 1] are out of range.
 */

/** Positions within this distance of an integer are treated as that integer (float noise). */
export function snap(p: number): number {
  const r = Math.round(p);
  return Math.abs(p - r) <= 1e-9 + 1e-15 * Math.abs(p) ? r : p;
}

/** Value of x at fractional position p (already snapped); NaN outside [0, n − 1]. */
export function valueAt(x: Float64Array, p: number): number {
  const n = x.length;
  if (!(p >= 0 && p <= n - 1)) return NaN;
  const i = Math.floor(p);
  const f = p - i;
  if (f === 0) return x[i]!;
  const a = x[i]!;
  return a + f * (x[i + 1]! - a);
}

/**
 * Fill out[o + c] (c = 0 … cols − 1) with x at positions p0 + c·step (linear interpolation).
 * Out-of-range positions get NaN. When step is 1 the fractional part is shared by the whole row.
 * Returns true when an in-range value came out NaN (the row read a NaN sample), so callers learn
 * about NaN samples without a second pass.
 */
export function fillLinear(x: Float64Array, p0: number, step: number, cols: number, out: Float64Array, o: number): boolean {
  const n = x.length;
  let sawNaN = false;
  if (step === 1) {
    const ps = snap(p0);
    const i0 = Math.floor(ps);
    const f = ps - i0;
    // Columns whose both neighbours exist: i0 + c ≥ 0 and i0 + c + (f > 0 ? 1 : 0) ≤ n − 1.
    const cLo = Math.max(0, -i0);
    const cHi = Math.min(cols, n - i0 - (f > 0 ? 1 : 0)); // exclusive
    for (let c = 0; c < Math.min(cLo, cols); c++) out[o + c] = NaN;
    if (cHi > cLo) {
      if (f === 0) {
        out.set(x.subarray(i0 + cLo, i0 + cHi), o + cLo);
        for (let c = cLo; c < cHi; c++) {
          if (x[i0 + c] !== x[i0 + c]) {
            sawNaN = true;
            break;
          }
        }
      } else {
        sawNaN = fillShifted(x.subarray(i0 + cLo, i0 + cHi + 1), f, out.subarray(o + cLo, o + cHi));
      }
    }
    for (let c = Math.max(cHi, cLo); c < cols; c++) out[o + c] = NaN;
    return sawNaN;
  }
  for (let c = 0; c < cols; c++) {
    const p = snap(p0 + c * step);
    const v = valueAt(x, p);
    out[o + c] = v;
    if (v !== v && p >= 0 && p <= n - 1) sawNaN = true;
  }
  return sawNaN;
}

/**
 * os[c] = xs[c] + f·(xs[c + 1] − xs[c]) for c = 0 … os.length − 1 (xs holds one more value).
 * Unrolled by four over views, with NaN detection folded into a running sum of v − v (NaN for a
 * NaN or infinite v) and confirmed by a rescan only when that sum is NaN: about 1.7× faster than
 * the plain loop on a 7,000-column row. Returns true when some os[c] is NaN.
 */
function fillShifted(xs: Float64Array, f: number, os: Float64Array): boolean {
  const m = os.length;
  let acc = 0;
  let c = 0;
  for (; c + 4 <= m; c += 4) {
    const x0 = xs[c]!;
    const x1 = xs[c + 1]!;
    const x2 = xs[c + 2]!;
    const x3 = xs[c + 3]!;
    const x4 = xs[c + 4]!;
    const v0 = x0 + f * (x1 - x0);
    const v1 = x1 + f * (x2 - x1);
    const v2 = x2 + f * (x3 - x2);
    const v3 = x3 + f * (x4 - x3);
    os[c] = v0;
    os[c + 1] = v1;
    os[c + 2] = v2;
    os[c + 3] = v3;
    acc += v0 - v0 + (v1 - v1) + (v2 - v2) + (v3 - v3);
  }
  for (; c < m; c++) {
    const a = xs[c]!;
    const v = a + f * (xs[c + 1]! - a);
    os[c] = v;
    acc += v - v;
  }
  if (acc === acc) return false;
  for (let k = 0; k < m; k++) if (os[k] !== os[k]) return true; // ±∞ also makes acc NaN
  return false;
}

/** Fill with the nearest sample (ties round up, as core.timeToIndex); NaN outside [0, n). Returns true when an in-range value is NaN. */
export function fillNearest(x: Float64Array, p0: number, step: number, cols: number, out: Float64Array, o: number): boolean {
  const n = x.length;
  let sawNaN = false;
  for (let c = 0; c < cols; c++) {
    const i = Math.floor(snap(p0 + c * step) + 0.5);
    if (i >= 0 && i < n) {
      const v = x[i]!;
      out[o + c] = v;
      if (v !== v) sawNaN = true;
    } else {
      out[o + c] = NaN;
    }
  }
  return sawNaN;
}

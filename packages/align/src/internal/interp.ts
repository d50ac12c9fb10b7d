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
        let a = x[i0 + cLo]!;
        for (let c = cLo; c < cHi; c++) {
          const b = x[i0 + c + 1]!;
          const v = a + f * (b - a);
          out[o + c] = v;
          if (v !== v) sawNaN = true;
          a = b;
        }
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

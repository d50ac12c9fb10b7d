import { TuningforkError } from '@tuningfork/core';
import type { Scale } from './scale.js';

/** Points kept for drawing, in data units; a NaN in `y` marks a gap (the line is broken there). */
export interface DecimatedLine {
  readonly x: Float64Array;
  readonly y: Float64Array;
}

/** x positions of a line: explicit (increasing) or a uniform grid x[i] = x0 + i / rate. */
export type LineX = Float64Array | { readonly x0: number; readonly rate: number };

/**
 * Reduce a long line to at most four points per pixel column (first, minimum, maximum, last, in
 * sample order), so that drawing the result at the given pixel width rasterises like the full
 * line while the path size depends only on the width.
 *
 * Samples whose x maps outside the scale's pixel range are dropped. A NaN sample ends the
 * current run: the column's points so far are emitted, then a gap (NaN y), so missing data stays
 * visible as a break. Lines with at most `4 × columns` points are returned unchanged (copied).
 *
 * **Method.** M4 aggregation (Jugel et al. 2014): per pixel column keep the samples at the first
 * and last x and at the minimum and maximum y.
 *
 * @param x - Increasing x values (same length as y) or a uniform grid `{ x0, rate }` (rate in samples per x unit).
 * @param y - Values; NaN marks missing samples.
 * @param scale - The x scale of the panel (its range gives the pixel columns).
 * @param columnsPerPixel - Columns per pixel (2 for high-density screens). @defaultValue 1
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when explicit x and y lengths differ.
 *
 * References
 * - Jugel, U., Jerzak, Z., Hackenbroich, G. & Markl, V. (2014). M4: a visualization-oriented time
 *   series data aggregation. Proc. VLDB Endowment 7(10):797–808. doi:10.14778/2732951.2732953
 */
export function decimateLine(x: LineX, y: Float64Array, scale: Scale, columnsPerPixel = 1): DecimatedLine {
  const n = y.length;
  const explicit = x instanceof Float64Array;
  if (explicit && x.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `decimateLine: x has ${x.length} values but y has ${n}.`, { x: x.length, y: n });
  }
  const p0 = Math.min(scale.range[0], scale.range[1]);
  const p1 = Math.max(scale.range[0], scale.range[1]);
  const cols = Math.max(1, Math.ceil((p1 - p0) * columnsPerPixel));
  const xAt = (i: number): number => (explicit ? x[i]! : x.x0 + i / x.rate);
  if (n <= 4 * cols) {
    const xs = new Float64Array(n);
    for (let i = 0; i < n; i++) xs[i] = xAt(i);
    return { x: xs, y: Float64Array.from(y) };
  }
  const cap = 5 * cols + 8;
  const emit4 = (i0: number, i1: number, i2: number, i3: number) => {
    // the (up to four) distinct indices in sample order
    const lo = i1 < i2 ? i1 : i2;
    const hi = i1 < i2 ? i2 : i1;
    push(xAt(i0), y[i0]!);
    if (lo !== i0) push(xAt(lo), y[lo]!);
    if (hi !== lo && hi !== i0) push(xAt(hi), y[hi]!);
    if (i3 !== hi && i3 !== lo && i3 !== i0) push(xAt(i3), y[i3]!);
  };
  let ox = new Float64Array(cap);
  let oy = new Float64Array(cap);
  let m = 0;
  const push = (xv: number, yv: number) => {
    if (m === ox.length) {
      const nx = new Float64Array(ox.length * 2);
      nx.set(ox);
      ox = nx;
      const ny = new Float64Array(oy.length * 2);
      ny.set(oy);
      oy = ny;
    }
    ox[m] = xv;
    oy[m] = yv;
    m++;
  };
  // Fast path: a uniform grid on a linear scale. Column c holds the samples with index in
  // [start(c), start(c + 1)), found by solving the affine pixel map for i, so the inner loop only
  // compares values.
  if (!explicit && scale.type === 'linear') {
    const k0 = (scale.range[1] - scale.range[0]) / (scale.domain[1] - scale.domain[0]);
    // pixel(i) = a + b·i
    const b = (k0 / x.rate) * columnsPerPixel;
    const a = (scale.range[0] + (x.x0 - scale.domain[0]) * k0 - p0) * columnsPerPixel;
    if (b > 0) {
      // Column position of sample i, computed exactly as the general path computes it.
      const pos = (i: number): number => (scale.range[0] + (x.x0 + i / x.rate - scale.domain[0]) * k0 - p0) * columnsPerPixel;
      // First index whose column is ≥ c: a guess from the affine form, corrected with pos().
      const startOf = (c: number): number => {
        let i = Math.ceil((c - a) / b);
        if (i < 0) i = 0;
        if (i > n) i = n;
        while (i > 0 && pos(i - 1) >= c) i--;
        while (i < n && pos(i) < c) i++;
        return i;
      };
      const limit = (p1 - p0) * columnsPerPixel;
      let iEnd = startOf(cols);
      while (iEnd > 0 && pos(iEnd - 1) > limit) iEnd--;
      while (iEnd < n && pos(iEnd) <= limit) iEnd++;
      let s = startOf(0);
      let gapOpen = false;
      for (let c = 0; c < cols && s < iEnd; c++) {
        const e = c === cols - 1 ? iEnd : Math.min(iEnd, startOf(c + 1));
        if (e <= s) continue;
        let first = -1, mn = -1, mx = -1, last = -1;
        let vMin = 0, vMax = 0;
        let sawNaN = false;
        for (let i = s; i < e; i++) {
          const v = y[i]!;
          if (v !== v) {
            if (first >= 0) {
              emit4(first, mn, mx, last);
              first = -1;
            }
            sawNaN = true;
            continue;
          }
          if (sawNaN) {
            if (m > 0 && !gapOpen) {
              push(xAt(i - 1), NaN);
              gapOpen = true;
            }
            sawNaN = false;
          }
          if (first < 0) {
            first = mn = mx = last = i;
            vMin = vMax = v;
            gapOpen = false;
            continue;
          }
          last = i;
          if (v < vMin) {
            vMin = v;
            mn = i;
          } else if (v > vMax) {
            vMax = v;
            mx = i;
          }
        }
        if (first >= 0) emit4(first, mn, mx, last);
        if (sawNaN && m > 0 && !gapOpen) {
          push(xAt(e - 1), NaN);
          gapOpen = true;
        }
        s = e;
      }
      return { x: ox.slice(0, m), y: oy.slice(0, m) };
    }
  }
  // General path: per-sample pixel mapping (explicit x or non-linear scales).
  const linear = scale.type === 'linear';
  const d0 = scale.domain[0];
  const k = (scale.range[1] - scale.range[0]) / (scale.domain[1] - scale.domain[0]);
  const r0 = scale.range[0];
  let col = -1;
  let iFirst = -1, iMin = -1, iMax = -1, iLast = -1;
  const flush = () => {
    if (iFirst < 0) return;
    // Emit the (up to four) distinct indices in sample order.
    const a = [iFirst, iMin, iMax, iLast].sort((p, q) => p - q);
    let prev = -1;
    for (const i of a) {
      if (i !== prev) push(xAt(i), y[i]!);
      prev = i;
    }
    iFirst = iMin = iMax = iLast = -1;
  };
  for (let i = 0; i < n; i++) {
    const xv = explicit ? x[i]! : x.x0 + i / x.rate;
    const p = linear ? r0 + (xv - d0) * k : scale.map(xv);
    if (!(p >= p0 && p <= p1)) continue;
    const c = Math.min(cols - 1, Math.floor((p - p0) * columnsPerPixel));
    const v = y[i]!;
    if (v !== v) {
      flush();
      if (m > 0 && oy[m - 1] === oy[m - 1]) push(xv, NaN);
      col = -1;
      continue;
    }
    if (c !== col) {
      flush();
      col = c;
      iFirst = iMin = iMax = iLast = i;
      continue;
    }
    iLast = i;
    if (v < y[iMin]!) iMin = i;
    if (v > y[iMax]!) iMax = i;
  }
  flush();
  return { x: ox.slice(0, m), y: oy.slice(0, m) };
}

/**
 * Envelope of a band (low ≤ high) reduced to at most two points per pixel column: at the column's
 * first and last x, the column's maximum of `high` and minimum of `low`, so the drawn band covers
 * every sample's interval. Bands with at most `2 × columns` points are returned unchanged (copied).
 * A NaN in low or high breaks the band (NaN in both outputs).
 *
 * @param x - Increasing x values.
 * @param low - Lower edge, same length.
 * @param high - Upper edge, same length.
 * @param scale - x scale of the panel.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when lengths differ.
 */
export function decimateBand(x: Float64Array, low: Float64Array, high: Float64Array, scale: Scale): { x: Float64Array; low: Float64Array; high: Float64Array } {
  const n = x.length;
  if (low.length !== n || high.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `decimateBand: x, low and high must have equal lengths, got ${n}, ${low.length}, ${high.length}.`, { x: n, low: low.length, high: high.length });
  }
  const p0 = Math.min(scale.range[0], scale.range[1]);
  const p1 = Math.max(scale.range[0], scale.range[1]);
  const cols = Math.max(1, Math.ceil(p1 - p0));
  if (n <= 2 * cols) return { x: Float64Array.from(x), low: Float64Array.from(low), high: Float64Array.from(high) };
  const ox: number[] = [];
  const ol: number[] = [];
  const oh: number[] = [];
  let col = -1;
  let xa = NaN, xb = NaN, lo = Infinity, hi = -Infinity;
  const flush = () => {
    if (col < 0) return;
    ox.push(xa, xb);
    ol.push(lo, lo);
    oh.push(hi, hi);
    col = -1;
  };
  for (let i = 0; i < n; i++) {
    const p = scale.map(x[i]!);
    if (!(p >= p0 && p <= p1)) continue;
    const l = low[i]!, h = high[i]!;
    if (l !== l || h !== h) {
      flush();
      if (ox.length > 0 && ol[ol.length - 1] === ol[ol.length - 1]) {
        ox.push(x[i]!);
        ol.push(NaN);
        oh.push(NaN);
      }
      continue;
    }
    const c = Math.min(cols - 1, Math.floor(p - p0));
    if (c !== col) {
      flush();
      col = c;
      xa = xb = x[i]!;
      lo = l;
      hi = h;
      continue;
    }
    xb = x[i]!;
    if (l < lo) lo = l;
    if (h > hi) hi = h;
  }
  flush();
  return { x: Float64Array.from(ox), low: Float64Array.from(ol), high: Float64Array.from(oh) };
}

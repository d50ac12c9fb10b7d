/**
 * Order statistics without sorting: quickselect and type-7 (linear) quantiles on a scratch
 * buffer. Inputs are finite numbers; the buffer is reordered in place.
 */

/**
 * Rearrange a[lo..hi] (inclusive) so that a[k] holds the value it would hold if that range were
 * sorted, everything in [lo, k) is ≤ a[k] and everything in (k, hi] is ≥ a[k].
 * Hoare partitioning with a median-of-three pivot (Hoare 1961, Algorithm 65 FIND).
 */
export function selectInPlace(a: Float64Array, lo: number, hi: number, k: number): void {
  while (hi > lo) {
    if (hi - lo === 1) {
      if (a[hi]! < a[lo]!) { const t = a[lo]!; a[lo] = a[hi]!; a[hi] = t; }
      return;
    }
    const mid = (lo + hi) >>> 1; // lo < mid < hi
    // Median of three into a[mid], with a[lo] ≤ a[mid] ≤ a[hi].
    let x = a[lo]!;
    let y = a[mid]!;
    let z = a[hi]!;
    if (y < x) { const t = x; x = y; y = t; }
    if (z < y) { const t = y; y = z; z = t; if (y < x) { const u = x; x = y; y = u; } }
    a[lo] = x; a[mid] = y; a[hi] = z;
    if (hi - lo <= 2) return;
    const pivot = y;
    let i = lo;
    let j = hi;
    for (;;) {
      do i++; while (a[i]! < pivot);
      do j--; while (a[j]! > pivot);
      if (i >= j) break;
      const t = a[i]!; a[i] = a[j]!; a[j] = t;
    }
    // Now a[lo..j] ≤ pivot ≤ a[j+1..hi].
    if (k <= j) hi = j;
    else lo = j + 1;
  }
}

/** Smallest value in a[lo..hi] (inclusive). */
export function minInRange(a: Float64Array, lo: number, hi: number): number {
  let m = a[lo]!;
  for (let i = lo + 1; i <= hi; i++) if (a[i]! < m) m = a[i]!;
  return m;
}

/** numpy's `_lerp`: a + (b − a)·t, computed from the nearer end so it stays monotone. */
export function lerp(a: number, b: number, t: number): number {
  const d = b - a;
  return t >= 0.5 ? b - d * (1 - t) : a + d * t;
}

/** Order statistics at ranks r and r + 1 (r + 1 clipped to n − 1) of a[0..n), in out[k], out[k + 1]. */
interface RankPair { rank: number; value: number; next: number }

const SAMPLE = 64;
const MARGIN = 6;

/** Scratch for `twoQuantilesInPlace` (grows on demand; module-level, single-threaded). */
let bufA = new Float64Array(1024);
let bufB = new Float64Array(1024);
const sample = new Float64Array(SAMPLE);
const pairA: RankPair = { rank: 0, value: NaN, next: NaN };
const pairB: RankPair = { rank: 0, value: NaN, next: NaN };

/**
 * Values at ranks r and r + 1 of a[0..n) for two ranks at once, without reordering a when the
 * sample brackets hold. A strided sample of 64 values is sorted; for each rank, sample values a
 * few ranks below and above bracket it; one pass counts values below the lower bracket and
 * copies the values inside; the rank is then selected within the copy. If a bracket misses (the
 * counts show the rank outside the copy) that rank falls back to quickselect on a[0..n).
 * Same values as a full sort, in O(n) with one predictable pass (Floyd & Rivest 1975 idea).
 */
function rankPairs(a: Float64Array, n: number, p1: RankPair, p2: RankPair): void {
  const step = Math.floor(n / SAMPLE);
  for (let k = 0; k < SAMPLE; k++) sample[k] = a[k * step]!;
  sample.sort();
  const bracket = (r: number): [number, number] => {
    const lo = Math.floor((r * SAMPLE) / n) - MARGIN;
    const hi = Math.ceil(((r + 1) * SAMPLE) / n) + MARGIN;
    return [lo < 0 ? -Infinity : sample[lo]!, hi >= SAMPLE ? Infinity : sample[hi]!];
  };
  const [l1, u1] = bracket(p1.rank);
  const [l2, u2] = bracket(p2.rank);
  if (bufA.length < n) { bufA = new Float64Array(n); bufB = new Float64Array(n); }
  let below1 = 0, below2 = 0, m1 = 0, m2 = 0;
  for (let i = 0; i < n; i++) {
    const v = a[i]!;
    if (v < l1) below1++;
    else if (v <= u1) bufA[m1++] = v;
    if (v < l2) below2++;
    else if (v <= u2) bufB[m2++] = v;
  }
  finishRank(a, n, p1, bufA, m1, below1);
  finishRank(a, n, p2, bufB, m2, below2);
}

function finishRank(a: Float64Array, n: number, p: RankPair, buf: Float64Array, m: number, below: number): void {
  const r = p.rank;
  const r2 = Math.min(r + 1, n - 1);
  if (below <= r && below + m > r2) {
    const k = r - below;
    selectInPlace(buf, 0, m - 1, k);
    p.value = buf[k]!;
    p.next = r2 > r ? minInRange(buf, k + 1, m - 1) : p.value;
    return;
  }
  selectInPlace(a, 0, n - 1, r);
  p.value = a[r]!;
  p.next = r2 > r ? minInRange(a, r + 1, n - 1) : p.value;
}

/**
 * Two type-7 quantiles (numpy's default 'linear' method) of a[0..n) at probabilities p1, p2,
 * written to out[0], out[1]. May reorder a[0..n). NaN p gives NaN.
 *
 * The virtual index is h = (n − 1)·p; the result interpolates the order statistics ⌊h⌋ and
 * ⌊h⌋ + 1 with weight h − ⌊h⌋ (Hyndman & Fan 1996, definition 7) by numpy's `_lerp`.
 */
export function twoQuantilesInPlace(a: Float64Array, n: number, p1: number, p2: number, out: Float64Array): void {
  if (n === 0) { out[0] = NaN; out[1] = NaN; return; }
  const h1 = clampIndex((n - 1) * p1, n);
  const h2 = clampIndex((n - 1) * p2, n);
  if (!(h1 === h1) || !(h2 === h2) || n < 4 * SAMPLE) {
    out[0] = h1 === h1 ? quantileInPlace(a, n, p1) : NaN;
    out[1] = h2 === h2 ? quantileInPlace(a, n, p2) : NaN;
    return;
  }
  pairA.rank = Math.floor(h1);
  pairB.rank = Math.floor(h2);
  rankPairs(a, n, pairA, pairB);
  const g1 = h1 - pairA.rank;
  const g2 = h2 - pairB.rank;
  out[0] = g1 > 0 ? lerp(pairA.value, pairA.next, g1) : pairA.value;
  out[1] = g2 > 0 ? lerp(pairB.value, pairB.next, g2) : pairB.value;
}

function clampIndex(h: number, n: number): number {
  return h < 0 ? 0 : h > n - 1 ? n - 1 : h;
}

/** One type-7 quantile of a[0..n) at probability p (reorders a). */
export function quantileInPlace(a: Float64Array, n: number, p: number): number {
  if (n === 0 || !(p === p)) return NaN;
  let h = (n - 1) * p;
  if (h < 0) h = 0; if (h > n - 1) h = n - 1;
  const i = Math.floor(h);
  selectInPlace(a, 0, n - 1, i);
  const v = a[i]!;
  const g = h - i;
  return g > 0 && i + 1 < n ? lerp(v, minInRange(a, i + 1, n - 1), g) : v;
}

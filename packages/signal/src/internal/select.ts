/**
 * Order statistics on Float64Array without sorting: Floyd–Rivest-style selection with
 * median-of-three pivots (expected O(n)). `select` reorders `a[lo..hi]` in place.
 */

/** Partially order a[lo..hi] so that a[k] is the k-th smallest (0-based) and return it. */
export function select(a: Float64Array, k: number, lo = 0, hi = a.length - 1): number {
  while (hi > lo) {
    if (hi - lo < 16) {
      for (let i = lo + 1; i <= hi; i++) {
        const v = a[i]!;
        let j = i - 1;
        while (j >= lo && a[j]! > v) {
          a[j + 1] = a[j]!;
          j--;
        }
        a[j + 1] = v;
      }
      return a[k]!;
    }
    const mid = (lo + hi) >>> 1;
    // Median of three as pivot, moved to a[lo].
    let x = a[lo]!, y = a[mid]!, z = a[hi]!;
    if (x > y) { const t = x; x = y; y = t; }
    if (y > z) { const t = y; y = z; z = t; if (x > y) { const t2 = x; x = y; y = t2; } }
    const pivot = y;
    // Hoare partition.
    let i = lo - 1;
    let j = hi + 1;
    for (;;) {
      do i++; while (a[i]! < pivot);
      do j--; while (a[j]! > pivot);
      if (i >= j) break;
      const t = a[i]!;
      a[i] = a[j]!;
      a[j] = t;
    }
    if (k <= j) hi = j;
    else lo = j + 1;
  }
  return a[k]!;
}

/** Smallest value of a[lo..hi]. */
function minOf(a: Float64Array, lo: number, hi: number): number {
  let m = Infinity;
  for (let i = lo; i <= hi; i++) if (a[i]! < m) m = a[i]!;
  return m;
}

/** Median of a[0..n) as numpy (mean of the two middle values for even n); reorders a. NaN for n = 0. */
export function medianInPlace(a: Float64Array, n = a.length): number {
  if (n === 0) return NaN;
  const k = (n - 1) >> 1;
  const lower = select(a, k, 0, n - 1);
  if (n % 2 === 1) return lower;
  const upper = minOf(a, k + 1, n - 1);
  return (lower + upper) / 2;
}

/** Median of a copy (input untouched). NaN when any value is NaN (propagates) or n = 0. */
export function median(x: ArrayLike<number>): number {
  for (let i = 0; i < x.length; i++) if (Number.isNaN(x[i]!)) return NaN;
  return medianInPlace(Float64Array.from(x));
}

/** Raw median absolute deviation about the median, median|x − median(x)| (copy; NaN propagates). */
export function mad(x: ArrayLike<number>): { median: number; mad: number } {
  const m = median(x);
  if (Number.isNaN(m)) return { median: NaN, mad: NaN };
  const d = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) d[i] = Math.abs(x[i]! - m);
  return { median: m, mad: medianInPlace(d) };
}

/**
 * Median of x (numpy's convention: mean of the two middle values for even n), exact, without
 * reordering or copying x. A strided sample of about 4,096 values brackets the median; one pass
 * counts the values below the bracket and collects those inside it, and the median is selected
 * among the collected few. When the bracket misses (or holds too many values) it falls back to a
 * full selection on a copy, so the result is exact either way. x must not hold NaN. NaN for n = 0.
 */
export function medianOf(x: Float64Array): number {
  const n = x.length;
  if (n < 1 << 14) return medianInPlace(Float64Array.from(x));
  const k1 = (n - 1) >> 1;
  const k2 = n >> 1;
  const stride = Math.floor(n / 4096);
  const ns = Math.floor((n - 1) / stride) + 1;
  const sample = new Float64Array(ns);
  for (let i = 0, j = 0; i < n; i += stride, j++) sample[j] = x[i]!;
  // Ranks about 4 standard errors of a sample quantile either side of the middle.
  const half = Math.ceil(4 * Math.sqrt(ns) / 2) + 2;
  const mid = (ns - 1) >> 1;
  const lo = select(sample, Math.max(0, mid - half));
  const hi = select(sample, Math.min(ns - 1, mid + half));
  const cap = Math.max(1 << 12, Math.ceil((n * 8 * half) / ns));
  const buf = new Float64Array(cap);
  let below = 0;
  let cnt = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i]!;
    if (v < lo) below++;
    else if (v <= hi) {
      if (cnt === cap) return medianInPlace(Float64Array.from(x));
      buf[cnt++] = v;
    }
  }
  if (!(below <= k1 && k2 < below + cnt)) return medianInPlace(Float64Array.from(x));
  const v1 = select(buf, k1 - below, 0, cnt - 1);
  if (k2 === k1) return v1;
  return (v1 + minOf(buf, k1 - below + 1, cnt - 1)) / 2;
}

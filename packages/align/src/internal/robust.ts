/** Median of the finite values of `x` (NaN when there are none). Does not modify `x`. */
export function median(x: ArrayLike<number>): number {
  let n = 0;
  for (let i = 0; i < x.length; i++) if (Number.isFinite(x[i])) n++;
  if (n === 0) return NaN;
  const s = new Float64Array(n);
  for (let i = 0, k = 0; i < x.length; i++) if (Number.isFinite(x[i])) s[k++] = x[i]!;
  s.sort();
  const h = n >> 1;
  return n % 2 === 1 ? s[h]! : 0.5 * (s[h - 1]! + s[h]!);
}

/** Normal-consistency factor of the median absolute deviation: 1 / Φ⁻¹(3/4). */
export const MAD_SCALE = 1.482602218505602;

/** Robust sd: 1.4826 × median |x − median(x)| over finite values. */
export function robustSd(x: ArrayLike<number>, center = median(x)): number {
  let n = 0;
  for (let i = 0; i < x.length; i++) if (Number.isFinite(x[i])) n++;
  const d = new Float64Array(n);
  for (let i = 0, k = 0; i < x.length; i++) if (Number.isFinite(x[i])) d[k++] = Math.abs(x[i]! - center);
  return MAD_SCALE * median(d);
}

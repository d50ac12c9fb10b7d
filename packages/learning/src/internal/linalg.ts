// Small dense linear algebra for k × k symmetric matrices (k ≤ ~10), row-major.

/** In-place Cholesky factor L (lower) of a symmetric matrix; false when not positive definite. */
export function cholesky(a: Float64Array, k: number): boolean {
  for (let j = 0; j < k; j++) {
    let d = a[j * k + j]!;
    for (let m = 0; m < j; m++) d -= a[j * k + m]! * a[j * k + m]!;
    if (!(d > 0) || !Number.isFinite(d)) return false;
    const l = Math.sqrt(d);
    a[j * k + j] = l;
    for (let i = j + 1; i < k; i++) {
      let s = a[i * k + j]!;
      for (let m = 0; m < j; m++) s -= a[i * k + m]! * a[j * k + m]!;
      a[i * k + j] = s / l;
    }
    for (let i = 0; i < j; i++) a[i * k + j] = 0;
  }
  return true;
}

/** Inverse of a symmetric positive-definite matrix, or null when it is not positive definite. */
export function inverseSpd(h: Float64Array, k: number): Float64Array | null {
  const l = Float64Array.from(h);
  if (!cholesky(l, k)) return null;
  // inverse of L (lower triangular)
  const li = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    li[j * k + j] = 1 / l[j * k + j]!;
    for (let i = j + 1; i < k; i++) {
      let s = 0;
      for (let m = j; m < i; m++) s -= l[i * k + m]! * li[m * k + j]!;
      li[i * k + j] = s / l[i * k + i]!;
    }
  }
  // H⁻¹ = L⁻ᵀ L⁻¹
  const out = new Float64Array(k * k);
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let m = i; m < k; m++) s += li[m * k + i]! * li[m * k + j]!;
      out[i * k + j] = s;
      out[j * k + i] = s;
    }
  }
  return out;
}

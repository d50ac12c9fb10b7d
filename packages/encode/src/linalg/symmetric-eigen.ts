/**
 * Eigendecomposition of a real symmetric matrix: Householder reduction to tridiagonal form
 * followed by the implicit QL algorithm with Wilkinson-type shifts, accumulating eigenvectors.
 *
 * Method: the classical two-stage route of the Handbook for Automatic Computation (procedures
 * tred2 and tql2). Stage 1 applies n − 2 Householder reflections A → QᵀAQ = T (tridiagonal) and
 * accumulates Q. Stage 2 runs implicitly shifted QL sweeps on T, applying each plane rotation to
 * the accumulated vectors, until every off-diagonal element is negligible relative to the
 * largest |d| + |e| seen. Cost ≈ 9n³ flops; backward stable (eigenvalues accurate to
 * ε·‖A‖ absolutely).
 *
 * References
 * - Martin, R. S., Reinsch, C. & Wilkinson, J. H. (1968). Householder's tridiagonalization of a
 *   symmetric matrix. Numerische Mathematik 11:181–195. doi:10.1007/BF02161841
 * - Bowdler, H., Martin, R. S., Reinsch, C. & Wilkinson, J. H. (1968). The QR and QL algorithms
 *   for symmetric matrices. Numerische Mathematik 11:293–306. doi:10.1007/BF02166681
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., §8.3. Johns Hopkins.
 * (Handbook DOIs from memory.)
 */

/** Result of {@link symmetricEigen}: A = V·diag(values)·Vᵀ. */
export interface SymmetricEigen {
  /** Eigenvalues in ascending order. */
  readonly values: Float64Array;
  /** Eigenvectors as the columns of a row-major n × n matrix: vector k is vectors[i * n + k]. */
  readonly vectors: Float64Array;
  readonly n: number;
}

const EPS = 2 ** -52;

/**
 * Eigenvalues and eigenvectors of a symmetric n × n matrix (row-major; only symmetry is assumed,
 * the lower triangle is read). The input is not modified.
 *
 * Returns NaN-free output for finite input. The caller validates finiteness; internal kernels
 * trust their input. Throws a plain Error only if QL fails to converge in 60 sweeps per
 * eigenvalue (never observed for finite symmetric input).
 */
export function symmetricEigen(a: Float64Array, n: number): SymmetricEigen {
  const v = Float64Array.from(a.subarray(0, n * n));
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  if (n === 0) return { values: d, vectors: v, n };
  if (n === 1) {
    d[0] = v[0]!;
    v[0] = 1;
    return { values: d, vectors: v, n };
  }
  tridiagonalize(v, d, e, n);
  qlImplicit(v, d, e, n);
  sortAscending(v, d, n);
  return { values: d, vectors: v, n };
}

/** Householder reduction (tred2); v holds A on entry and the accumulated Q on exit. */
function tridiagonalize(v: Float64Array, d: Float64Array, e: Float64Array, n: number): void {
  for (let j = 0; j < n; j++) d[j] = v[(n - 1) * n + j]!;
  for (let i = n - 1; i > 0; i--) {
    let scale = 0;
    let h = 0;
    for (let k = 0; k < i; k++) scale += Math.abs(d[k]!);
    if (scale === 0) {
      e[i] = d[i - 1]!;
      for (let j = 0; j < i; j++) {
        d[j] = v[(i - 1) * n + j]!;
        v[i * n + j] = 0;
        v[j * n + i] = 0;
      }
    } else {
      for (let k = 0; k < i; k++) {
        d[k] = d[k]! / scale;
        h += d[k]! * d[k]!;
      }
      let f = d[i - 1]!;
      let g = Math.sqrt(h);
      if (f > 0) g = -g;
      e[i] = scale * g;
      h -= f * g;
      d[i - 1] = f - g;
      for (let j = 0; j < i; j++) e[j] = 0;
      for (let j = 0; j < i; j++) {
        f = d[j]!;
        v[j * n + i] = f;
        g = e[j]! + v[j * n + j]! * f;
        for (let k = j + 1; k <= i - 1; k++) {
          const vkj = v[k * n + j]!;
          g += vkj * d[k]!;
          e[k] = e[k]! + vkj * f;
        }
        e[j] = g;
      }
      f = 0;
      for (let j = 0; j < i; j++) {
        e[j] = e[j]! / h;
        f += e[j]! * d[j]!;
      }
      const hh = f / (h + h);
      for (let j = 0; j < i; j++) e[j] = e[j]! - hh * d[j]!;
      for (let j = 0; j < i; j++) {
        f = d[j]!;
        g = e[j]!;
        for (let k = j; k <= i - 1; k++) v[k * n + j] = v[k * n + j]! - (f * e[k]! + g * d[k]!);
        d[j] = v[(i - 1) * n + j]!;
        v[i * n + j] = 0;
      }
    }
    d[i] = h;
  }
  // Accumulate the transformations.
  for (let i = 0; i < n - 1; i++) {
    v[(n - 1) * n + i] = v[i * n + i]!;
    v[i * n + i] = 1;
    const h = d[i + 1]!;
    if (h !== 0) {
      for (let k = 0; k <= i; k++) d[k] = v[k * n + i + 1]! / h;
      for (let j = 0; j <= i; j++) {
        let g = 0;
        for (let k = 0; k <= i; k++) g += v[k * n + i + 1]! * v[k * n + j]!;
        for (let k = 0; k <= i; k++) v[k * n + j] = v[k * n + j]! - g * d[k]!;
      }
    }
    for (let k = 0; k <= i; k++) v[k * n + i + 1] = 0;
  }
  for (let j = 0; j < n; j++) {
    d[j] = v[(n - 1) * n + j]!;
    v[(n - 1) * n + j] = 0;
  }
  v[(n - 1) * n + n - 1] = 1;
  e[0] = 0;
}

/** Implicit QL iterations on the tridiagonal (d, e), rotating the columns of v (tql2). */
function qlImplicit(v: Float64Array, d: Float64Array, e: Float64Array, n: number): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i]!;
  e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]!) + Math.abs(e[l]!));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]!) <= EPS * tst1) break;
      m++;
    }
    if (m > l) {
      let iter = 0;
      do {
        if (++iter > 60) throw new Error('symmetricEigen: QL iteration did not converge');
        let g = d[l]!;
        let p = (d[l + 1]! - g) / (2 * e[l]!);
        let r = Math.hypot(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l]! / (p + r);
        d[l + 1] = e[l]! * (p + r);
        const dl1 = d[l + 1]!;
        let h = g - d[l]!;
        for (let i = l + 2; i < n; i++) d[i] = d[i]! - h;
        f += h;
        p = d[m]!;
        let c = 1;
        let c2 = c;
        let c3 = c;
        const el1 = e[l + 1]!;
        let s = 0;
        let s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i]!;
          h = c * p;
          r = Math.hypot(p, e[i]!);
          e[i + 1] = s * r;
          s = e[i]! / r;
          c = p / r;
          p = c * d[i]! - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]!);
          for (let k = 0; k < n; k++) {
            const row = k * n;
            const hk = v[row + i + 1]!;
            const vk = v[row + i]!;
            v[row + i + 1] = s * vk + c * hk;
            v[row + i] = c * vk - s * hk;
          }
        }
        p = (-s * s2 * c3 * el1 * e[l]!) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]!) > EPS * tst1);
    }
    d[l] = d[l]! + f;
    e[l] = 0;
  }
}

/** Selection sort of eigenpairs into ascending order (n is small). */
function sortAscending(v: Float64Array, d: Float64Array, n: number): void {
  for (let i = 0; i < n - 1; i++) {
    let k = i;
    let p = d[i]!;
    for (let j = i + 1; j < n; j++) {
      if (d[j]! < p) {
        k = j;
        p = d[j]!;
      }
    }
    if (k !== i) {
      d[k] = d[i]!;
      d[i] = p;
      for (let j = 0; j < n; j++) {
        const row = j * n;
        const t = v[row + i]!;
        v[row + i] = v[row + k]!;
        v[row + k] = t;
      }
    }
  }
}

/**
 * Cholesky factorisation A = LLᵀ of a symmetric positive-definite matrix, with triangular solves.
 *
 * Method: the column-oriented (left-looking) algorithm; row-major storage, only the lower
 * triangle of the input is read. Backward stable for positive-definite A (Higham 2002, ch. 10).
 * A non-positive pivot means A is not (numerically) positive definite; the factorisation then
 * reports the failing column instead of producing NaN.
 *
 * References
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., §4.2. Johns Hopkins.
 * - Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms, 2nd ed., ch. 10.
 *   SIAM. doi:10.1137/1.9780898718027
 */

/** Lower-triangular Cholesky factor (row-major n × n; the strict upper triangle is zero). */
export interface CholeskyFactor {
  readonly l: Float64Array;
  readonly n: number;
}

/**
 * Factor a symmetric positive-definite n × n matrix. Returns the factor, or the index of the
 * first column whose pivot is not positive (a number) when A is not positive definite.
 */
export function cholesky(a: Float64Array, n: number): CholeskyFactor | number {
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const rj = j * n;
    let s = a[rj + j]!;
    for (let k = 0; k < j; k++) s -= l[rj + k]! * l[rj + k]!;
    if (!(s > 0)) return j;
    const ljj = Math.sqrt(s);
    l[rj + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let t = a[ri + j]!;
      for (let k = 0; k < j; k++) t -= l[ri + k]! * l[rj + k]!;
      l[ri + j] = t / ljj;
    }
  }
  return { l, n };
}

/** Solve LLᵀx = b in place (b is overwritten with x). */
export function choleskySolveInPlace(f: CholeskyFactor, b: Float64Array): Float64Array {
  const { l, n } = f;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= l[ri + k]! * b[k]!;
    b[i] = s / l[ri + i]!;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i]!;
    for (let k = i + 1; k < n; k++) s -= l[k * n + i]! * b[k]!;
    b[i] = s / l[i * n + i]!;
  }
  return b;
}

/** The inverse A⁻¹ = L⁻ᵀL⁻¹ (row-major n × n, symmetric). */
export function choleskyInverse(f: CholeskyFactor): Float64Array {
  const { n } = f;
  const inv = new Float64Array(n * n);
  const col = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    col.fill(0);
    col[j] = 1;
    choleskySolveInPlace(f, col);
    for (let i = 0; i < n; i++) inv[i * n + j] = col[i]!;
  }
  return inv;
}

import { TuningforkError } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';

/**
 * Solve the square system A·x = b by LU decomposition with partial (row) pivoting.
 *
 * Gaussian elimination choosing the largest remaining pivot in each column (as LAPACK `dgesv`).
 * Neither input is modified. Intended for small dense systems (n up to a few hundred).
 *
 * @param A - n × n row-major matrix.
 * @param b - Right-hand side, length n.
 * @returns x, length n.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when A is not square or b has the wrong length;
 *   TF_FIT_FAILED when A is singular to working precision (a zero pivot).
 *
 * References
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., §3.4. Johns Hopkins.
 */
export function solveLinear(A: Matrix, b: ArrayLike<number>): Float64Array {
  const n = A.rows;
  if (A.cols !== n || A.data.length !== n * n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `solveLinear: A must be square, got ${A.rows} × ${A.cols}.`, { rows: A.rows, cols: A.cols });
  }
  if (b.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `solveLinear: b has length ${b.length}, expected ${n}.`, { length: b.length, expected: n });
  }
  const lu = Float64Array.from(A.data);
  const x = Float64Array.from(b);
  for (let k = 0; k < n; k++) {
    let piv = k;
    let best = Math.abs(lu[k * n + k]!);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(lu[i * n + k]!);
      if (v > best) {
        best = v;
        piv = i;
      }
    }
    if (best === 0 || !Number.isFinite(best)) {
      throw new TuningforkError('TF_FIT_FAILED', `solveLinear: matrix is singular (no usable pivot in column ${k}).`, { column: k });
    }
    if (piv !== k) {
      for (let j = 0; j < n; j++) {
        const t = lu[k * n + j]!;
        lu[k * n + j] = lu[piv * n + j]!;
        lu[piv * n + j] = t;
      }
      const t = x[k]!;
      x[k] = x[piv]!;
      x[piv] = t;
    }
    const inv = 1 / lu[k * n + k]!;
    for (let i = k + 1; i < n; i++) {
      const l = lu[i * n + k]! * inv;
      if (l === 0) continue;
      lu[i * n + k] = l;
      for (let j = k + 1; j < n; j++) lu[i * n + j] = lu[i * n + j]! - l * lu[k * n + j]!;
      x[i] = x[i]! - l * x[k]!;
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i]!;
    for (let j = i + 1; j < n; j++) s -= lu[i * n + j]! * x[j]!;
    x[i] = s / lu[i * n + i]!;
  }
  return x;
}

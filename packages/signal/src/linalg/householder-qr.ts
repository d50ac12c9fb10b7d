import { TuningforkError } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';

/**
 * A Householder QR factorisation A = Q·R of an n × p matrix (n ≥ p), stored compactly.
 * Q is kept as p Householder reflectors; R is upper triangular p × p.
 */
export interface QRFactorization {
  readonly rows: number;
  readonly cols: number;
  /** Diagonal of R (signs as produced; |R_kk| measures the new direction in column k). */
  readonly rDiag: Float64Array;
  /** Numerical rank: columns whose |R_kk| exceeds `tolerance·max|R_jj|`. */
  readonly rank: number;
  /** R as a row-major p × p matrix (upper triangle; zeros below). */
  r(): Matrix;
  /** Apply Qᵀ to a length-n vector (returns a new array). */
  applyQt(y: ArrayLike<number>): Float64Array;
  /** Least-squares solution of min‖A·x − y‖₂ (requires full column rank). */
  solve(y: ArrayLike<number>): Float64Array;
  /** R⁻¹ as a row-major p × p upper-triangular matrix (requires full column rank). */
  rInverse(): Matrix;
}

/**
 * Householder QR factorisation of a tall matrix.
 *
 * Column k is reflected onto ±‖A[k:, k]‖·e_k (sign opposite to A[k,k], LAPACK `dlarfg`
 * convention), and the reflector is applied to the remaining columns. The norm is computed with
 * scaling, so it neither overflows nor underflows. The input is not modified (the factorisation
 * works on a column-major copy).
 *
 * @param A - n × p row-major matrix, n ≥ p, finite.
 * @param tolerance - Relative rank tolerance on |R_kk| (default `max(n, p)·2.2e-16`).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when n < p or the data length is wrong;
 *   TF_NON_FINITE when A holds NaN or ±Infinity.
 *
 * References
 * - Householder, A. S. (1958). Unitary triangularization of a nonsymmetric matrix.
 *   J. ACM 5(4):339–342. doi:10.1145/320941.320947
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., §5.2. Johns Hopkins.
 */
export function householderQR(A: Matrix, tolerance?: number): QRFactorization {
  const n = A.rows;
  const p = A.cols;
  if (A.data.length !== n * p) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `householderQR: data length ${A.data.length} ≠ rows × cols = ${n} × ${p}.`, { rows: n, cols: p });
  }
  if (n < p) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `householderQR: need at least as many rows as columns, got ${n} × ${p}.`, { rows: n, cols: p });
  }
  // Column-major working copy: column j is qr[j*n .. j*n + n).
  const qr = new Float64Array(n * p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      const v = A.data[i * p + j]!;
      if (v - v !== 0) {
        throw new TuningforkError('TF_NON_FINITE', `householderQR: A[${i}, ${j}] is ${v}; finite values are required.`, { row: i, col: j });
      }
      qr[j * n + i] = v;
    }
  }
  const tau = new Float64Array(p);
  const rDiag = new Float64Array(p);
  for (let k = 0; k < p; k++) {
    const ck = k * n;
    // Scaled 2-norm of qr[k:, k].
    let scale = 0;
    for (let i = k; i < n; i++) scale = Math.max(scale, Math.abs(qr[ck + i]!));
    if (scale === 0) {
      tau[k] = 0;
      rDiag[k] = 0;
      continue;
    }
    let ss = 0;
    for (let i = k; i < n; i++) {
      const t = qr[ck + i]! / scale;
      ss += t * t;
    }
    const norm = scale * Math.sqrt(ss);
    const alpha = qr[ck + k]!;
    const beta = alpha >= 0 ? -norm : norm;
    tau[k] = (beta - alpha) / beta;
    const inv = 1 / (alpha - beta);
    for (let i = k + 1; i < n; i++) qr[ck + i] = qr[ck + i]! * inv;
    qr[ck + k] = beta;
    rDiag[k] = beta;
    const t = tau[k]!;
    for (let j = k + 1; j < p; j++) {
      const cj = j * n;
      let w = qr[cj + k]!;
      for (let i = k + 1; i < n; i++) w += qr[ck + i]! * qr[cj + i]!;
      w *= t;
      qr[cj + k] = qr[cj + k]! - w;
      for (let i = k + 1; i < n; i++) qr[cj + i] = qr[cj + i]! - w * qr[ck + i]!;
    }
  }
  let maxDiag = 0;
  for (let k = 0; k < p; k++) maxDiag = Math.max(maxDiag, Math.abs(rDiag[k]!));
  const tol = (tolerance ?? Math.max(n, p) * 2.220446049250313e-16) * maxDiag;
  let rank = 0;
  for (let k = 0; k < p; k++) if (Math.abs(rDiag[k]!) > tol) rank++;

  const requireFullRank = (what: string): void => {
    if (rank < p) {
      let col = 0;
      while (col < p && Math.abs(rDiag[col]!) > tol) col++;
      throw new TuningforkError('TF_FIT_FAILED', `householderQR.${what}: the matrix is rank deficient (rank ${rank} of ${p}); column ${col} is (nearly) a combination of earlier columns. Remove collinear columns.`, { rank, cols: p, column: col });
    }
  };

  const applyQt = (y: ArrayLike<number>): Float64Array => {
    if (y.length !== n) throw new TuningforkError('TF_SHAPE_MISMATCH', `householderQR.applyQt: vector has length ${y.length}, expected ${n}.`, { length: y.length, expected: n });
    const out = Float64Array.from(y);
    for (let k = 0; k < p; k++) {
      const t = tau[k]!;
      if (t === 0) continue;
      const ck = k * n;
      let w = out[k]!;
      for (let i = k + 1; i < n; i++) w += qr[ck + i]! * out[i]!;
      w *= t;
      out[k] = out[k]! - w;
      for (let i = k + 1; i < n; i++) out[i] = out[i]! - w * qr[ck + i]!;
    }
    return out;
  };

  return {
    rows: n,
    cols: p,
    rDiag,
    rank,
    r(): Matrix {
      const data = new Float64Array(p * p);
      for (let i = 0; i < p; i++) for (let j = i; j < p; j++) data[i * p + j] = qr[j * n + i]!;
      return { data, rows: p, cols: p };
    },
    applyQt,
    solve(y: ArrayLike<number>): Float64Array {
      requireFullRank('solve');
      const qty = applyQt(y);
      const x = new Float64Array(p);
      for (let i = p - 1; i >= 0; i--) {
        let s = qty[i]!;
        for (let j = i + 1; j < p; j++) s -= qr[j * n + i]! * x[j]!;
        x[i] = s / qr[i * n + i]!;
      }
      return x;
    },
    rInverse(): Matrix {
      requireFullRank('rInverse');
      const inv = new Float64Array(p * p);
      for (let j = p - 1; j >= 0; j--) {
        inv[j * p + j] = 1 / qr[j * n + j]!;
        for (let i = j - 1; i >= 0; i--) {
          let s = 0;
          for (let k = i + 1; k <= j; k++) s += qr[k * n + i]! * inv[k * p + j]!;
          inv[i * p + j] = -s / qr[i * n + i]!;
        }
      }
      return { data: inv, rows: p, cols: p };
    },
  };
}

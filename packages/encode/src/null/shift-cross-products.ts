import { TuningforkError, checkInteger, resolveOptions, toFloat64 } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { circularCorrelation, paddedSize, realSpectrum } from '../internal/fft-correlate.js';

/** Options of {@link shiftCrossProducts}. */
export interface ShiftCrossProductsOptions {
  /** Shifts k to return (bins, any integers; taken mod n). Empty: all n shifts 0 … n−1. @defaultValue [] */
  shifts?: ArrayLike<number>;
}

const DEFAULTS = Object.freeze({ shifts: [] as ArrayLike<number> });

/**
 * Cross-products of every design column with every circular shift of y, all at once by FFT:
 * C[j, i] = Σ_t X[t, j]·y((t − k_i) mod n).
 *
 * Method: c_j = IFFT(FFT(x_j)·conj(FFT(y))) (INFERENCE.md §4.6; conj on y for this shift
 * direction). fft.js transforms powers of two only and a length-n circular correlation is not
 * a circular correlation of any padded length, so both series are zero-padded to N ≥ 2n − 1,
 * where the circular correlation is the exact linear one, and folded: c(k) = lin(k) + lin(k − n).
 * No sample is trimmed. Two columns share one complex inverse transform. Cost
 * O(p·N log N) against O(p·n²) for all shifts directly.
 *
 * @param x - n × p row-major matrix (time × columns); must be finite.
 * @param y - n values; must be finite.
 * @returns p × m row-major matrix (m shifts).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH; TF_NON_FINITE (naming row and column).
 *
 * References
 * - Cooley, J. W. & Tukey, J. W. (1965). An algorithm for the machine calculation of complex
 *   Fourier series. Math. Comp. 19:297–301. doi:10.1090/S0025-5718-1965-0178586-1
 */
export function shiftCrossProducts(x: Matrix, y: ArrayLike<number>, options: ShiftCrossProductsOptions = {}): Matrix {
  const fn = 'shiftCrossProducts';
  const o = resolveOptions(fn, DEFAULTS, options);
  const yy = toFloat64(y);
  const { rows: n, cols: p, data } = x;
  if (yy.length !== n || data.length !== n * p) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: X is ${n} × ${p} but y has ${yy.length} values.`, { rows: n, cols: p });
  checkInteger(fn, 'rows', n, 1);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(yy[i])) throw new TuningforkError('TF_NON_FINITE', `${fn}: y[${i}] is ${yy[i]}.`, { row: i });
    for (let j = 0; j < p; j++) if (!Number.isFinite(data[i * p + j])) throw new TuningforkError('TF_NON_FINITE', `${fn}: X[${i}, ${j}] is ${data[i * p + j]}.`, { row: i, col: j });
  }
  const sh = toFloat64(o.shifts);
  const ks = sh.length > 0 ? Int32Array.from(sh, (k) => ((Math.round(k) % n) + n) % n) : Int32Array.from({ length: n }, (_, i) => i);
  const m = ks.length;
  const out = new Float64Array(p * m);
  const N = paddedSize(n);
  const Y = realSpectrum(yy, N);
  const col = new Float64Array(n);
  const r1 = new Float64Array(n);
  const r2 = new Float64Array(n);
  for (let j = 0; j < p; j += 2) {
    for (let i = 0; i < n; i++) col[i] = data[i * p + j]!;
    const A1 = realSpectrum(col, N);
    let A2: Float64Array | null = null;
    if (j + 1 < p) {
      for (let i = 0; i < n; i++) col[i] = data[i * p + j + 1]!;
      A2 = realSpectrum(col, N);
    }
    circularCorrelation(A1, A2, Y, n, N, r1, A2 ? r2 : null);
    for (let i = 0; i < m; i++) {
      out[j * m + i] = r1[ks[i]!]!;
      if (A2) out[(j + 1) * m + i] = r2[ks[i]!]!;
    }
  }
  return { data: out, rows: p, cols: m };
}

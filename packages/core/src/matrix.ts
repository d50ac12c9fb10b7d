import { TuningforkError } from './errors.js';
import type { Matrix } from './types.js';

/** Allocate a zero rows × cols row-major matrix. */
export function zerosMatrix(rows: number, cols: number): Matrix {
  return { data: new Float64Array(rows * cols), rows, cols };
}

/** Wrap data as a rows × cols matrix after checking its length. @throws TF_SHAPE_MISMATCH */
export function asMatrix(data: Float64Array, rows: number, cols: number): Matrix {
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || rows < 0 || cols < 0 || data.length !== rows * cols) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `asMatrix: data has length ${data.length}, expected rows × cols = ${rows} × ${cols}.`, { rows, cols, length: data.length });
  }
  return { data, rows, cols };
}

/** View of row r (no copy). */
export function matrixRow(m: Matrix, r: number): Float64Array {
  return m.data.subarray(r * m.cols, (r + 1) * m.cols);
}

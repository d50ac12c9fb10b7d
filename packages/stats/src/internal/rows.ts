/** Turn a vector or a matrix of observations into row-major rows (vector → one column). */
import { toFloat64 } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { checkMatrix } from './validate.js';
import { TuningforkError } from '@tuningfork/core';

export function asRows(fn: string, data: ArrayLike<number> | Matrix, minRows = 2): Matrix {
  if (data !== null && typeof data === 'object' && 'rows' in data && 'cols' in data && 'data' in data) {
    return checkMatrix(fn, 'data', data, minRows);
  }
  if (data === null || typeof data !== 'object' || typeof (data as ArrayLike<number>).length !== 'number') {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: data must be an array of numbers or a matrix { data, rows, cols } (rows = observations).`, { fn });
  }
  const v = toFloat64(data as ArrayLike<number>);
  if (v.length < minRows) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: data has ${v.length} observation(s); at least ${minRows} are needed.`, { fn, n: v.length, needed: minRows });
  }
  return { data: v, rows: v.length, cols: 1 };
}

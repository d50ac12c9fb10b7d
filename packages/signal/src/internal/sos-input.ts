import { TuningforkError, formatValue } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import type { IirFilter } from '../filter/design.js';

/** Second-order sections: an {@link IirFilter}, an n × 6 Matrix, or a flat array of 6·n numbers. */
export type SosInput = IirFilter | Matrix | ArrayLike<number>;

export interface Sos {
  readonly sos: Float64Array;
  readonly nSections: number;
}

/** Normalise and validate second-order sections (finite; a0 = 1 in every row, as scipy requires). */
export function toSos(fn: string, input: SosInput): Sos {
  let flat: ArrayLike<number>;
  if (input && typeof input === 'object' && 'sos' in input && 'nSections' in input) flat = (input as IirFilter).sos;
  else if (input && typeof input === 'object' && 'data' in input && 'cols' in input) {
    const m = input as Matrix;
    if (m.cols !== 6) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: sos must have 6 columns, got ${m.cols}.`, { fn, cols: m.cols });
    flat = m.data;
  } else flat = input as ArrayLike<number>;
  if (!flat || typeof flat.length !== 'number' || flat.length === 0 || flat.length % 6 !== 0) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: sos must hold 6 numbers per section, got ${formatValue(flat)}${flat && typeof flat.length === 'number' ? ` (length ${flat.length})` : ''}.`, { fn });
  }
  const sos = Float64Array.from(flat);
  const nSections = sos.length / 6;
  for (let i = 0; i < sos.length; i++) {
    if (!Number.isFinite(sos[i]!)) throw new TuningforkError('TF_NON_FINITE', `${fn}: sos[${Math.floor(i / 6)}][${i % 6}] is ${sos[i]}; coefficients must be finite.`, { fn, section: Math.floor(i / 6) });
  }
  for (let s = 0; s < nSections; s++) {
    if (sos[s * 6 + 3] !== 1) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: section ${s} has a0 = ${sos[s * 6 + 3]}; every section must have a0 = 1 (normalise b and a by a0).`, { fn, section: s });
    }
  }
  return { sos, nSections };
}

/** Entry checks shared by the public functions of this package. */
import { checkInteger, TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';

/** A matrix that may carry per-column times (a core PeriEventMatrix does). */
export type MaybeTimedMatrix = Matrix & { readonly offsets?: Float64Array };

/**
 * Check that `m` is a row-major matrix with at least `minRows` rows and ≥ 1 column.
 * @throws TF_SHAPE_MISMATCH (malformed), TF_TOO_FEW_SAMPLES (too few rows).
 */
export function checkMatrix(fn: string, name: string, m: unknown, minRows = 2): MaybeTimedMatrix {
  const x = m as Partial<Matrix> | null;
  if (x === null || typeof x !== 'object' || !(x.data instanceof Float64Array) || !Number.isInteger(x.rows) || !Number.isInteger(x.cols)
    || x.rows! < 0 || x.cols! < 0) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name} must be a matrix { data: Float64Array, rows, cols } (trials × time bins).`, { fn, parameter: name });
  }
  if (x.data.length !== x.rows! * x.cols!) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name}.data has length ${x.data.length}, expected rows × cols = ${x.rows} × ${x.cols}.`, { fn, parameter: name, rows: x.rows, cols: x.cols, length: x.data.length });
  }
  if (x.cols! < 1) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name} has no columns (time bins); expected at least 1.`, { fn, parameter: name });
  }
  if (x.rows! < minRows) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${name} has ${x.rows} row(s) (trials); at least ${minRows} are needed.`, { fn, parameter: name, rows: x.rows, needed: minRows });
  }
  return x as MaybeTimedMatrix;
}

/** Column times of a matrix when it carries valid `offsets`, else undefined. */
export function matrixOffsets(m: MaybeTimedMatrix): Float64Array | undefined {
  const o = m.offsets;
  return o instanceof Float64Array && o.length === m.cols ? o : undefined;
}

/** @throws TF_SHAPE_MISMATCH when two matrices have different column counts. */
export function checkSameCols(fn: string, a: Matrix, b: Matrix, names: [string, string] = ['a', 'b']): void {
  if (a.cols !== b.cols) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${names[0]} has ${a.cols} columns (time bins) but ${names[1]} has ${b.cols}; both must share one time axis.`, { fn, cols: [a.cols, b.cols] });
  }
}

/** Require a confidence level strictly between 0 and 1. @throws TF_BAD_OPTION */
export function checkConfidence(fn: string, v: unknown): number {
  if (typeof v !== 'number' || !(v > 0 && v < 1)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: confidenceLevel must be a number strictly between 0 and 1 (e.g. 0.95), got ${String(v)}.`, { fn, option: 'confidenceLevel', value: v });
  }
  return v;
}

export function checkResamples(fn: string, name: string, v: unknown, min = 1): number {
  return checkInteger(fn, name, v, min, 1e9);
}

export function checkSeed(fn: string, v: unknown): number {
  return checkInteger(fn, 'seed', v, 0, Number.MAX_SAFE_INTEGER);
}

/**
 * Warning when B resamples cannot resolve a two-sided interval at `level`: with (B + 1)·(1 − level)/2
 * < 1 the requested tail quantiles lie beyond the most extreme replicates, so the endpoints come
 * from those extremes and the interval's nominal level is not reached (the usual minimum is B = 39 for
 * 95 %; from memory of Davison & Hinkley 1997, §4.2, and common practice; B ≥ 1000 is advised for
 * percentile and BCa intervals, Efron & Tibshirani 1993, §19.3, from memory).
 */
export function resamplesForLevel(fn: string, B: number, level: number): ResultWarning[] {
  const tail = (B + 1) * ((1 - level) / 2);
  if (tail >= 1) return [];
  const need = Math.ceil(2 / (1 - level)) - 1;
  return [warn('resamples-too-few-for-level', `${fn}: ${B} resamples cannot resolve a ${(level * 100).toFixed(1)} % interval: its tails hold fewer than one replicate ((B + 1)·(1 − level)/2 = ${tail.toFixed(2)}), so the endpoints come from the most extreme replicates and the interval cannot reach the stated level. Use at least ${need} resamples (1000 or more is usual).`, { resamples: B, confidenceLevel: level, minimum: need })];
}

/** Up to `max` indices where `pred` holds, for warning details. */
export function firstIndices(n: number, pred: (i: number) => boolean, max = 5): number[] {
  const out: number[] = [];
  for (let i = 0; i < n && out.length < max; i++) if (pred(i)) out.push(i);
  return out;
}

/** "column 12 (t = 0.120 s)" style locator used in messages. */
export function describeColumn(j: number, offsets: Float64Array | undefined): string {
  return offsets ? `column ${j} (t = ${offsets[j]!.toFixed(3)} s)` : `column ${j}`;
}

export function warn(code: string, message: string, details?: Record<string, unknown>): ResultWarning {
  return details === undefined ? { code, message } : { code, message, details };
}

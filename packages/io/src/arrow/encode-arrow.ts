import { Schema, Table, Utf8, makeVector, tableToIPC, vectorFromArray, type Vector } from 'apache-arrow';
import { TuningforkError, checkOneOf, resolveOptions } from '@tuningfork/core';
import type { ColumnData } from '../table.js';

/** Options of encodeArrow and writeArrow. */
export interface ArrowWriteOptions {
  /** `'file'`: the random-access IPC file format (starts with `ARROW1`); `'stream'`: the IPC stream format. @defaultValue 'file' */
  format?: 'file' | 'stream';
  /** Schema metadata, key → text (e.g. a provenance record as JSON). @defaultValue {} */
  metadata?: Readonly<Record<string, string>>;
}

const DEFAULTS = Object.freeze({ format: 'file' as 'file' | 'stream', metadata: Object.freeze({}) as Readonly<Record<string, string>> });

/** Validate a ColumnData table and return its row count. */
export function checkColumnData(fn: string, data: ColumnData): number {
  if (data === null || typeof data !== 'object' || Array.isArray(data)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: the table must be an object of columns (name → typed array or string array).`, { fn });
  }
  const names = Object.keys(data);
  if (names.length === 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: the table has no columns; pass at least one.`, { fn });
  let rows = -1;
  for (const name of names) {
    const col = data[name] as unknown;
    const ok = ArrayBuffer.isView(col)
      ? !(col instanceof DataView) && !(col instanceof BigInt64Array) && !(col instanceof BigUint64Array) && !(col instanceof Uint8ClampedArray)
      : Array.isArray(col) && col.every((s) => typeof s === 'string');
    if (!ok) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: column '${name}' must be a numeric typed array (Float64Array, Int32Array, …) or an array of strings.`, { fn, column: name });
    }
    const n = (col as ArrayLike<unknown>).length;
    if (rows === -1) rows = n;
    else if (n !== rows) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: column '${name}' has ${n} rows but '${names[0]}' has ${rows}; all columns need the same length.`, { fn, column: name, rows: n, expected: rows });
    }
  }
  return rows;
}

/**
 * Encode typed-array and string columns as Arrow IPC bytes.
 *
 * Typed arrays become Arrow vectors of the matching type without copying (Float64Array →
 * Float64, Int32Array → Int32, …); string arrays become Utf8. NaN stays NaN (not null), so a
 * Float64 column round-trips bit for bit. Columns keep the object's key order.
 *
 * @param data - Columns by name, all of equal length.
 * @param options - `format` ('file' by default) and schema `metadata`.
 * @returns The IPC bytes.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH for columns of unequal length; TF_BAD_OPTION for an
 *   empty table or a column that is neither a numeric typed array nor a string array.
 *
 * @example
 * ```ts
 * const bytes = encodeArrow({ time: new Float64Array([0, 1]), name: ['cue', 'reward'] });
 * ```
 */
export function encodeArrow(data: ColumnData, options: ArrowWriteOptions = {}): Uint8Array {
  const o = resolveOptions('encodeArrow', DEFAULTS, options);
  const format = checkOneOf('encodeArrow', 'format', o.format, ['file', 'stream'] as const);
  if (o.metadata === null || typeof o.metadata !== 'object' || !Object.values(o.metadata).every((v) => typeof v === 'string')) {
    throw new TuningforkError('TF_BAD_OPTION', 'encodeArrow: metadata must be an object of string values.', { fn: 'encodeArrow', option: 'metadata' });
  }
  checkColumnData('encodeArrow', data);
  const vectors: Record<string, Vector> = {};
  for (const [name, col] of Object.entries(data)) {
    vectors[name] = ArrayBuffer.isView(col) ? makeVector(col) : vectorFromArray(col as string[], new Utf8());
  }
  let table = new Table(vectors);
  const meta = Object.entries(o.metadata);
  if (meta.length > 0) table = new Table(new Schema(table.schema.fields, new Map(meta)), table.batches);
  return tableToIPC(table, format);
}

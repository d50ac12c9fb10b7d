import * as aq from 'arquero';
import { TuningforkError } from '@tuningfork/core';
import type { ArqueroTable } from './events-to-table.js';

/** A cell value as arquero stores it. */
export type CellValue = string | number | boolean | null | undefined;

/** A condition on one column: equal to a value, one of several values, or a predicate. */
export type ColumnCondition = CellValue | readonly CellValue[] | ((value: CellValue) => boolean);

/**
 * Rows of an arquero table meeting every condition, by column: a value (equality; NaN matches
 * NaN), an array (membership), or a predicate function. Returns a new table with the same columns.
 *
 * @example
 * ```ts
 * selectRows(table, { outcome: ['rewarded', 'bonus'], trial: (t) => (t as number) >= 10 });
 * ```
 * @throws {TuningforkError} TF_MISSING_COLUMN when a condition names a column the table lacks.
 */
export function selectRows(table: ArqueroTable, where: Readonly<Record<string, ColumnCondition>>): ArqueroTable {
  const fn = 'selectRows';
  const names = table.columnNames();
  const n = table.numRows();
  const keep = new Uint8Array(n).fill(1);
  for (const [col, cond] of Object.entries(where)) {
    if (!names.includes(col)) {
      throw new TuningforkError('TF_MISSING_COLUMN', `${fn}: no column '${col}' (columns: ${names.join(', ')}).`, { fn, column: col });
    }
    const v = table.array(col) as ArrayLike<CellValue>;
    const same = (a: CellValue, b: CellValue) => a === b || (typeof a === 'number' && typeof b === 'number' && a !== a && b !== b);
    for (let i = 0; i < n; i++) {
      if (keep[i] === 0) continue;
      const x = v[i];
      let ok: boolean;
      if (typeof cond === 'function') ok = (cond as (value: CellValue) => boolean)(x);
      else if (Array.isArray(cond)) ok = (cond as readonly CellValue[]).some((c) => same(x, c));
      else ok = same(x, cond as CellValue);
      if (!ok) keep[i] = 0;
    }
  }
  const idx: number[] = [];
  for (let i = 0; i < n; i++) if (keep[i] === 1) idx.push(i);
  const out: Record<string, unknown> = {};
  for (const c of names) {
    const v = table.array(c) as ArrayLike<unknown>;
    out[c] = ArrayBuffer.isView(v)
      ? (v as unknown as { constructor: { from(a: number[]): unknown } }).constructor.from(idx.map((i) => v[i] as number))
      : idx.map((i) => v[i]);
  }
  return aq.table(out, names);
}

/**
 * A numeric column as a Float64Array of times (null/undefined → NaN), e.g. to feed selected
 * events into periEventMatrix.
 *
 * @throws {TuningforkError} TF_MISSING_COLUMN; TF_BAD_VALUE when a cell is not a number.
 */
export function columnTimes(table: ArqueroTable, column = 'time'): Float64Array {
  const fn = 'columnTimes';
  if (!table.columnNames().includes(column)) {
    throw new TuningforkError('TF_MISSING_COLUMN', `${fn}: no column '${column}' (columns: ${table.columnNames().join(', ')}).`, { fn, column });
  }
  const v = table.array(column) as ArrayLike<unknown>;
  const out = new Float64Array(v.length);
  for (let i = 0; i < v.length; i++) {
    const x = v[i];
    if (x === null || x === undefined) out[i] = NaN;
    else if (typeof x === 'number') out[i] = x;
    else throw new TuningforkError('TF_BAD_VALUE', `${fn}: ${column}[${i}] is ${JSON.stringify(x)}, not a number.`, { fn, column, row: i });
  }
  return out;
}

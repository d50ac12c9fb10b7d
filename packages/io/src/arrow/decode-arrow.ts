import { DataType, Precision, tableFromIPC, type Table, type Vector } from 'apache-arrow';
import { TuningforkError, resolveOptions } from '@tuningfork/core';
import { bindColumns, normalizeSpecs } from '../internal/column-specs.js';
import type { ColumnSpec, ColumnTable } from '../table.js';

/** Options of decodeArrow and readArrow. */
export interface ArrowReadOptions {
  /**
   * Columns to read, in result order (field names or ColumnSpec objects), as for readCsv.
   * @defaultValue every field: numeric, boolean and integer fields as numbers, text fields as strings
   */
  columns?: readonly (string | ColumnSpec)[] | undefined;
}

/**
 * A table read from Arrow IPC bytes. Its `nulls` count Arrow nulls (validity bitmap), which
 * become NaN or ''; NaN values stored in a float column are values, not nulls, and are not
 * counted (so a zero-copy read never scans the data).
 */
export interface ArrowTable extends ColumnTable {
  /** Arrow type of every field, by field name (e.g. 'Float64', 'Utf8'). */
  readonly types: Readonly<Record<string, string>>;
  /** Schema metadata (key → value), e.g. a provenance record written by writeArrow. */
  readonly metadata: Readonly<Record<string, string>>;
  /** Number of record batches in the input. */
  readonly batches: number;
}

const DEFAULTS = Object.freeze({ columns: undefined as readonly (string | ColumnSpec)[] | undefined });

function isText(t: DataType): boolean {
  return DataType.isUtf8(t) || DataType.isLargeUtf8(t) || DataType.isUtf8View(t) || (DataType.isDictionary(t) && isText(t.dictionary));
}
function isNumeric(t: DataType): boolean {
  return DataType.isFloat(t) || DataType.isInt(t) || DataType.isBool(t);
}

/** 2^53: every integer below this magnitude is an exact double (and so is 2^53 itself). */
const TWO_53 = 9007199254740992;

/**
 * A numeric field as Float64Array: a view into the IPC bytes for one null-free Float64 batch.
 * A 64-bit integer without an exact double throws TF_BAD_CELL instead of being rounded.
 */
function numericColumn(fn: string, file: string, name: string, vec: Vector): Float64Array {
  const t = vec.type as DataType;
  if (!isNumeric(t)) {
    throw new TuningforkError('TF_BAD_CELL', `${fn}: file '${file}', column '${name}' has Arrow type ${String(t)}; expected a floating-point, integer or boolean type to read it as numbers (or read it with type: 'string').`, { fn, file, column: name, type: String(t) });
  }
  const chunks = vec.data;
  if (chunks.length === 1 && DataType.isFloat(t) && t.precision === Precision.DOUBLE && vec.nullCount === 0) {
    const d = chunks[0]!;
    return (d.values as Float64Array).subarray(d.offset, d.offset + d.length);
  }
  const out = new Float64Array(vec.length);
  let at = 0;
  for (const d of chunks) {
    const n = d.length;
    if ((DataType.isFloat(t) && t.precision !== Precision.HALF) || (DataType.isInt(t) && t.bitWidth <= 32)) {
      out.set((d.values as Float64Array).subarray(d.offset, d.offset + n), at);
    } else {
      // 64-bit integers (BigInt64Array), booleans (bit-packed), half floats: element by element.
      for (let i = 0; i < n; i++) {
        const v = vec.get(at + i) as number | bigint | boolean | null;
        const x = v === null ? NaN : Number(v);
        // A double below 2^53 in magnitude comes from an integer below 2^53, which is exact; from
        // 2^53 on, the integer must convert back unchanged (2^53 + 1 would be read as 2^53).
        if (typeof v === 'bigint' && !(x > -TWO_53 && x < TWO_53) && BigInt(x) !== v) {
          throw new TuningforkError('TF_BAD_CELL', `${fn}: file '${file}', column '${name}', row ${at + i + 1}: the ${String(t)} value ${v} has no exact double (the nearest is ${x}); reading it as a number would change it. Read the column with type: 'string' (e.g. an identifier), or store it in a unit that keeps it below 2^53.`, { fn, file, column: name, row: at + i, text: String(v) });
        }
        out[at + i] = x;
      }
    }
    if (d.nullCount > 0) for (let i = 0; i < n; i++) if (!d.getValid(i)) out[at + i] = NaN;
    at += n;
  }
  return out;
}

/**
 * Decode Arrow IPC bytes (file or stream format, detected) into typed-array columns.
 *
 * A Float64 field stored in one record batch without nulls is returned zero-copy: its
 * Float64Array is a view into `bytes` (so it keeps `bytes` alive and changes if `bytes`
 * changes). Other numeric types (Float32, integers, booleans), several batches or nulls give a
 * new Float64Array, with nulls as NaN. A 64-bit integer read as a number must be an exact double
 * (every integer of magnitude ≤ 2^53 is): a larger one that a double would round is an error,
 * never a silently changed value. Text fields (Utf8, LargeUtf8, dictionary-encoded text)
 * give string arrays with nulls as ''.
 *
 * @param bytes - Arrow IPC bytes (the random-access file format starting with `ARROW1`, or the stream format).
 * @param options - Column selection as in readCsv; plus `label` naming the data in messages.
 * @returns Columns, strings, row count, per-column Arrow null counts, field names,
 *   Arrow types and schema metadata.
 * @throws {TuningforkError} TF_BAD_FILE when the bytes are not Arrow IPC; TF_MISSING_COLUMN for a
 *   required field that is absent (with the closest name); TF_BAD_CELL when a non-numeric field
 *   is read as numbers or a 64-bit integer has no exact double (naming the row); TF_NON_FINITE
 *   for NaN, null or ±Infinity in a `finite` column (naming the row).
 *
 * @example
 * ```ts
 * const t = decodeArrow(encodeArrow({ time: new Float64Array([0, 0.001]) }));
 * t.columns.time; // Float64Array [0, 0.001]
 * ```
 */
export function decodeArrow(bytes: Uint8Array, options: ArrowReadOptions & { label?: string } = {}): ArrowTable {
  const { label, ...rest } = options;
  return decodeWith('decodeArrow', label ?? '<memory>', bytes, rest);
}

/** Shared body of decodeArrow and readArrow. */
export function decodeWith(fn: string, file: string, bytes: Uint8Array, options: ArrowReadOptions): ArrowTable {
  const o = resolveOptions(fn, DEFAULTS, options);
  const specs = o.columns === undefined ? null : normalizeSpecs(fn, o.columns);
  let table: Table;
  try {
    table = tableFromIPC(bytes);
  } catch (e) {
    throw new TuningforkError('TF_BAD_FILE', `${fn}: '${file}' is not readable as Arrow IPC (file or stream format): ${(e as Error).message}.`, { fn, file });
  }
  if (table.schema.fields.length === 0) {
    throw new TuningforkError('TF_BAD_FILE', `${fn}: '${file}' holds no Arrow fields (${bytes.length} bytes); expected an Arrow IPC table with at least one column.`, { fn, file });
  }
  const fields = table.schema.fields.map((f) => f.name);
  const types: Record<string, string> = {};
  for (const f of table.schema.fields) types[f.name] = String(f.type);
  // Without a selection every field is read, text fields as strings and the rest as numbers.
  const byType = fields.map((name, i) => ({
    name, as: name, type: isText(table.schema.fields[i]!.type as DataType) ? ('string' as const) : ('number' as const), required: true, finite: false,
  }));
  const bound = bindColumns(fn, file, fields, specs ?? byType);
  const columns: Record<string, Float64Array> = {};
  const strings: Record<string, string[]> = {};
  const nulls: Record<string, number> = {};
  for (const b of bound) {
    const vec = table.getChildAt(b.index)!;
    if (b.type === 'number') {
      const col = numericColumn(fn, file, b.name, vec);
      if (b.finite) {
        for (let i = 0; i < col.length; i++) {
          const v = col[i]!;
          if (!Number.isFinite(v)) {
            throw new TuningforkError('TF_NON_FINITE', `${fn}: file '${file}', column '${b.name}', row ${i + 1}: the column must hold finite numbers but the value is ${v === v ? String(v) : 'missing (null or NaN)'}. Fill the value, or drop finite: true for this column.`, { fn, file, column: b.name, row: i, value: v });
          }
        }
      }
      columns[b.as] = col;
      nulls[b.as] = vec.nullCount;
    } else {
      const n = vec.length;
      const col = new Array<string>(n);
      let missing = 0;
      for (let i = 0; i < n; i++) {
        const v = vec.get(i) as unknown;
        if (v === null || v === undefined) missing++;
        col[i] = v === null || v === undefined ? '' : String(v);
      }
      strings[b.as] = col;
      nulls[b.as] = missing;
    }
  }
  return {
    source: file,
    rows: table.numRows,
    columns,
    strings,
    nulls,
    fields,
    warnings: [],
    types,
    metadata: Object.fromEntries(table.schema.metadata),
    batches: table.batches.length,
  };
}

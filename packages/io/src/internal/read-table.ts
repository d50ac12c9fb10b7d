import { createReadStream } from 'node:fs';
import { open, stat } from 'node:fs/promises';
import { TuningforkError, checkOneOf, isTuningforkError, resolveOptions } from '@tuningfork/core';
import { readArrow } from '../arrow/read-arrow.js';
import { CSV_DEFAULTS, checkCsvOptions, type CsvOptions, type CsvTable } from '../csv/csv-options.js';
import { lineOfRow } from '../csv/line-of-row.js';
import type { ColumnSpec, ColumnTable } from '../table.js';
import { CsvParser } from './csv-parser.js';

/** File formats the readers accept. */
export type TableFormat = 'auto' | 'csv' | 'tsv' | 'arrow';

/** CSV parsing settings the convenience readers pass through (column selection is theirs). */
export type CsvParseSettings = Omit<CsvOptions, 'columns'>;

/** A table plus a way to name a row's place in the file. */
export interface LocatedTable {
  readonly table: ColumnTable;
  readonly format: 'csv' | 'arrow';
  /** "line 17" for text files, "row 17" (1-based) for Arrow. */
  readonly where: (row: number) => string;
  /** The 1-based line of a row (text files) or undefined (Arrow). */
  readonly line: (row: number) => number | undefined;
}

/** Detect Arrow IPC by its magic bytes ('ARROW1' file format or the 0xFFFFFFFF stream continuation). */
async function sniffArrow(path: string): Promise<boolean> {
  const fh = await open(path, 'r');
  try {
    const b = Buffer.alloc(6);
    const { bytesRead } = await fh.read(b, 0, 6, 0);
    if (bytesRead >= 6 && b.toString('latin1') === 'ARROW1') return true;
    return bytesRead >= 4 && b.readUInt32LE(0) === 0xffffffff;
  } finally {
    await fh.close();
  }
}

/**
 * Read a table for a convenience reader, from CSV/TSV (streamed) or Arrow IPC.
 * `specs === null` reads every column: numbers (CSV) or by Arrow type, or all as strings when
 * `allStrings` (CSV only; Arrow keeps its types).
 */
export async function readTable(
  fn: string,
  path: string,
  format: TableFormat,
  csv: CsvParseSettings | undefined,
  specs: readonly (string | ColumnSpec)[] | null,
  allStrings = false,
): Promise<LocatedTable> {
  checkOneOf(fn, 'format', format, ['auto', 'csv', 'tsv', 'arrow'] as const);
  let size: number;
  try {
    const st = await stat(path);
    if (!st.isFile()) throw new Error('not a regular file');
    size = st.size;
  } catch (e) {
    throw new TuningforkError('TF_BAD_FILE', `${fn}: cannot read file '${path}': ${(e as Error).message}.`, { fn, file: path });
  }
  const isArrow = format === 'arrow' || (format === 'auto' && size > 0 && (await sniffArrow(path)));
  if (isArrow) {
    const table = await readArrow(path, specs === null ? {} : { columns: specs });
    return { table, format: 'arrow', where: (r) => `row ${r + 1}`, line: () => undefined };
  }
  const merged = resolveOptions(`${fn} csv`, { ...CSV_DEFAULTS, columns: undefined }, { ...(csv ?? {}), ...(format === 'tsv' && csv?.delimiter === undefined ? { delimiter: '\t' as const } : {}) });
  if ((csv as CsvOptions | undefined)?.columns !== undefined) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: csv.columns is not allowed here; ${fn} selects its own columns.`, { fn, option: 'csv.columns' });
  }
  const opts = checkCsvOptions(fn, { ...merged, columns: specs ?? undefined });
  const parser = new CsvParser({
    fn,
    file: path,
    delimiter: opts.delimiter,
    decimal: opts.decimal,
    commentPrefix: opts.commentPrefix,
    nullTokens: opts.nullTokens,
    specs: opts.specs,
    expectedBytes: size,
    allStrings,
  });
  const stream = createReadStream(path, { highWaterMark: opts.chunkBytes });
  try {
    for await (const chunk of stream) parser.push(chunk as Buffer);
  } catch (e) {
    if (isTuningforkError(e)) throw e;
    throw new TuningforkError('TF_BAD_FILE', `${fn}: error while reading file '${path}': ${(e as Error).message}.`, { fn, file: path });
  } finally {
    stream.destroy();
  }
  const table: CsvTable = parser.finish();
  return { table, format: 'csv', where: (r) => `line ${lineOfRow(table, r)}`, line: (r) => lineOfRow(table, r) };
}

/** Convert a time column to seconds in place (ms values are divided by 1000, correctly rounded). */
export function toSeconds(t: Float64Array, unit: 's' | 'ms'): Float64Array {
  if (unit === 'ms') for (let i = 0; i < t.length; i++) t[i] = t[i]! / 1000;
  return t;
}

/** Throw TF_NON_FINITE at the first non-finite value of a column that must be finite. */
export function requireFinite(fn: string, located: LocatedTable, column: string, values: Float64Array): void {
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (!Number.isFinite(v)) {
      const file = located.table.source;
      throw new TuningforkError('TF_NON_FINITE', `${fn}: file '${file}', column '${column}', ${located.where(i)}: the value is ${v === v ? String(v) : 'missing'} but ${column} must be a finite number. Fill or remove the row.`, { fn, file, column, row: i, line: located.line(i) });
    }
  }
}

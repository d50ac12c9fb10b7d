import { checkBoolean, checkOneOf, resolveOptions } from '@tuningfork/core';
import { checkColumnData } from '../arrow/encode-arrow.js';
import type { ColumnData } from '../table.js';

/** Options of formatCsv and writeCsv. */
export interface CsvWriteOptions {
  /** Field delimiter. @defaultValue ',' */
  delimiter?: ',' | '\t' | ';';
  /** Line ending; RFC 4180 specifies CRLF, LF is the common practice on Unix. @defaultValue '\n' */
  lineEnding?: '\n' | '\r\n';
  /** Write the header line of column names. @defaultValue true */
  header?: boolean;
}

const DEFAULTS = Object.freeze({ delimiter: ',' as ',' | '\t' | ';', lineEnding: '\n' as '\n' | '\r\n', header: true });

const CHUNK_CHARS = 1 << 20;

/**
 * Format one number for a CSV cell: the shortest text that reads back as the same double.
 *
 * Uses ECMAScript Number::toString, which emits the fewest significant digits that round-trip
 * (plain notation for 1e-7 < |x| < 1e21, else `1e-7`, `1.5e+21`), except that −0 is written
 * `-0` (keeping its sign) and NaN is the empty cell; ±Infinity are `Infinity` / `-Infinity`.
 *
 * @param x - Any number.
 * @returns The cell text.
 *
 * @example
 * ```ts
 * [0.1, -0, NaN, 1e-7].map(formatNumber); // ['0.1', '-0', '', '1e-7']
 * ```
 */
export function formatNumber(x: number): string {
  if (x !== x) return '';
  if (x === 0) return Object.is(x, -0) ? '-0' : '0';
  return String(x);
}

/** RFC 4180 quoting: quote a field holding the delimiter, a quote, CR or LF; double inner quotes. */
function quoteField(s: string, delim: string, first: boolean, only: boolean): string {
  if (s.includes(delim) || s.includes('"') || s.includes('\n') || s.includes('\r') || (first && s.startsWith('#')) || (only && s === '')) {
    return `"${s.replaceAll('"', '""')}"`;
  }
  return s;
}

/** Validate CsvWriteOptions. */
export function resolveCsvWriteOptions(fn: string, options: CsvWriteOptions | undefined): Required<CsvWriteOptions> {
  const o = resolveOptions(fn, DEFAULTS, options);
  return {
    delimiter: checkOneOf(fn, 'delimiter', o.delimiter, [',', '\t', ';'] as const),
    lineEnding: checkOneOf(fn, 'lineEnding', o.lineEnding, ['\n', '\r\n'] as const),
    header: checkBoolean(fn, 'header', o.header),
  };
}

/** The CSV text of a table in chunks of about 1 MiB (UTF-8 strings). */
export function* csvChunks(fn: string, data: ColumnData, o: Required<CsvWriteOptions>): Generator<string> {
  const rows = checkColumnData(fn, data);
  const names = Object.keys(data);
  const cols = names.map((n) => data[n]!);
  const only = cols.length === 1;
  const d = o.delimiter;
  const eol = o.lineEnding;
  let out = '';
  if (o.header) out = names.map((n, j) => quoteField(n, d, j === 0, only)).join(d) + eol;
  const cells = cols.map((col, j): ((r: number) => string) => {
    if (ArrayBuffer.isView(col)) {
      const a = col as unknown as ArrayLike<number>;
      return only ? (r) => (a[r]! !== a[r]! ? '""' : formatNumber(a[r]!)) : (r) => formatNumber(a[r]!);
    }
    const s = col as readonly string[];
    return (r) => quoteField(s[r]!, d, j === 0, only);
  });
  const nc = cells.length;
  const first = cells[0]!;
  for (let r = 0; r < rows; r++) {
    let line = first(r);
    for (let j = 1; j < nc; j++) line += d + cells[j]!(r);
    out += line + eol;
    if (out.length >= CHUNK_CHARS) {
      yield out;
      out = '';
    }
  }
  if (out.length > 0) yield out;
}

/**
 * The CSV text of a table as consecutive strings of about 1 MiB each, for streaming a large table
 * (to a file, a socket, or writeFileAtomic) without building it as one string. Concatenated, the
 * chunks equal formatCsv(data, options); the options are checked at once, the columns when the
 * first chunk is taken.
 *
 * @throws {TuningforkError} as formatCsv.
 */
export function formatCsvChunks(data: ColumnData, options: CsvWriteOptions = {}): Generator<string> {
  return csvChunks('formatCsvChunks', data, resolveCsvWriteOptions('formatCsvChunks', options));
}

/**
 * Format a columnar table as CSV text (for small tables; writeCsv streams large ones).
 *
 * Numbers use the shortest text that reads back as the same double (JavaScript's
 * Number::toString, e.g. `0.1`, `1e-7`, `1.5e+21`), with `-0` for negative zero, `Infinity`
 * and `-Infinity` for infinities, and an empty cell for NaN. Text cells are quoted per
 * RFC 4180 when they hold the delimiter, a quote, CR or LF (inner quotes doubled); a first-column
 * text starting with `#` is quoted so readers do not take the line for a comment, and an empty
 * cell of a one-column table is written `""` so the line is not blank.
 *
 * @param data - Columns by name (typed arrays or string arrays), all of equal length.
 * @param options - delimiter, lineEnding, header.
 * @returns The CSV text, ending with a line ending.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH for unequal columns; TF_BAD_OPTION for an empty
 *   table, a column of another type, or bad options.
 *
 * @example
 * ```ts
 * formatCsv({ t: new Float64Array([0, 0.1]), x: new Float64Array([NaN, -0]) }); // 't,x\n0,\n0.1,-0\n'
 * ```
 */
export function formatCsv(data: ColumnData, options: CsvWriteOptions = {}): string {
  const o = resolveCsvWriteOptions('formatCsv', options);
  let s = '';
  for (const chunk of csvChunks('formatCsv', data, o)) s += chunk;
  return s;
}

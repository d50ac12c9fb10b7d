import { TuningforkError, checkInteger, checkOneOf, resolveOptions } from '@tuningfork/core';
import { normalizeSpecs, type NormalizedSpec } from '../internal/column-specs.js';
import type { ColumnSpec, ColumnTable } from '../table.js';

/**
 * Options of readCsv and parseCsv. Every key is optional; unknown keys throw TF_UNKNOWN_OPTION.
 */
export interface CsvOptions {
  /**
   * Columns to read, in result order: header names, or ColumnSpec objects to rename (`as`),
   * read text (`type: 'string'`), make optional (`required: false`) or forbid missing values
   * (`finite: true`). Unlisted columns are skipped without being converted.
   * @defaultValue every column, as numbers, under its header name
   */
  columns?: readonly (string | ColumnSpec)[] | undefined;
  /** Field delimiter; `'auto'` picks ',', tab or ';' by counting them in the header line. @defaultValue 'auto' */
  delimiter?: 'auto' | ',' | '\t' | ';';
  /** Decimal mark of numbers. With `','` the delimiter cannot be ','. @defaultValue '.' */
  decimal?: '.' | ',';
  /**
   * Lines whose first characters are this text are skipped (before the header too); `''`
   * turns comments off. Only whole lines are comments.
   * @defaultValue '#'
   */
  commentPrefix?: string;
  /**
   * Cell texts (after trimming spaces and tabs) that mean a missing value, besides the empty
   * cell. A token that is itself a number (e.g. '-999') matches every cell of equal value
   * ('-999.0' too). The default is a subset of pandas' default `na_values` (common practice).
   * @defaultValue ['NA', 'N/A', 'NaN', 'nan', 'NULL', 'null', 'None', '<NA>']
   */
  nullTokens?: readonly string[];
  /** Bytes read per chunk; the reader never holds the file as one string. @defaultValue 1048576 */
  chunkBytes?: number;
}

/**
 * Sparse map from data rows to 1-based file line numbers: row r lies on line
 * `lines[k] + (r − rows[k])` for the last k with `rows[k] ≤ r`. An anchor is stored only where
 * comments, blank lines or line breaks inside quoted fields shift the numbering.
 */
export interface LineAnchors {
  readonly rows: Uint32Array;
  readonly lines: Float64Array;
}

/** A table read from CSV/TSV text. */
export interface CsvTable extends ColumnTable {
  /** The delimiter used (detected or given). */
  readonly delimiter: ',' | '\t' | ';';
  /** Bytes of input read (including a byte-order mark, comments and the header). */
  readonly bytes: number;
  /** 1-based line number of the header. */
  readonly headerLine: number;
  /** Row → line map; use lineOfRow(table, row). */
  readonly lineAnchors: LineAnchors;
}

/**
 * Defaults of CsvOptions (frozen): every column as numbers, delimiter 'auto', decimal '.',
 * comments '#', pandas-like null tokens, 1 MiB chunks.
 */
export const CSV_DEFAULTS = Object.freeze({
  columns: undefined as readonly (string | ColumnSpec)[] | undefined,
  delimiter: 'auto' as 'auto' | ',' | '\t' | ';',
  decimal: '.' as '.' | ',',
  commentPrefix: '#',
  nullTokens: Object.freeze(['NA', 'N/A', 'NaN', 'nan', 'NULL', 'null', 'None', '<NA>']) as readonly string[],
  chunkBytes: 1 << 20,
});

/** CsvOptions after defaults, validated. */
export interface ResolvedCsvOptions {
  readonly specs: readonly NormalizedSpec[] | null;
  readonly delimiter: 'auto' | ',' | '\t' | ';';
  readonly decimal: '.' | ',';
  readonly commentPrefix: string;
  readonly nullTokens: readonly string[];
  readonly chunkBytes: number;
}

/** Validate CSV options that have already been merged over CSV_DEFAULTS. */
export function checkCsvOptions(fn: string, o: typeof CSV_DEFAULTS | Required<CsvOptions>): ResolvedCsvOptions {
  const delimiter = checkOneOf(fn, 'delimiter', o.delimiter, ['auto', ',', '\t', ';'] as const);
  const decimal = checkOneOf(fn, 'decimal', o.decimal, ['.', ','] as const);
  if (decimal === ',' && delimiter === ',') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: decimal ',' needs a delimiter other than ','; pass delimiter ';' or '\\t' (or 'auto').`, { fn, option: 'delimiter' });
  }
  if (typeof o.commentPrefix !== 'string' || /[\r\n"]/.test(o.commentPrefix)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: commentPrefix must be a string without quotes or line breaks ('' for none), got ${JSON.stringify(o.commentPrefix)}.`, { fn, option: 'commentPrefix' });
  }
  if (!Array.isArray(o.nullTokens) || !o.nullTokens.every((t) => typeof t === 'string')) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: nullTokens must be an array of strings.`, { fn, option: 'nullTokens' });
  }
  const chunkBytes = checkInteger(fn, 'chunkBytes', o.chunkBytes, 1, 1 << 30);
  const specs = o.columns === undefined ? null : normalizeSpecs(fn, o.columns);
  return { specs, delimiter, decimal, commentPrefix: o.commentPrefix, nullTokens: o.nullTokens, chunkBytes };
}

/** Merge and validate CsvOptions. */
export function resolveCsvOptions(fn: string, options: CsvOptions | undefined): ResolvedCsvOptions {
  return checkCsvOptions(fn, resolveOptions(fn, CSV_DEFAULTS, options));
}

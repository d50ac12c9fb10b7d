import type { ResultWarning } from '@tuningfork/core';

/**
 * How one column of a file is read: which header it comes from, its name in the result, its
 * type, and what a missing column or cell means.
 */
export interface ColumnSpec {
  /** Header text in the file (a CSV header after trimming blanks, or an Arrow field name). */
  readonly name: string;
  /** Key of the column in the result. @defaultValue the same as `name` */
  readonly as?: string;
  /** `'number'` gives a Float64Array in `columns`; `'string'` a string array in `strings`. @defaultValue 'number' */
  readonly type?: 'number' | 'string';
  /** A missing column throws TF_MISSING_COLUMN when true and is left out of the result when false. @defaultValue true */
  readonly required?: boolean;
  /**
   * When true, an empty cell, a null token, NaN or ±Infinity throws TF_NON_FINITE naming the
   * file, column and row, instead of becoming NaN (or ±Infinity). Numeric columns only.
   * @defaultValue false
   */
  readonly finite?: boolean;
}

/**
 * Columns read from a file: numeric columns as Float64Array (a missing cell is NaN), text
 * columns as string arrays, all of length `rows`.
 */
export interface ColumnTable {
  /** The file path (or label) the table came from, as given by the caller. */
  readonly source: string;
  /** Number of data rows. */
  readonly rows: number;
  /** Numeric columns by result name. */
  readonly columns: Readonly<Record<string, Float64Array>>;
  /** Text columns by result name. */
  readonly strings: Readonly<Record<string, readonly string[]>>;
  /**
   * Missing cells per column, by result name: empty cells and null tokens (and, in numeric
   * columns, NaN values) — each is NaN in `columns` or '' in `strings`.
   */
  readonly nulls: Readonly<Record<string, number>>;
  /** Every column name present in the file, in file order (selected or not). */
  readonly fields: readonly string[];
  /** Documented repairs and caveats (e.g. a dropped truncated last line). */
  readonly warnings: readonly ResultWarning[];
}

/** A numeric column to write: one value per row. */
export type NumericColumn = Float64Array | Float32Array | Int32Array | Uint32Array | Int16Array | Uint16Array | Int8Array | Uint8Array;

/**
 * A table to write, by column name in output order: numeric typed arrays or string arrays,
 * all of the same length.
 */
export type ColumnData = Readonly<Record<string, NumericColumn | readonly string[]>>;

import { TuningforkError } from '@tuningfork/core';
import type { CsvTable } from './csv-options.js';

/**
 * The 1-based line number in the file of data row `row` (0-based) of a CsvTable, counting the
 * header, comments, blank lines and line breaks inside quoted fields.
 *
 * @param table - A table from readCsv or parseCsv.
 * @param row - Data row index, 0 ≤ row < table.rows.
 * @throws {TuningforkError} TF_BAD_OPTION when row is not an integer in range.
 *
 * @example
 * ```ts
 * lineOfRow(parseCsv('# note\nt\n1\n2\n'), 1); // 4
 * ```
 */
export function lineOfRow(table: Pick<CsvTable, 'rows' | 'lineAnchors'>, row: number): number {
  if (!Number.isInteger(row) || row < 0 || row >= table.rows) {
    throw new TuningforkError('TF_BAD_OPTION', `lineOfRow: row must be an integer in [0, ${table.rows - 1}], got ${row}.`, { fn: 'lineOfRow', option: 'row', value: row });
  }
  const { rows, lines } = table.lineAnchors;
  let lo = 0;
  let hi = rows.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (rows[mid]! <= row) lo = mid;
    else hi = mid - 1;
  }
  return lines[lo]! + (row - rows[lo]!);
}

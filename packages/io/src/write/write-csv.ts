import type { ColumnData } from '../table.js';
import { csvChunks, resolveCsvWriteOptions, type CsvWriteOptions } from './format-csv.js';
import { writeFileAtomic, type WriteResult } from './write-file-atomic.js';

/**
 * Write a columnar table to a CSV/TSV file, atomically and without building one big string.
 *
 * Formatting is that of formatCsv (shortest round-trip numbers, NaN as an empty cell, RFC 4180
 * quoting); rows are produced in chunks of about 1 MiB and streamed through writeFileAtomic,
 * so the target is either complete or untouched.
 *
 * @param path - Target file path; its folder must exist.
 * @param data - Columns by name (typed arrays or string arrays), all of equal length.
 * @param options - delimiter, lineEnding, header.
 * @returns `{ path, bytes }`.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH, TF_BAD_OPTION as formatCsv (before anything is
 *   written); TF_BAD_OUTPUT_PATH as writeFileAtomic.
 *
 * @example
 * ```ts
 * await writeCsv('out/events.csv', { time: events.time, name: [...events.name] });
 * ```
 */
export async function writeCsv(path: string, data: ColumnData, options: CsvWriteOptions = {}): Promise<WriteResult> {
  const o = resolveCsvWriteOptions('writeCsv', options);
  const chunks = csvChunks('writeCsv', data, o);
  const first = chunks.next(); // validates the table before a file is created
  function* all(): Generator<string> {
    if (!first.done) yield first.value;
    yield* chunks;
  }
  return writeFileAtomic(path, all());
}

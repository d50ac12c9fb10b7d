import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { TuningforkError, isTuningforkError } from '@tuningfork/core';
import { CsvParser } from '../internal/csv-parser.js';
import { resolveCsvOptions, type CsvOptions, type CsvTable } from './csv-options.js';

/**
 * Read a tidy CSV/TSV file into typed-array columns, streaming it in chunks.
 *
 * The file is read with a Node stream, `chunkBytes` at a time, and parsed incrementally: it is
 * never held as one string, so files far larger than memory allows for strings can be read.
 * The first line that is neither blank nor a comment is the header (names trimmed of blanks).
 * Quoting follows RFC 4180: a field starting with `"` may hold delimiters and line breaks,
 * and `""` inside it is one quote. A UTF-8 byte-order mark is skipped; lines may end in LF,
 * CRLF or CR; blank lines are skipped (as pandas does by default).
 *
 * Numeric cells must be decimal literals with optional sign, fraction and exponent (or
 * `±Infinity`), optionally padded with spaces: the value is exactly what JavaScript
 * `Number(text)` returns (correctly rounded). Empty cells and `nullTokens` become NaN and are
 * counted in `nulls`. Numeric columns grow in place, with their capacity estimated from the
 * file size, so peak memory stays close to the size of the parsed columns; a column over
 * 8 MiB is returned as a view of a buffer whose unused tail was never written (it occupies
 * address space, not memory) — call `.slice()` if you need a compact copy.
 *
 * A last line with too few fields and no line end (a file cut off mid-write) is dropped and
 * reported as warning `IO_TRUNCATED_LAST_LINE`.
 *
 * @param path - File path (reported in messages as given).
 * @param options - See CsvOptions.
 * @returns Columns, strings, row count, per-column missing counts, the header, the delimiter
 *   used, and a row → line map (lineOfRow).
 * @throws {TuningforkError} TF_BAD_FILE when the file cannot be read, is empty (no header), has a
 *   record with the wrong number of fields or an unclosed quote (naming the line);
 *   TF_MISSING_COLUMN for a required column absent from the header (with the closest name);
 *   TF_BAD_CELL for a cell that is not a number (naming file, column, line and text);
 *   TF_NON_FINITE for a missing or infinite cell in a `finite` column; TF_BAD_OPTION,
 *   TF_UNKNOWN_OPTION for bad options.
 *
 * @example
 * ```ts
 * const t = await readCsv('photometry.csv', { columns: ['time', { name: 'G', as: 'signal' }] });
 * t.columns.signal; // Float64Array
 * ```
 */
export async function readCsv(path: string, options: CsvOptions = {}): Promise<CsvTable> {
  const opts = resolveCsvOptions('readCsv', options);
  let size: number;
  try {
    const st = await stat(path);
    if (!st.isFile()) throw new Error('not a regular file');
    size = st.size;
  } catch (e) {
    throw new TuningforkError('TF_BAD_FILE', `readCsv: cannot read file '${path}': ${(e as Error).message}.`, { fn: 'readCsv', file: path });
  }
  const parser = new CsvParser({
    fn: 'readCsv',
    file: path,
    delimiter: opts.delimiter,
    decimal: opts.decimal,
    commentPrefix: opts.commentPrefix,
    nullTokens: opts.nullTokens,
    specs: opts.specs,
    expectedBytes: size,
  });
  const stream = createReadStream(path, { highWaterMark: opts.chunkBytes });
  try {
    for await (const chunk of stream) parser.push(chunk as Buffer);
  } catch (e) {
    if (isTuningforkError(e)) throw e;
    throw new TuningforkError('TF_BAD_FILE', `readCsv: error while reading file '${path}': ${(e as Error).message}.`, { fn: 'readCsv', file: path });
  } finally {
    stream.destroy();
  }
  return parser.finish();
}

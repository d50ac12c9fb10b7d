import { TuningforkError, resolveOptions } from '@tuningfork/core';
import { CsvParser } from '../internal/csv-parser.js';
import { CSV_DEFAULTS, checkCsvOptions, type CsvOptions, type CsvTable } from './csv-options.js';

/** Options of parseCsv: CsvOptions plus a label for messages. */
export interface ParseCsvOptions extends CsvOptions {
  /** Name used for the data in messages and in `source`. @defaultValue '<memory>' */
  label?: string;
}

const DEFAULTS = Object.freeze({ ...CSV_DEFAULTS, label: '<memory>' });

/**
 * Parse CSV/TSV text or bytes already in memory, with exactly the rules of readCsv.
 *
 * The input is fed to the same incremental parser in pieces of `chunkBytes` bytes, so a small
 * `chunkBytes` exercises every chunk boundary (tests use 1–7 bytes).
 *
 * @param data - CSV text, or its UTF-8 bytes.
 * @param options - See CsvOptions; `label` names the data in messages.
 * @returns The same CsvTable readCsv returns.
 * @throws {TuningforkError} The codes of readCsv (TF_BAD_FILE, TF_MISSING_COLUMN, TF_BAD_CELL,
 *   TF_NON_FINITE, TF_BAD_OPTION, TF_UNKNOWN_OPTION).
 *
 * @example
 * ```ts
 * parseCsv('time,x\n0,1.5\n0.1,\n').columns.x; // Float64Array [1.5, NaN]
 * ```
 */
export function parseCsv(data: string | Uint8Array, options: ParseCsvOptions = {}): CsvTable {
  const o = resolveOptions('parseCsv', DEFAULTS, options);
  const opts = checkCsvOptions('parseCsv', o);
  if (typeof o.label !== 'string') {
    throw new TuningforkError('TF_BAD_OPTION', `parseCsv: label must be a string, got ${typeof o.label}.`, { fn: 'parseCsv', option: 'label' });
  }
  if (typeof data !== 'string' && !(data instanceof Uint8Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `parseCsv: data must be a string or a Uint8Array, got ${typeof data}.`, { fn: 'parseCsv', option: 'data' });
  }
  const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : Buffer.from(data.buffer, data.byteOffset, data.byteLength);
  const parser = new CsvParser({
    fn: 'parseCsv',
    file: o.label,
    delimiter: opts.delimiter,
    decimal: opts.decimal,
    commentPrefix: opts.commentPrefix,
    nullTokens: opts.nullTokens,
    specs: opts.specs,
    expectedBytes: bytes.length,
  });
  for (let i = 0; i < bytes.length; i += opts.chunkBytes) parser.push(bytes.subarray(i, Math.min(bytes.length, i + opts.chunkBytes)));
  return parser.finish();
}

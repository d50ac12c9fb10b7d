import { writeFileAtomic, type WriteResult } from '../write/write-file-atomic.js';
import type { ColumnData } from '../table.js';
import { encodeArrow, type ArrowWriteOptions } from './encode-arrow.js';

/**
 * Write typed-array and string columns to an Arrow IPC file, atomically.
 *
 * Encodes with encodeArrow (file format by default) and writes through writeFileAtomic, so
 * the target either keeps its old content or gets the complete new file, never a part.
 *
 * @param path - Target file path; its folder must exist.
 * @param data - Columns by name, all of equal length.
 * @param options - `format` and schema `metadata`, as encodeArrow.
 * @returns `{ path, bytes }`.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH, TF_BAD_OPTION as encodeArrow; TF_BAD_OUTPUT_PATH as writeFileAtomic.
 *
 * @example
 * ```ts
 * await writeArrow('out/dff.arrow', { time, dms: dff });
 * ```
 */
export async function writeArrow(path: string, data: ColumnData, options: ArrowWriteOptions = {}): Promise<WriteResult> {
  return writeFileAtomic(path, encodeArrow(data, options));
}

import { open } from 'node:fs/promises';
import { TuningforkError } from '@tuningfork/core';
import { decodeWith, type ArrowReadOptions, type ArrowTable } from './decode-arrow.js';

const READ_CHUNK = 64 << 20;

/** Read a whole file into one fresh buffer (8-byte aligned: byteOffset 0) with large reads. */
async function readWhole(path: string): Promise<Buffer> {
  const fh = await open(path, 'r');
  try {
    const st = await fh.stat();
    if (!st.isFile()) throw new Error('not a regular file');
    const buf = Buffer.allocUnsafeSlow(st.size);
    let off = 0;
    while (off < st.size) {
      const { bytesRead } = await fh.read(buf, off, Math.min(READ_CHUNK, st.size - off), off);
      if (bytesRead === 0) break;
      off += bytesRead;
    }
    return off === st.size ? buf : buf.subarray(0, off);
  } finally {
    await fh.close();
  }
}

/**
 * Read an Arrow IPC file (file or stream format) into typed-array columns.
 *
 * The file is read into one buffer (64 MiB reads) and decoded with decodeArrow: a null-free Float64 field in
 * a single record batch is a zero-copy Float64Array view into that buffer.
 *
 * @param path - File path (reported in messages as given).
 * @param options - Column selection as in readCsv (ColumnSpec: rename, type, required, finite).
 * @returns See ArrowTable.
 * @throws {TuningforkError} TF_BAD_FILE when the file cannot be read or is not Arrow IPC;
 *   TF_MISSING_COLUMN, TF_BAD_CELL, TF_NON_FINITE as decodeArrow.
 *
 * @example
 * ```ts
 * const t = await readArrow('session.arrow', { columns: ['time', 'dms_465'] });
 * ```
 */
export async function readArrow(path: string, options: ArrowReadOptions = {}): Promise<ArrowTable> {
  let bytes: Buffer;
  try {
    bytes = await readWhole(path);
  } catch (e) {
    throw new TuningforkError('TF_BAD_FILE', `readArrow: cannot read file '${path}': ${(e as Error).message}.`, { fn: 'readArrow', file: path });
  }
  return decodeWith('readArrow', path, bytes, options);
}

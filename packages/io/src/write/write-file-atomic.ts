import { open, rename, stat, unlink, type FileHandle } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';
import { TuningforkError, checkBoolean, checkInteger, resolveOptions } from '@tuningfork/core';

/** What writeFileAtomic accepts: text (UTF-8), bytes, or a (possibly async) sequence of them. */
export type AtomicData =
  | string
  | Uint8Array
  | Iterable<string | Uint8Array>
  | AsyncIterable<string | Uint8Array>;

/** Options of writeFileAtomic. */
export interface WriteFileAtomicOptions {
  /** Flush the data (and then the folder entry) to disk before returning. @defaultValue true */
  fsync?: boolean;
  /** Permission bits of a newly created file (before the umask). @defaultValue 0o666 */
  mode?: number;
}

/** Result of a completed write. */
export interface WriteResult {
  /** The target path, as given. */
  readonly path: string;
  /** Bytes written. */
  readonly bytes: number;
}

const DEFAULTS = Object.freeze({ fsync: true, mode: 0o666 });

let sequence = 0;

function badPath(path: string, why: string): TuningforkError {
  return new TuningforkError('TF_BAD_OUTPUT_PATH', `writeFileAtomic: cannot write '${path}': ${why}`, { fn: 'writeFileAtomic', path });
}

async function syncFolder(dir: string): Promise<void> {
  let fh: FileHandle | undefined;
  try {
    fh = await open(dir, 'r');
    await fh.sync();
  } catch {
    // Some platforms and file systems cannot fsync a folder; the rename itself has happened.
  } finally {
    await fh?.close().catch(() => undefined);
  }
}

/**
 * Write a file so that it is either complete or absent: never half-written.
 *
 * The data go to a temporary file in the target's folder (`.<name>.<pid>.<n>.tmp`, created
 * exclusively), which is flushed to disk (`fsync`), closed, and renamed over the target. A
 * rename within one folder is atomic on POSIX file systems, so readers see the old file or the
 * new one. If anything fails — the data source throws, the disk fills, the process cannot
 * write — the temporary file is removed, an existing target is left untouched, and the error
 * is rethrown.
 *
 * @param path - Target file path; its folder must exist.
 * @param data - A string (written as UTF-8), bytes, or an iterable / async iterable of chunks
 *   (lets large outputs stream without building one string).
 * @param options - `fsync` (default true), `mode` of a new file.
 * @returns `{ path, bytes }`.
 * @throws {TuningforkError} TF_BAD_OUTPUT_PATH when the folder does not exist or the target is a
 *   folder; TF_BAD_OPTION for data of another type (a chunk that is not a string or bytes);
 *   any error of the data source or the file system, after cleaning up.
 *
 * @example
 * ```ts
 * await writeFileAtomic('out/summary.txt', 'done\n');
 * ```
 */
export async function writeFileAtomic(path: string, data: AtomicData, options: WriteFileAtomicOptions = {}): Promise<WriteResult> {
  const o = resolveOptions('writeFileAtomic', DEFAULTS, options);
  const fsync = checkBoolean('writeFileAtomic', 'fsync', o.fsync);
  const mode = checkInteger('writeFileAtomic', 'mode', o.mode, 0, 0o7777);
  if (typeof path !== 'string' || path.length === 0) throw badPath(String(path), 'the path must be a non-empty string.');
  const target = resolve(path);
  const dir = dirname(target);
  try {
    if (!(await stat(dir)).isDirectory()) throw badPath(path, `'${dirname(path)}' is not a folder.`);
  } catch (e) {
    if (e instanceof TuningforkError) throw e;
    throw badPath(path, `its folder '${dirname(path)}' does not exist or cannot be read (${(e as Error).message}). Create the folder first.`);
  }
  try {
    if ((await stat(target)).isDirectory()) throw badPath(path, 'it is a folder.');
  } catch (e) {
    if (e instanceof TuningforkError) throw e; // a missing target is the normal case
  }
  const tmp = join(dir, `.${basename(target)}.${process.pid}.${(sequence++).toString(36)}.tmp`);
  let fh: FileHandle | undefined;
  let bytes = 0;
  try {
    fh = await open(tmp, 'wx', mode);
    const handle = fh;
    const put = async (chunk: unknown): Promise<void> => {
      let buf: Uint8Array;
      if (typeof chunk === 'string') buf = Buffer.from(chunk, 'utf8');
      else if (chunk instanceof Uint8Array) buf = chunk;
      else throw new TuningforkError('TF_BAD_OPTION', `writeFileAtomic: data chunks must be strings or Uint8Array, got ${chunk === null ? 'null' : typeof chunk}.`, { fn: 'writeFileAtomic', path });
      let off = 0;
      while (off < buf.length) {
        const { bytesWritten } = await handle.write(buf, off, buf.length - off);
        off += bytesWritten;
      }
      bytes += buf.length;
    };
    if (typeof data === 'string' || data instanceof Uint8Array) await put(data);
    else if (data !== null && typeof data === 'object' && Symbol.asyncIterator in data) {
      for await (const chunk of data as AsyncIterable<unknown>) await put(chunk);
    } else if (data !== null && typeof data === 'object' && Symbol.iterator in data) {
      for (const chunk of data as Iterable<unknown>) await put(chunk);
    } else {
      throw new TuningforkError('TF_BAD_OPTION', `writeFileAtomic: data must be a string, a Uint8Array or an (async) iterable of them, got ${data === null ? 'null' : typeof data}.`, { fn: 'writeFileAtomic', path });
    }
    if (fsync) await fh.sync();
    await fh.close();
    fh = undefined;
    await rename(tmp, target);
  } catch (e) {
    await fh?.close().catch(() => undefined);
    await unlink(tmp).catch(() => undefined);
    throw e;
  }
  if (fsync) await syncFolder(dir);
  return { path, bytes };
}

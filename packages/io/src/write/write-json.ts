import { TuningforkError, checkInteger, resolveOptions } from '@tuningfork/core';
import { writeFileAtomic, type WriteResult } from './write-file-atomic.js';

/** Options of writeJson. */
export interface WriteJsonOptions {
  /** Spaces of indentation; 0 writes one line. @defaultValue 2 */
  indent?: number;
}

const DEFAULTS = Object.freeze({ indent: 2 });

/**
 * Write a value as JSON, atomically, with a final newline.
 *
 * Typed arrays are written as plain arrays; NaN and ±Infinity become `null` (JSON has no
 * such numbers). Object key order is kept.
 *
 * @param path - Target file path; its folder must exist.
 * @param value - Any JSON-serialisable value (plus typed arrays).
 * @param options - indent.
 * @returns `{ path, bytes }`.
 * @throws {TuningforkError} TF_BAD_OPTION when the value cannot be serialised (a BigInt, a cycle);
 *   TF_BAD_OUTPUT_PATH as writeFileAtomic.
 *
 * @example
 * ```ts
 * await writeJson('out/provenance.json', makeProvenance('loadSession', opts, seed, inputs));
 * ```
 */
export async function writeJson(path: string, value: unknown, options: WriteJsonOptions = {}): Promise<WriteResult> {
  const o = resolveOptions('writeJson', DEFAULTS, options);
  const indent = checkInteger('writeJson', 'indent', o.indent, 0, 10);
  let text: string | undefined;
  try {
    text = JSON.stringify(value, (_k, v: unknown) => (ArrayBuffer.isView(v) && !(v instanceof DataView) ? Array.from(v as unknown as ArrayLike<number>) : v), indent);
  } catch (e) {
    throw new TuningforkError('TF_BAD_OPTION', `writeJson: the value for '${path}' cannot be written as JSON: ${(e as Error).message}.`, { fn: 'writeJson', path });
  }
  if (text === undefined) throw new TuningforkError('TF_BAD_OPTION', `writeJson: the value for '${path}' has no JSON form (${typeof value}).`, { fn: 'writeJson', path });
  return writeFileAtomic(path, `${text}\n`);
}

import { readFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import { TuningforkError } from '@tuningfork/core';
import type { SessionManifest } from './manifest-types.js';
import { validateManifest } from './validate-manifest.js';

/** Line and column (1-based) of a character offset in a text. */
function position(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let start = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      start = i + 1;
    }
  }
  return { line, column: offset - start + 1 };
}

/**
 * Read and validate a session manifest file (JSON, schema version 1; see validateManifest).
 * Relative file paths in it resolve against the manifest's own folder.
 *
 * @param path - Path of the manifest JSON file.
 * @returns The validated manifest.
 * @throws {TuningforkError} TF_BAD_FILE when the file cannot be read; TF_BAD_MANIFEST for
 *   invalid JSON (with line and column) or a schema violation (naming the field path).
 *
 * @example
 * ```ts
 * const m = await readManifest('data/rat07-d12/session.json');
 * m.files.map((f) => f.kind);
 * ```
 */
export async function readManifest(path: string): Promise<SessionManifest> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new TuningforkError('TF_BAD_FILE', `readManifest: cannot read manifest '${path}': ${(e as Error).message}.`, { fn: 'readManifest', file: path });
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    const m = /position (\d+)/.exec((e as Error).message);
    const where = m ? position(text, Number(m[1])) : undefined;
    throw new TuningforkError('TF_BAD_MANIFEST', `manifest '${path}': not valid JSON${where ? ` at line ${where.line}, column ${where.column}` : ''}: ${(e as Error).message}.`, { manifest: path, path: '', ...(where ?? {}) });
  }
  return validateManifest(value, { baseDir: dirname(path), label: path });
}

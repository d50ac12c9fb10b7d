import { readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { canonicalJson, sha256 } from '@tuningfork/core';
import type { ProvenanceInput } from '@tuningfork/core';

/** File name of the record that marks a finished session folder. */
export const DONE_FILE = '.done.json';

/** One file of a finished session folder. */
export interface OutputFileRecord {
  /** Path relative to the session folder ('/' separators). */
  readonly name: string;
  readonly sha256: string;
  readonly bytes: number;
}

/**
 * The record written last into a session folder. `key` is the SHA-256 of the canonical JSON of
 * `{ version, pipeline, options, seed, inputs }`: equal keys mean equal inputs (by content),
 * options, seed, pipeline and version, so the session need not be analysed again.
 */
export interface DoneRecord {
  readonly tool: 'tuningfork';
  readonly version: string;
  readonly session: string;
  readonly key: string;
  readonly pipeline: string;
  readonly options: unknown;
  readonly seed: number;
  readonly inputs: readonly ProvenanceInput[];
  readonly outputs: readonly OutputFileRecord[];
}

/** The content key of a session run (see DoneRecord). */
export function doneKey(parts: { version: string; pipeline: string; options: unknown; seed: number; inputs: readonly ProvenanceInput[] }): string {
  return sha256(canonicalJson({
    version: parts.version,
    pipeline: parts.pipeline,
    options: parts.options,
    seed: parts.seed,
    inputs: parts.inputs.map((i) => ({ name: i.name, sha256: i.sha256 })),
  }));
}

/**
 * True when `dir` holds a finished session with this key: its `.done.json` has the key and every
 * output it lists exists with the recorded size.
 */
export async function isUpToDate(dir: string, key: string): Promise<boolean> {
  let rec: DoneRecord;
  try {
    rec = JSON.parse(await readFile(join(dir, DONE_FILE), 'utf8')) as DoneRecord;
  } catch {
    return false;
  }
  if (rec.key !== key || !Array.isArray(rec.outputs)) return false;
  for (const f of rec.outputs) {
    try {
      if ((await stat(join(dir, ...f.name.split('/')))).size !== f.bytes) return false;
    } catch {
      return false;
    }
  }
  return true;
}

/** Pretty JSON with keys sorted at every level (stable bytes for equal content). */
export function stableJson(value: unknown): string {
  return `${JSON.stringify(JSON.parse(canonicalJson(value)), null, 2)}\n`;
}

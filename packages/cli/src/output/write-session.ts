import { mkdir, rm } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { sha256File, TuningforkError } from '@tuningfork/core';
import { writeArrow, writeCsv, writeFileAtomic } from '@tuningfork/io';
import type { AnalysisOutputs } from '../pipeline.js';
import { DONE_FILE, stableJson } from './done-record.js';
import type { DoneRecord, OutputFileRecord } from './done-record.js';
import { resolveInside } from './paths.js';
import { stagingPath, publishStaged } from './staging.js';

/** File name of the provenance record of a session folder. */
export const PROVENANCE_FILE = 'provenance.json';

/** What commitSession writes. */
export interface SessionWrite {
  /** Absolute output folder of the run. */
  readonly outRoot: string;
  /** Session folder relative to outRoot. */
  readonly outDir: string;
  readonly id: string;
  readonly outputs: AnalysisOutputs;
  /** Written as provenance.json. */
  readonly provenance: unknown;
  /** The done record without its `outputs` list (filled in here). */
  readonly done: Omit<DoneRecord, 'outputs'>;
}

/**
 * Write a session's outputs so that its folder is complete or absent: every file goes into a
 * fresh staging folder inside the output folder (tables as `<name>.arrow` and `<name>.csv`,
 * texts under their names, `provenance.json`, and `.done.json` last), which is then renamed to
 * the session folder. An older folder of the session is moved aside first and removed after.
 *
 * @returns The files written, relative to the session folder, sorted by name.
 * @throws {TuningforkError} TF_BAD_OUTPUT_PATH for a text name or session folder that would
 *   leave the output folder, or names that collide; file-system errors after cleaning up.
 */
export async function commitSession(w: SessionWrite): Promise<OutputFileRecord[]> {
  const final = resolveInside(w.outRoot, w.outDir, `output folder of session '${w.id}'`);
  const stage = stagingPath(w.outRoot, w.id);
  const written = new Map<string, string>();
  const claim = (name: string): string => {
    if (written.has(name) || name === DONE_FILE || name === PROVENANCE_FILE) {
      throw new TuningforkError('TF_BAD_OUTPUT_PATH', `session '${w.id}': two outputs are named '${name}' (tables are written as <name>.arrow and <name>.csv; provenance.json and .done.json are reserved).`, { session: w.id, name });
    }
    const abs = resolveInside(stage, name, `output '${name}' of session '${w.id}'`);
    written.set(name, abs);
    return abs;
  };
  // Resolve every name before creating anything, so a bad name writes nothing.
  const tableNames = Object.keys(w.outputs.tables).sort();
  const textNames = Object.keys(w.outputs.texts).sort();
  const targets = {
    tables: tableNames.map((n) => ({ n, arrow: claim(`${n}.arrow`), csv: claim(`${n}.csv`) })),
    texts: textNames.map((n) => ({ n, path: claim(n) })),
    provenance: join(stage, PROVENANCE_FILE),
  };
  try {
    await mkdir(stage, { recursive: true });
    for (const t of targets.tables) {
      const table = w.outputs.tables[t.n]!;
      if (Object.keys(table.columns).length === 0) continue;
      await writeArrow(t.arrow, table.columns);
      await writeCsv(t.csv, table.columns);
    }
    for (const t of targets.texts) {
      await mkdir(dirname(t.path), { recursive: true });
      await writeFileAtomic(t.path, w.outputs.texts[t.n]!);
    }
    await writeFileAtomic(targets.provenance, stableJson(w.provenance));
    const files: OutputFileRecord[] = [];
    const names = [...written.keys(), PROVENANCE_FILE].sort();
    for (const name of names) {
      const abs = name === PROVENANCE_FILE ? targets.provenance : written.get(name)!;
      let h;
      try {
        h = await sha256File(abs);
      } catch {
        continue; // a table without columns was not written
      }
      files.push({ name, sha256: h.sha256, bytes: h.bytes });
    }
    const done: DoneRecord = { ...w.done, outputs: files };
    await writeFileAtomic(join(stage, DONE_FILE), stableJson(done));
    await mkdir(dirname(final), { recursive: true });
    await publishStaged(stage, final);
    return files;
  } catch (e) {
    await rm(stage, { recursive: true, force: true }).catch(() => undefined);
    throw e;
  }
}

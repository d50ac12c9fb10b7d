import { existsSync, statSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { basename, dirname, isAbsolute, relative, resolve } from 'node:path';
import { TuningforkError } from '@tuningfork/core';
import { validateManifest } from '@tuningfork/io';
import type { SessionManifest } from '@tuningfork/io';
import type { SessionJob } from '../run/job-types.js';
import { resolveInside } from '../output/paths.js';
import { STAGING_DIR } from '../output/staging.js';
import { isBatchManifest, parseBatchManifest } from './batch-manifest.js';
import type { BatchEntry, BatchManifest } from './batch-manifest.js';
import { mergeOptions, sessionSeed } from './session-seed.js';

/** Folder (inside the output folder) of the merged tables; reserved. */
export const MERGED_DIR = 'merged';

/** A session id must be usable as a folder name on every platform. */
const SAFE_ID = /^[A-Za-z0-9][A-Za-z0-9._-]{0,127}$/;

/** One session of a plan, before it becomes a job (no output folder yet). */
export interface PlannedSession {
  readonly id: string;
  readonly animal: string;
  readonly group: string;
  readonly manifestPath: string;
  readonly manifest: SessionManifest;
  readonly options: Readonly<Record<string, unknown>>;
  readonly seed: number;
  readonly seedSource: 'entry' | 'manifest' | 'derived';
  /** Output folder relative to the output folder. */
  readonly outDir: string;
  /** Where in the batch manifest the session is listed ('' for a lone session manifest). */
  readonly at: string;
}

/** A manifest read and checked: its sessions sorted by id. */
export interface Plan {
  readonly kind: 'session' | 'batch';
  /** Absolute path of the manifest given on the command line. */
  readonly manifestPath: string;
  readonly batch: BatchManifest | null;
  /** Batch seed the derived session seeds come from. */
  readonly batchSeed: number;
  readonly sessions: readonly PlannedSession[];
}

/** A path for messages: relative to the working folder when inside it. */
export function displayPath(abs: string, cwd: string = process.cwd()): string {
  const rel = relative(cwd, abs);
  return rel !== '' && !rel.startsWith('..') && !isAbsolute(rel) ? rel : abs;
}

async function readJson(abs: string, label: string): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(abs, 'utf8');
  } catch (e) {
    const errno = (e as NodeJS.ErrnoException).code;
    throw new TuningforkError('TF_BAD_FILE', `cannot read manifest '${label}': ${errno === 'ENOENT' ? 'no such file' : errno === 'EISDIR' ? 'it is a folder' : (e as Error).message}.`, { file: label });
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  try {
    return JSON.parse(text) as unknown;
  } catch (e) {
    const m = /position (\d+)/.exec((e as Error).message);
    let where = '';
    if (m !== null) {
      const upto = text.slice(0, Number(m[1]));
      const line = upto.split('\n').length;
      where = ` at line ${line}, column ${Number(m[1]) - upto.lastIndexOf('\n')}`;
    }
    throw new TuningforkError('TF_BAD_MANIFEST', `manifest '${label}': not valid JSON${where}: ${(e as Error).message}.`, { manifest: label, path: '' });
  }
}

function checkFiles(m: SessionManifest, label: string): void {
  for (const f of m.files) {
    let why: string | undefined;
    if (!existsSync(f.resolvedPath)) why = 'does not exist';
    else if (!statSync(f.resolvedPath).isFile()) why = 'is not a file';
    if (why !== undefined) {
      throw new TuningforkError('TF_BAD_FILE', `manifest '${label}', ${f.at}.path: data file '${f.path}' ${why} (looked for '${displayPath(f.resolvedPath)}'; relative paths resolve against the manifest's folder).`, { manifest: label, path: `${f.at}.path`, file: f.resolvedPath });
    }
  }
}

function checkId(id: string, where: string, label: string): void {
  if (!SAFE_ID.test(id)) {
    throw new TuningforkError('TF_BAD_MANIFEST', `manifest '${label}': ${where} '${id}' cannot name an output folder; use letters, digits, '.', '_' and '-' (starting with a letter or digit, at most 128 characters).`, { manifest: label, path: where });
  }
}

/**
 * Read a session or batch manifest, validate it and every session manifest it lists (io's
 * validator), check that every data file exists, and return the sessions sorted by id, with
 * their options and seeds resolved. Nothing is written.
 *
 * Options, lowest precedence first: batch `options`, session manifest `options`, batch entry
 * `options` (plain objects merge key by key). Seed: the batch entry's `seed`, else the session
 * manifest's `seed`, else derived from the batch seed and the session id (sessionSeed); the batch
 * seed is the batch manifest's `seed`, else `seed` (the --seed option), else 0.
 *
 * @param manifestArg - Path of the manifest as given on the command line.
 * @param seed - The --seed option.
 * @throws {TuningforkError} TF_BAD_FILE, TF_BAD_MANIFEST (naming the field), TF_BAD_OUTPUT_PATH
 *   for an entry's `out` that leaves the output folder.
 */
export async function planFromManifest(manifestArg: string, seed: number | undefined, cwd: string = process.cwd()): Promise<Plan> {
  const abs = resolve(cwd, manifestArg);
  const value = await readJson(abs, manifestArg);
  if (!isBatchManifest(value)) {
    const m = validateManifest(value, { baseDir: dirname(abs), label: manifestArg });
    checkFiles(m, manifestArg);
    checkId(m.session, 'session', manifestArg);
    const batchSeed = seed ?? 0;
    const s: PlannedSession = {
      id: m.session,
      animal: m.animal ?? '',
      group: '',
      manifestPath: abs,
      manifest: m,
      options: m.options,
      ...(m.seed !== undefined ? { seed: m.seed, seedSource: 'manifest' as const } : { seed: sessionSeed(batchSeed, m.session), seedSource: 'derived' as const }),
      outDir: `sessions/${m.session}`,
      at: '',
    };
    return { kind: 'session', manifestPath: abs, batch: null, batchSeed, sessions: [s] };
  }
  const batch = parseBatchManifest(value, manifestArg, cwd);
  const batchSeed = batch.seed ?? seed ?? 0;
  const seen = new Map<string, string>();
  const outs = new Map<string, string>();
  const sessions: PlannedSession[] = [];
  for (let i = 0; i < batch.sessions.length; i++) {
    const e: BatchEntry = batch.sessions[i]!;
    const at = `sessions[${i}]`;
    const label = displayPath(e.manifest, cwd);
    if (!existsSync(e.manifest)) {
      throw new TuningforkError('TF_BAD_FILE', `batch manifest '${manifestArg}', ${at}.manifest: session manifest '${label}' does not exist (relative paths resolve against the batch manifest's folder).`, { manifest: manifestArg, path: `${at}.manifest`, file: e.manifest });
    }
    const m = validateManifest(await readJson(e.manifest, label), { baseDir: dirname(e.manifest), label });
    checkFiles(m, label);
    const id = e.id ?? m.session;
    checkId(id, e.id !== undefined ? `${at}.id` : `session (listed at ${at})`, e.id !== undefined ? manifestArg : label);
    const prev = seen.get(id);
    if (prev !== undefined) {
      throw new TuningforkError('TF_BAD_MANIFEST', `batch manifest '${manifestArg}': ${at} has session id '${id}', already used by ${prev}; give one of them a distinct "id".`, { manifest: manifestArg, path: `${at}.id` });
    }
    seen.set(id, at);
    const outDir = e.out ?? `sessions/${id}`;
    const norm = checkOutDir(outDir, `${at}.out`);
    for (const [other, otherAt] of outs) {
      if (norm === other || norm.startsWith(`${other}/`) || other.startsWith(`${norm}/`)) {
        throw new TuningforkError('TF_BAD_OUTPUT_PATH', `batch manifest '${manifestArg}': ${at} writes to '${outDir}', which overlaps the output folder of ${otherAt}; give each session its own folder.`, { manifest: manifestArg, path: `${at}.out` });
      }
    }
    outs.set(norm, at);
    const animal = e.animal !== '' ? e.animal : m.animal ?? '';
    const options = mergeOptions(batch.options, m.options, e.options);
    const chosen = e.seed !== undefined ? { seed: e.seed, seedSource: 'entry' as const }
      : m.seed !== undefined ? { seed: m.seed, seedSource: 'manifest' as const }
        : { seed: sessionSeed(batchSeed, id), seedSource: 'derived' as const };
    sessions.push({ id, animal, group: e.group, manifestPath: e.manifest, manifest: m, options, ...chosen, outDir, at });
  }
  sessions.sort((a, b) => (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
  return { kind: 'batch', manifestPath: abs, batch, batchSeed, sessions };
}

/**
 * Check a session output folder (relative to the output folder) without touching the disk:
 * relative, no '..', not the reserved `merged` or `.staging` folders.
 *
 * @returns The normalised relative path ('/' separators, no '.' segments).
 * @throws {TuningforkError} TF_BAD_OUTPUT_PATH.
 */
export function checkOutDir(outDir: string, where: string): string {
  const probe = resolveInside('/__out__', outDir, where);
  const norm = relative('/__out__', probe).split(/[\\/]/).join('/');
  const top = norm.split('/')[0];
  if (top === MERGED_DIR || top === STAGING_DIR) {
    throw new TuningforkError('TF_BAD_OUTPUT_PATH', `${where} '${outDir}' is inside the reserved folder '${top}' of the output folder; choose another name.`, { path: outDir, what: where });
  }
  return norm;
}

/** Jobs for the planned sessions, in id order. */
export function jobsOf(plan: Plan, outRoot: string, pipeline: string, pipelineSpecifier: string, force: boolean): SessionJob[] {
  return plan.sessions.map((s, index) => ({
    id: s.id,
    animal: s.animal,
    group: s.group,
    index,
    manifestPath: s.manifestPath,
    outRoot,
    outDir: s.outDir,
    options: s.options,
    seed: s.seed,
    seedSource: s.seedSource,
    pipeline,
    pipelineSpecifier,
    force,
  }));
}

/** The manifest's file name, used as its input name in provenance. */
export function manifestInputName(manifestPath: string): string {
  return basename(manifestPath);
}

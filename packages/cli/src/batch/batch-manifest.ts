import { dirname, isAbsolute, resolve } from 'node:path';
import { closestKey, TuningforkError } from '@tuningfork/core';

/** One session of a batch manifest, with paths resolved. */
export interface BatchEntry {
  /** Absolute path of the session manifest. */
  readonly manifest: string;
  /** Session id overriding the one in the session manifest (needed when two manifests share an id). */
  readonly id: string | undefined;
  /** Animal label ('' when not given). */
  readonly animal: string;
  /** Group label, e.g. a cohort or treatment ('' when not given). */
  readonly group: string;
  /** Seed for this session, overriding the session manifest's and the derived one. */
  readonly seed: number | undefined;
  /** Analysis options for this session (override the session manifest's). */
  readonly options: Readonly<Record<string, unknown>>;
  /** Output folder of the session relative to the output folder. @defaultValue `sessions/<id>` */
  readonly out: string | undefined;
}

/**
 * A batch manifest: many sessions (of many animals and groups) analysed with shared options.
 *
 * ```json
 * {
 *   "description": "DMS vs NAc cohort, reversal days 1-5",
 *   "seed": 7,
 *   "options": { "…": "analysis options shared by every session" },
 *   "sessions": [
 *     { "manifest": "rat01/day1.json", "animal": "rat01", "group": "DMS" },
 *     { "manifest": "rat02/day1.json", "animal": "rat02", "group": "NAc", "seed": 11 }
 *   ]
 * }
 * ```
 */
export interface BatchManifest {
  /** Absolute path of the batch manifest file. */
  readonly path: string;
  readonly description: string;
  /** Batch seed (session seeds are derived from it), or undefined when not given. */
  readonly seed: number | undefined;
  /** Analysis options shared by every session (lowest precedence). */
  readonly options: Readonly<Record<string, unknown>>;
  readonly sessions: readonly BatchEntry[];
}

const BATCH_KEYS = ['description', 'seed', 'options', 'sessions'] as const;
const ENTRY_KEYS = ['manifest', 'id', 'animal', 'group', 'seed', 'options', 'out'] as const;

/**
 * True when a parsed JSON value is a batch manifest: an object with a `sessions` key (or, lacking
 * the session manifest's `schemaVersion` and `files`, a key that is a misspelling of it).
 */
export function isBatchManifest(value: unknown): boolean {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) return false;
  const keys = Object.keys(value);
  if (keys.includes('sessions')) return true;
  // A misspelled 'sessions' in a file that is clearly not a session manifest: validate it as a
  // batch, so that the error suggests 'sessions'.
  return !keys.includes('schemaVersion') && !keys.includes('files') && keys.some((k) => closestKey(k, ['sessions']) === 'sessions');
}

function fail(file: string, field: string, message: string): never {
  throw new TuningforkError('TF_BAD_MANIFEST', `batch manifest '${file}': ${field} ${message}`, { file, field });
}

function describe(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  if (typeof v === 'string') return JSON.stringify(v);
  if (typeof v === 'object') return 'an object';
  return `${typeof v} ${String(v)}`;
}

function checkKeys(file: string, where: string, obj: Record<string, unknown>, known: readonly string[]): void {
  for (const k of Object.keys(obj)) {
    if (!known.includes(k)) {
      const hint = closestKey(k, known);
      fail(file, `${where}${where === '' ? '' : '.'}${k}`, `is not a known field${hint !== undefined ? ` (did you mean '${hint}'?)` : ''}; known fields: ${known.join(', ')}.`);
    }
  }
}

function optSeed(file: string, field: string, v: unknown): number | undefined {
  if (v === undefined) return undefined;
  if (typeof v !== 'number' || !Number.isSafeInteger(v) || v < 0) fail(file, field, `must be a non-negative integer, got ${describe(v)}.`);
  return v;
}

function optString(file: string, field: string, v: unknown): string | undefined {
  if (v === undefined) return undefined;
  if (typeof v !== 'string') fail(file, field, `must be a string, got ${describe(v)}.`);
  return v;
}

function optOptions(file: string, field: string, v: unknown): Readonly<Record<string, unknown>> {
  if (v === undefined) return {};
  if (v === null || typeof v !== 'object' || Array.isArray(v)) fail(file, field, `must be an object of analysis options, got ${describe(v)}.`);
  return v as Record<string, unknown>;
}

/**
 * Validate a parsed batch manifest and resolve its session paths against the manifest's folder.
 *
 * @param value - The parsed JSON.
 * @param path - Path of the manifest file (absolute, or relative to `cwd`).
 * @throws {TuningforkError} TF_BAD_MANIFEST naming the field (e.g. `sessions[2].animal`) for a
 *   wrong type, a missing `manifest`, an unknown field (with a did-you-mean hint) or an empty list.
 */
export function parseBatchManifest(value: unknown, path: string, cwd: string = process.cwd()): BatchManifest {
  const file = resolve(cwd, path);
  if (value === null || typeof value !== 'object' || Array.isArray(value)) fail(path, 'the top level', `must be a JSON object, got ${describe(value)}.`);
  const obj = value as Record<string, unknown>;
  checkKeys(path, '', obj, BATCH_KEYS);
  const description = optString(path, 'description', obj.description) ?? '';
  const seed = optSeed(path, 'seed', obj.seed);
  const options = optOptions(path, 'options', obj.options);
  if (!Array.isArray(obj.sessions)) fail(path, 'sessions', `must be an array of { manifest, animal, group, … } objects, got ${describe(obj.sessions)}.`);
  if (obj.sessions.length === 0) fail(path, 'sessions', 'is empty; list at least one session.');
  const base = dirname(file);
  const sessions = (obj.sessions as unknown[]).map((raw, i): BatchEntry => {
    const where = `sessions[${i}]`;
    if (typeof raw === 'string') raw = { manifest: raw };
    if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) fail(path, where, `must be an object like { "manifest": "rat01/day1.json", "animal": "rat01" } or a manifest path, got ${describe(raw)}.`);
    const e = raw as Record<string, unknown>;
    checkKeys(path, where, e, ENTRY_KEYS);
    const m = optString(path, `${where}.manifest`, e.manifest);
    if (m === undefined || m.trim() === '') fail(path, `${where}.manifest`, 'is missing; give the path of the session manifest (relative to the batch manifest).');
    return {
      manifest: isAbsolute(m) ? m : resolve(base, m),
      id: optString(path, `${where}.id`, e.id),
      animal: optString(path, `${where}.animal`, e.animal) ?? '',
      group: optString(path, `${where}.group`, e.group) ?? '',
      seed: optSeed(path, `${where}.seed`, e.seed),
      options: optOptions(path, `${where}.options`, e.options),
      out: optString(path, `${where}.out`, e.out),
    };
  });
  return { path: file, description, seed, options, sessions };
}

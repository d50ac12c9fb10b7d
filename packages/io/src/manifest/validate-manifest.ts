import { isAbsolute, resolve } from 'node:path';
import { TuningforkError, closestKey, formatValue } from '@tuningfork/core';
import type { DeviceClockSpec } from '@tuningfork/core';
import type { TrialField } from '../readers/read-trials.js';
import {
  MANIFEST_SCHEMA_VERSION,
  type FileFormat, type FileKind, type ManifestCsvSettings, type ManifestFile, type ManifestSite, type SessionManifest,
} from './manifest-types.js';

/** Options of validateManifest. */
export interface ValidateManifestOptions {
  /** Folder that relative file paths resolve against. @defaultValue process.cwd() */
  baseDir?: string;
  /** Name of the manifest in messages (its path). @defaultValue '<manifest>' */
  label?: string;
}

type Json = Record<string, unknown>;

const KINDS: readonly FileKind[] = ['photometry', 'continuous', 'events', 'spikes', 'trials'];
const FORMATS: readonly FileFormat[] = ['csv', 'tsv', 'arrow'];
const TOP_KEYS = ['schemaVersion', 'session', 'animal', 'seed', 'options', 'files', 'notes'];
const COMMON_FILE_KEYS = ['kind', 'path', 'format', 'timeUnit', 'columns', 'csv', 'notes'];
const KIND_KEYS: Readonly<Record<FileKind, readonly string[]>> = {
  photometry: ['sites', 'jitterTolerance'],
  continuous: ['channels', 'jitterTolerance'],
  events: ['duplicates', 'clock'],
  spikes: ['unitPrefix'],
  trials: ['choiceLabels', 'nOptions'],
};
const COLUMN_KEYS: Readonly<Record<FileKind, readonly string[]>> = {
  photometry: ['time'],
  continuous: ['time'],
  events: ['time', 'name', 'value'],
  spikes: ['unit', 'time'],
  trials: ['trial', 'cueTime', 'choiceTime', 'choice', 'outcomeTime', 'reward'],
};
const COLUMN_DEFAULTS: Readonly<Record<string, string>> = { time: 'time', name: 'name', value: 'value', unit: 'unit' };
const CSV_KEYS = ['delimiter', 'decimal', 'commentPrefix', 'nullTokens'];

/** Validation context: the manifest's name, for messages. */
class Checker {
  constructor(readonly label: string) {}

  fail(at: string, what: string, extra: Record<string, unknown> = {}): never {
    throw new TuningforkError('TF_BAD_MANIFEST', `manifest '${this.label}': ${at || '(top level)'} ${what}`, { manifest: this.label, path: at, ...extra });
  }

  object(v: unknown, at: string): Json {
    if (v === null || typeof v !== 'object' || Array.isArray(v)) this.fail(at, `must be an object ({ … }), got ${Array.isArray(v) ? 'an array' : formatValue(v)}.`);
    return v as Json;
  }

  keys(o: Json, at: string, allowed: readonly string[], what: string): void {
    for (const k of Object.keys(o)) {
      if (allowed.includes(k)) continue;
      const hint = closestKey(k, allowed);
      this.fail(join(at, k), `is not a known key${what ? ` of ${what}` : ''}.${hint ? ` Did you mean '${hint}'?` : ''} Allowed keys: ${allowed.join(', ')}.`, hint ? { suggestion: hint } : {});
    }
  }

  string(v: unknown, at: string, what = 'a non-empty string'): string {
    if (typeof v !== 'string' || v.length === 0) this.fail(at, `must be ${what}, got ${formatValue(v)}.`);
    return v;
  }

  oneOf<T extends string>(v: unknown, at: string, allowed: readonly T[]): T {
    if (typeof v !== 'string' || !(allowed as readonly string[]).includes(v)) {
      const hint = typeof v === 'string' ? closestKey(v, allowed) : undefined;
      this.fail(at, `must be one of ${allowed.map((a) => `'${a}'`).join(', ')}, got ${formatValue(v)}.${hint ? ` Did you mean '${hint}'?` : ''}`, hint ? { suggestion: hint } : {});
    }
    return v as T;
  }

  array(v: unknown, at: string, nonEmpty: boolean): unknown[] {
    if (!Array.isArray(v)) this.fail(at, `must be an array ([ … ]), got ${formatValue(v)}.`);
    if (nonEmpty && v.length === 0) this.fail(at, 'must list at least one entry.');
    return v;
  }
}

function join(at: string, key: string | number): string {
  return typeof key === 'number' ? `${at}[${key}]` : at ? `${at}.${key}` : key;
}

function formatFromPath(path: string): FileFormat {
  const p = path.toLowerCase();
  if (/\.(arrow|arrows|ipc|feather)$/.test(p)) return 'arrow';
  if (/\.(tsv|tab)$/.test(p)) return 'tsv';
  return 'csv';
}

function csvSettings(c: Checker, v: unknown, at: string): ManifestCsvSettings {
  if (v === undefined) return {};
  const o = c.object(v, at);
  c.keys(o, at, CSV_KEYS, 'csv settings');
  const out: { -readonly [K in keyof ManifestCsvSettings]: ManifestCsvSettings[K] } = {};
  if (o.delimiter !== undefined) out.delimiter = c.oneOf(o.delimiter, join(at, 'delimiter'), ['auto', ',', '\t', ';'] as const);
  if (o.decimal !== undefined) out.decimal = c.oneOf(o.decimal, join(at, 'decimal'), ['.', ','] as const);
  if (o.commentPrefix !== undefined) {
    if (typeof o.commentPrefix !== 'string') c.fail(join(at, 'commentPrefix'), `must be a string ('' for none), got ${formatValue(o.commentPrefix)}.`);
    out.commentPrefix = o.commentPrefix;
  }
  if (o.nullTokens !== undefined) {
    const a = c.array(o.nullTokens, join(at, 'nullTokens'), false);
    a.forEach((t, i) => {
      if (typeof t !== 'string') c.fail(join(join(at, 'nullTokens'), i), `must be a string, got ${formatValue(t)}.`);
    });
    out.nullTokens = a as string[];
  }
  if (out.decimal === ',' && out.delimiter === ',') c.fail(join(at, 'delimiter'), "cannot be ',' when decimal is ','; use ';' or '\\t'.");
  return out;
}

function positive(c: Checker, v: unknown, at: string, dflt: number): number {
  if (v === undefined) return dflt;
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) c.fail(at, `must be a finite number > 0, got ${formatValue(v)}.`);
  return v;
}

function finitePositive(c: Checker, v: unknown, at: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) c.fail(at, `must be a number of seconds > 0, got ${formatValue(v)}.`);
  return v;
}

/** An events file's `clock`: { syncEvent, reference: { events } | { line, threshold? }, barcodes? }. */
function clockSpec(c: Checker, v: unknown, at: string): DeviceClockSpec {
  const o = c.object(v, at);
  c.keys(o, at, ['syncEvent', 'reference', 'barcodes', 'notes'], 'a device clock');
  if (o.syncEvent === undefined) c.fail(join(at, 'syncEvent'), "is required: the name of this file's sync events (the device's copy of the sync pulses).");
  const syncEvent = c.string(o.syncEvent, join(at, 'syncEvent'));
  const rAt = join(at, 'reference');
  if (o.reference === undefined) c.fail(rAt, 'is required: { "events": name } (session-clock events of the same pulses) or { "line": channel } (a TTL line among the continuous channels).');
  const r = c.object(o.reference, rAt);
  c.keys(r, rAt, ['events', 'line', 'threshold'], 'a clock reference');
  let reference: DeviceClockSpec['reference'];
  if ((r.events === undefined) === (r.line === undefined)) c.fail(rAt, 'must give exactly one of "events" (session-clock events of the sync pulses) and "line" (a continuous channel carrying them).');
  if (r.events !== undefined) {
    if (r.threshold !== undefined) c.fail(join(rAt, 'threshold'), 'applies to a "line" reference only.');
    reference = { events: c.string(r.events, join(rAt, 'events'), 'a non-empty string (an event name)') };
  } else {
    const line = c.string(r.line, join(rAt, 'line'), 'a non-empty string (a continuous channel name)');
    if (r.threshold !== undefined && (typeof r.threshold !== 'number' || !Number.isFinite(r.threshold))) c.fail(join(rAt, 'threshold'), `must be a finite number (the line level between low and high), got ${formatValue(r.threshold)}.`);
    reference = r.threshold === undefined ? { line } : { line, threshold: r.threshold as number };
  }
  let barcodes: DeviceClockSpec['barcodes'] = null;
  if (o.barcodes !== undefined && o.barcodes !== null) {
    const bAt = join(at, 'barcodes');
    const b = c.object(o.barcodes, bAt);
    c.keys(b, bAt, ['bitSec', 'nBits', 'headerSec', 'headerGapSec', 'bitOrder'], 'a barcode format');
    if (b.bitSec === undefined) c.fail(join(bAt, 'bitSec'), 'is required: seconds per data cell, as the sender emits.');
    if (b.nBits === undefined) c.fail(join(bAt, 'nBits'), 'is required: data bits per barcode, as the sender emits.');
    if (typeof b.nBits !== 'number' || !Number.isInteger(b.nBits) || b.nBits < 1 || b.nBits > 52) c.fail(join(bAt, 'nBits'), `must be an integer from 1 to 52, got ${formatValue(b.nBits)}.`);
    barcodes = {
      bitSec: finitePositive(c, b.bitSec, join(bAt, 'bitSec')),
      nBits: b.nBits as number,
      ...(b.headerSec !== undefined ? { headerSec: finitePositive(c, b.headerSec, join(bAt, 'headerSec')) } : {}),
      ...(b.headerGapSec !== undefined ? { headerGapSec: finitePositive(c, b.headerGapSec, join(bAt, 'headerGapSec')) } : {}),
      ...(b.bitOrder !== undefined ? { bitOrder: c.oneOf(b.bitOrder, join(bAt, 'bitOrder'), ['lsb-first', 'msb-first'] as const) } : {}),
    };
  }
  return { syncEvent, reference, barcodes };
}

/**
 * Validate a parsed session manifest (schema version 1) and fill in defaults.
 *
 * The manifest is our own JSON schema:
 * ```json
 * { "schemaVersion": 1, "session": "rat07-d12", "animal": "rat07", "seed": 17,
 *   "options": { "lowpassHz": 10 },
 *   "files": [
 *     { "kind": "photometry", "path": "photometry.csv", "columns": { "time": "t" },
 *       "sites": [{ "name": "NAc", "signal": "nac_465", "control": "nac_405" }] },
 *     { "kind": "continuous", "path": "accel.arrow", "channels": [{ "name": "accel", "column": "acc_g" }] },
 *     { "kind": "events", "path": "events.tsv", "timeUnit": "ms", "columns": { "name": "event" } },
 *     { "kind": "spikes", "path": "spikes.csv", "unitPrefix": "probeA/" },
 *     { "kind": "trials", "path": "trials.csv", "columns": { "cueTime": "cue_on" } } ] }
 * ```
 * Per file: `kind` and `path` are required; `format` ('csv' | 'tsv' | 'arrow') defaults from
 * the extension; `timeUnit` ('s' | 'ms', default 's') applies to its time columns; `columns`
 * maps the kind's fields to column names (defaults: the field names); `csv` holds delimiter,
 * decimal, commentPrefix, nullTokens. Photometry files need `sites` ({name, signal, control});
 * continuous files need `channels` ({name, column}); `jitterTolerance` (default 0.1), events
 * `duplicates` ('keep' | 'drop' | 'error'), spikes `unitPrefix`, trials `choiceLabels` and
 * `nOptions` are optional. An events file logged on another device's clock says so with
 * `clock`: `{ "syncEvent": "sync", "reference": { "events": "sync_in" } }` (the session clock's
 * copy of the pulses as events) or `"reference": { "line": "ttl", "threshold": 2.5 }` (a
 * continuous channel carrying them), plus `"barcodes": { "bitSec": 0.01, "nBits": 16 }` when the
 * pulses are barcodes (device codes = the sync events' values). A line reference must name a
 * continuous channel of the manifest. `notes` (text) is allowed anywhere an entry is. Site and channel
 * names must be unique; at most one trials file; an events or spikes file may not be listed twice
 * with the same columns (its rows would count twice, whatever its `unitPrefix` or `clock`).
 *
 * Hand-written checks (no schema library): every error names the JSON path of the field, e.g.
 * `files[2].columns.time`, and an unknown or misspelled key or enum value gets the closest
 * allowed one as a suggestion.
 *
 * @param value - The parsed JSON.
 * @param options - `baseDir` for relative paths; `label` naming the manifest in messages.
 * @returns The manifest with defaults, formats and resolved paths filled in.
 * @throws {TuningforkError} TF_BAD_MANIFEST naming the field path (`details.path`) and, for a
 *   misspelling, the suggestion (`details.suggestion`).
 *
 * @example
 * ```ts
 * validateManifest({ schemaVersion: 1, session: 's1', files: [{ kind: 'events', path: 'ev.csv' }] }, { baseDir: 'data' });
 * ```
 */
export function validateManifest(value: unknown, options: ValidateManifestOptions = {}): SessionManifest {
  const label = options.label ?? '<manifest>';
  const baseDir = resolve(options.baseDir ?? '.');
  const c: Checker = new Checker(label);
  const top = c.object(value, '');
  c.keys(top, '', TOP_KEYS, 'a session manifest');
  if (top.schemaVersion === undefined) c.fail('schemaVersion', `is required; write "schemaVersion": ${MANIFEST_SCHEMA_VERSION}.`);
  if (top.schemaVersion !== MANIFEST_SCHEMA_VERSION) c.fail('schemaVersion', `must be ${MANIFEST_SCHEMA_VERSION} (the version this package reads), got ${formatValue(top.schemaVersion)}.`);
  if (top.session === undefined) c.fail('session', 'is required: a session identifier such as "rat07-day12".');
  const session = c.string(top.session, 'session');
  const animal = top.animal === undefined ? undefined : c.string(top.animal, 'animal');
  let seed: number | undefined;
  if (top.seed !== undefined) {
    if (typeof top.seed !== 'number' || !Number.isSafeInteger(top.seed) || top.seed < 0) c.fail('seed', `must be a non-negative integer, got ${formatValue(top.seed)}.`);
    seed = top.seed;
  }
  const analysis = top.options === undefined ? {} : c.object(top.options, 'options');
  if (top.notes !== undefined && typeof top.notes !== 'string') c.fail('notes', `must be text, got ${formatValue(top.notes)}.`);
  if (top.files === undefined) c.fail('files', 'is required: a list of the session\'s data files.');
  const rawFiles = c.array(top.files, 'files', true);
  const names = new Map<string, string>();
  const claim = (name: string, at: string): void => {
    const prev = names.get(name);
    if (prev !== undefined) c.fail(at, `repeats the name '${name}' already used at ${prev}; site and channel names must be unique.`);
    names.set(name, at);
  };
  let trialsAt: string | undefined;
  const files: ManifestFile[] = rawFiles.map((raw, i): ManifestFile => {
    const at = `files[${i}]`;
    const f = c.object(raw, at);
    if (f.kind === undefined) c.fail(join(at, 'kind'), `is required: one of ${KINDS.map((k) => `'${k}'`).join(', ')}.`);
    const kind = c.oneOf(f.kind, join(at, 'kind'), KINDS);
    c.keys(f, at, [...COMMON_FILE_KEYS, ...KIND_KEYS[kind]], `a '${kind}' file`);
    if (f.path === undefined) c.fail(join(at, 'path'), 'is required: the file path, relative to the manifest\'s folder.');
    const path = c.string(f.path, join(at, 'path'));
    const resolvedPath = isAbsolute(path) ? path : resolve(baseDir, path);
    const format = f.format === undefined ? formatFromPath(path) : c.oneOf(f.format, join(at, 'format'), FORMATS);
    const timeUnit = f.timeUnit === undefined ? 's' : c.oneOf(f.timeUnit, join(at, 'timeUnit'), ['s', 'ms'] as const);
    const csv = csvSettings(c, f.csv, join(at, 'csv'));
    if (f.notes !== undefined && typeof f.notes !== 'string') c.fail(join(at, 'notes'), `must be text, got ${formatValue(f.notes)}.`);
    const colsAt = join(at, 'columns');
    const colsRaw = f.columns === undefined ? {} : c.object(f.columns, colsAt);
    c.keys(colsRaw, colsAt, COLUMN_KEYS[kind], `the columns of a '${kind}' file`);
    const columns: Record<string, string> = {};
    for (const key of COLUMN_KEYS[kind]) {
      if (colsRaw[key] !== undefined) columns[key] = c.string(colsRaw[key], join(colsAt, key), 'a non-empty string (a column name)');
      else if (COLUMN_DEFAULTS[key] !== undefined) columns[key] = COLUMN_DEFAULTS[key]!;
    }
    const base = { path, resolvedPath, format, timeUnit, csv, at };
    switch (kind) {
      case 'photometry': {
        const sitesAt = join(at, 'sites');
        if (f.sites === undefined) c.fail(sitesAt, 'is required for a photometry file: a list of { "name", "signal", "control" } (sensor and isosbestic-control columns).');
        const sites = c.array(f.sites, sitesAt, true).map((s, k): ManifestSite => {
          const sAt = join(sitesAt, k);
          const o = c.object(s, sAt);
          c.keys(o, sAt, ['name', 'signal', 'control', 'notes'], 'a photometry site');
          for (const key of ['name', 'signal', 'control']) if (o[key] === undefined) c.fail(join(sAt, key), 'is required.');
          const site = { name: c.string(o.name, join(sAt, 'name')), signal: c.string(o.signal, join(sAt, 'signal')), control: c.string(o.control, join(sAt, 'control')) };
          if (site.signal === site.control) c.fail(join(sAt, 'control'), `names the same column as signal ('${site.signal}'); the control is the isosbestic channel.`);
          claim(site.name, join(sAt, 'name'));
          return site;
        });
        return { ...base, kind, columns: { time: columns.time! }, sites, jitterTolerance: positive(c, f.jitterTolerance, join(at, 'jitterTolerance'), 0.1) };
      }
      case 'continuous': {
        const chAt = join(at, 'channels');
        if (f.channels === undefined) c.fail(chAt, 'is required for a continuous file: a list of { "name", "column" }.');
        const channels = c.array(f.channels, chAt, true).map((s, k) => {
          const sAt = join(chAt, k);
          const o = c.object(s, sAt);
          c.keys(o, sAt, ['name', 'column', 'notes'], 'a channel');
          for (const key of ['name', 'column']) if (o[key] === undefined) c.fail(join(sAt, key), 'is required.');
          const ch = { name: c.string(o.name, join(sAt, 'name')), column: c.string(o.column, join(sAt, 'column')) };
          claim(ch.name, join(sAt, 'name'));
          return ch;
        });
        return { ...base, kind, columns: { time: columns.time! }, channels, jitterTolerance: positive(c, f.jitterTolerance, join(at, 'jitterTolerance'), 0.1) };
      }
      case 'events':
        return {
          ...base, kind,
          columns: { time: columns.time!, name: columns.name!, value: columns.value! },
          duplicates: f.duplicates === undefined ? 'keep' : c.oneOf(f.duplicates, join(at, 'duplicates'), ['keep', 'drop', 'error'] as const),
          clock: f.clock === undefined || f.clock === null ? null : clockSpec(c, f.clock, join(at, 'clock')),
        };
      case 'spikes': {
        if (f.unitPrefix !== undefined && typeof f.unitPrefix !== 'string') c.fail(join(at, 'unitPrefix'), `must be text, got ${formatValue(f.unitPrefix)}.`);
        return { ...base, kind, columns: { unit: columns.unit!, time: columns.time! }, unitPrefix: (f.unitPrefix as string | undefined) ?? '' };
      }
      case 'trials': {
        if (trialsAt !== undefined) c.fail(at, `is a second trials file (the first is ${trialsAt}); a session has one trial table.`);
        trialsAt = at;
        let choiceLabels: readonly string[] = ['left', 'right'];
        if (f.choiceLabels !== undefined) {
          const a = c.array(f.choiceLabels, join(at, 'choiceLabels'), true);
          a.forEach((l, k) => c.string(l, join(join(at, 'choiceLabels'), k)));
          choiceLabels = a as string[];
        }
        let nOptions = 0;
        if (f.nOptions !== undefined) {
          if (typeof f.nOptions !== 'number' || !Number.isInteger(f.nOptions) || f.nOptions < 0) c.fail(join(at, 'nOptions'), `must be an integer ≥ 0 (0 = inferred), got ${formatValue(f.nOptions)}.`);
          nOptions = f.nOptions;
        }
        return { ...base, kind, columns: columns as Partial<Record<TrialField, string>>, choiceLabels, nOptions };
      }
    }
  });
  // An events or spikes file read twice with the same columns would count its rows twice
  // (different unitPrefix values or a clock on one entry would hide that): reject it.
  const readAt = new Map<string, string>();
  for (const f of files) {
    if (f.kind !== 'events' && f.kind !== 'spikes') continue;
    const key = JSON.stringify([f.kind, f.resolvedPath, f.columns]);
    const prev = readAt.get(key);
    if (prev !== undefined) {
      c.fail(join(f.at, 'path'), `lists '${f.path}' again with the same columns as ${prev}: its ${f.kind === 'events' ? 'events' : 'spikes'} would be counted twice. Remove one of the two entries.`, { previous: prev });
    }
    readAt.set(key, f.at);
  }
  for (const f of files) {
    if (f.kind !== 'events' || f.clock === null || !('line' in f.clock.reference)) continue;
    const line = f.clock.reference.line;
    const isChannel = files.some((g) => g.kind === 'continuous' && g.channels.some((ch) => ch.name === line));
    if (!isChannel) c.fail(`${f.at}.clock.reference.line`, `names '${line}', which is not a continuous channel of this manifest; list the sync line under a continuous file's channels.`);
  }
  return {
    schemaVersion: MANIFEST_SCHEMA_VERSION,
    session,
    ...(animal !== undefined ? { animal } : {}),
    ...(seed !== undefined ? { seed } : {}),
    options: analysis,
    files,
    baseDir,
  };
}

import {
  TuningforkError, isTuningforkError, makeEventTable, resolveOptions, sha256FilesInBackground,
  type DeviceEvents, type EventTable, type PhotometrySite, type ProvenanceInput, type ResultWarning, type Session, type SpikeTrain,
  type TrialTable, type UniformSignal,
} from '@tuningfork/core';
import { readEvents } from '../readers/read-events.js';
import { readSpikes } from '../readers/read-spikes.js';
import { readTrace, type UniformTrace } from '../readers/read-trace.js';
import { readTrials } from '../readers/read-trials.js';
import type { ManifestFile, SessionManifest } from './manifest-types.js';
import { readManifest } from './read-manifest.js';

/** Options of loadSession. */
export interface LoadSessionOptions {
  /** Compute the SHA-256 of the manifest and of every input file (provenance). @defaultValue true */
  hash?: boolean;
}

/** A session loaded from a manifest, with what is needed to record its provenance. */
export interface LoadedSession {
  /** The session: photometry sites, units, events, trials, continuous signals, on one clock, plus `deviceEvents`: events files with a `clock`, still on their device's clock. */
  readonly session: Session;
  /** The validated manifest (paths resolved). */
  readonly manifest: SessionManifest;
  readonly animal?: string;
  readonly seed?: number;
  /** Analysis options from the manifest, unvalidated. */
  readonly options: Readonly<Record<string, unknown>>;
  /**
   * SHA-256 and size of the manifest and every listed file (names as written in the manifest),
   * for core makeProvenance; empty when `hash: false`.
   */
  readonly inputs: readonly ProvenanceInput[];
  /** Warnings of every reader (each names its file), in manifest order. */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ hash: true });

function readerFormat(f: ManifestFile): 'csv' | 'tsv' | 'arrow' {
  return f.format;
}

async function traceOf(f: ManifestFile & { kind: 'photometry' | 'continuous' }, channels: Record<string, string>): Promise<UniformTrace> {
  const tr = await readTrace(f.resolvedPath, {
    format: readerFormat(f),
    time: f.columns.time,
    channels,
    timeUnit: f.timeUnit,
    sampling: 'uniform',
    jitterTolerance: f.jitterTolerance,
    csv: f.csv,
  });
  if (tr.sampling !== 'uniform') throw new Error('unreachable: sampling uniform');
  return tr;
}

/**
 * Load a recording session from a JSON session manifest (see validateManifest for the schema).
 *
 * Reads every listed file with the matching reader — photometry and continuous files with
 * readTrace (uniform sampling required: a session holds UniformSignals), events with
 * readEvents, spikes with readSpikes, trials with readTrials — converting time units to
 * seconds. Photometry sites pair their signal and control columns (same grid); events of
 * several files are merged and sorted by time; unit labels get the file's `unitPrefix` and must
 * be unique. Events files with a `clock` are on another device's clock: they are not merged but
 * kept in `session.deviceEvents` with their clock spec, for the pipeline's sync step (the
 * tuningfork package's syncDeviceEvents) to map. The session's `start`/`end` span every signal,
 * session-clock event, spike and trial time.
 * Each input's SHA-256 is computed for provenance on a separate thread while the files are read
 * (core sha256FilesInBackground; on this thread with a thread budget of 1).
 *
 * @param manifestPath - Path of the manifest JSON; relative file paths resolve against its folder.
 * @param options - `hash` (default true).
 * @returns `{ session, manifest, animal, seed, options, inputs, warnings }`.
 * @throws {TuningforkError} TF_BAD_MANIFEST (naming the field path) for an invalid manifest or
 *   repeated unit labels; any reader's code (TF_BAD_FILE, TF_MISSING_COLUMN, TF_BAD_CELL,
 *   TF_NON_FINITE, TF_IRREGULAR_SAMPLING, …) with the message prefixed by the manifest entry
 *   (`files[2]`) and `details.entry` set to it.
 *
 * @example
 * ```ts
 * const { session, inputs } = await loadSession('data/rat07-d12/session.json');
 * session.photometry[0].signal.sampleRate;
 * ```
 */
export async function loadSession(manifestPath: string, options: LoadSessionOptions = {}): Promise<LoadedSession> {
  const o = resolveOptions('loadSession', DEFAULTS, options);
  const manifest = await readManifest(manifestPath);
  // Hash the inputs on another thread while this one reads and decodes them.
  const hashes = o.hash ? sha256FilesInBackground([manifestPath, ...manifest.files.map((f) => f.resolvedPath)]) : null;
  const warnings: ResultWarning[] = [];
  const sites: PhotometrySite[] = [];
  const continuous: Record<string, UniformSignal> = {};
  const units: SpikeTrain[] = [];
  const unitFrom = new Map<string, string>();
  const eventParts: EventTable[] = [];
  const deviceEvents: DeviceEvents[] = [];
  let trials: TrialTable | undefined;
  for (const f of manifest.files) {
    try {
      switch (f.kind) {
        case 'photometry': {
          const channels: Record<string, string> = {};
          f.sites.forEach((s, k) => {
            channels[`${k}/signal`] = s.signal;
            channels[`${k}/control`] = s.control;
          });
          const tr = await traceOf(f, channels);
          warnings.push(...tr.warnings);
          f.sites.forEach((s, k) => sites.push({ name: s.name, signal: tr.signals[`${k}/signal`]!, control: tr.signals[`${k}/control`]! }));
          break;
        }
        case 'continuous': {
          const channels: Record<string, string> = {};
          for (const ch of f.channels) channels[ch.name] = ch.column;
          const tr = await traceOf(f, channels);
          warnings.push(...tr.warnings);
          for (const ch of f.channels) continuous[ch.name] = tr.signals[ch.name]!;
          break;
        }
        case 'events': {
          const r = await readEvents(f.resolvedPath, { format: readerFormat(f), ...f.columns, timeUnit: f.timeUnit, duplicates: f.duplicates, csv: f.csv });
          warnings.push(...r.warnings);
          if (f.clock === null) eventParts.push(r.events);
          else deviceEvents.push({ source: `${f.at} (${f.path})`, events: r.events, clock: f.clock });
          break;
        }
        case 'spikes': {
          const r = await readSpikes(f.resolvedPath, { format: readerFormat(f), ...f.columns, timeUnit: f.timeUnit, csv: f.csv });
          warnings.push(...r.warnings);
          for (const u of r.units) {
            const name = f.unitPrefix + u.name;
            const prev = unitFrom.get(name);
            if (prev !== undefined) {
              throw new TuningforkError('TF_BAD_MANIFEST', `manifest '${manifestPath}': ${f.at}.unitPrefix: unit '${name}' of '${f.path}' is also a unit of ${prev}; give the files different unitPrefix values (e.g. "probeA/").`, { manifest: manifestPath, path: `${f.at}.unitPrefix`, unit: name });
            }
            unitFrom.set(name, `'${f.path}'`);
            units.push({ name, times: u.times });
          }
          break;
        }
        case 'trials': {
          const r = await readTrials(f.resolvedPath, { format: readerFormat(f), columns: f.columns, timeUnit: f.timeUnit, choiceLabels: f.choiceLabels, nOptions: f.nOptions, csv: f.csv });
          warnings.push(...r.warnings);
          trials = r.trials;
          break;
        }
      }
    } catch (e) {
      if (isTuningforkError(e) && e.code !== 'TF_BAD_MANIFEST') {
        throw new TuningforkError(e.code, `loadSession: manifest '${manifestPath}', ${f.at} ('${f.path}'): ${e.message}`, { ...e.details, manifest: manifestPath, entry: f.at });
      }
      throw e;
    }
  }
  // Merge events (stable: ties keep manifest order, then file order).
  let events: EventTable;
  if (eventParts.length === 1) events = eventParts[0]!;
  else {
    const time: number[] = [];
    const name: string[] = [];
    const value: number[] = [];
    for (const p of eventParts) {
      for (let i = 0; i < p.time.length; i++) {
        time.push(p.time[i]!);
        name.push(p.name[i]!);
        value.push(p.value[i]!);
      }
    }
    events = makeEventTable(time, name, value);
  }
  let start = Infinity;
  let end = -Infinity;
  const span = (a: number, b: number): void => {
    if (a < start) start = a;
    if (b > end) end = b;
  };
  for (const s of sites) span(s.signal.t0, s.signal.t0 + s.signal.values.length / s.signal.sampleRate);
  for (const s of Object.values(continuous)) span(s.t0, s.t0 + s.values.length / s.sampleRate);
  if (events.time.length > 0) span(events.time[0]!, events.time[events.time.length - 1]!);
  for (const u of units) if (u.times.length > 0) span(u.times[0]!, u.times[u.times.length - 1]!);
  if (trials !== undefined) {
    for (const col of [trials.cueTime, trials.choiceTime, trials.outcomeTime]) for (const t of col) if (Number.isFinite(t)) span(t, t);
  }
  if (start > end) {
    start = 0;
    end = 0;
  }
  const session: Session = {
    id: manifest.session,
    start,
    end,
    photometry: sites,
    units,
    events,
    ...(trials !== undefined ? { trials } : {}),
    continuous,
    ...(deviceEvents.length > 0 ? { deviceEvents } : {}),
  };
  const inputs: ProvenanceInput[] = [];
  if (hashes) {
    const h = await hashes;
    inputs.push({ ...h[0]!, name: manifestPath });
    manifest.files.forEach((f, i) => inputs.push({ ...h[i + 1]!, name: f.path }));
  }
  return {
    session,
    manifest,
    ...(manifest.animal !== undefined ? { animal: manifest.animal } : {}),
    ...(manifest.seed !== undefined ? { seed: manifest.seed } : {}),
    options: manifest.options,
    inputs,
    warnings,
  };
}

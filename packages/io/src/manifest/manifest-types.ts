import type { DeviceClockSpec } from '@tuningfork/core';
import type { TrialField } from '../readers/read-trials.js';

/** The manifest schema version this package reads and writes. */
export const MANIFEST_SCHEMA_VERSION = 1;

/** What a listed file holds. */
export type FileKind = 'photometry' | 'continuous' | 'events' | 'spikes' | 'trials';

/** On-disk format of a listed file. */
export type FileFormat = 'csv' | 'tsv' | 'arrow';

/** CSV parsing settings a manifest may give per file. */
export interface ManifestCsvSettings {
  readonly delimiter?: 'auto' | ',' | '\t' | ';';
  readonly decimal?: '.' | ',';
  readonly commentPrefix?: string;
  readonly nullTokens?: readonly string[];
}

interface FileBase {
  /** Path as written in the manifest (relative paths are relative to the manifest's folder). */
  readonly path: string;
  /** Absolute path after resolving against the manifest's folder. */
  readonly resolvedPath: string;
  /** Given, or from the extension: .arrow/.arrows/.ipc/.feather → arrow, .tsv/.tab → tsv, else csv. */
  readonly format: FileFormat;
  /** Unit of the file's time columns; converted to seconds. Default 's'. */
  readonly timeUnit: 's' | 'ms';
  /** CSV parsing settings (ignored for Arrow files). */
  readonly csv: ManifestCsvSettings;
  /** JSON path of this entry in the manifest, e.g. 'files[2]'. */
  readonly at: string;
}

/** One photometry site: sensor and isosbestic-control columns of a photometry file. */
export interface ManifestSite {
  readonly name: string;
  /** Column of the ligand-dependent sensor channel. */
  readonly signal: string;
  /** Column of the isosbestic control channel. */
  readonly control: string;
}

/** A photometry file: a time column and one or more sites (signal + control columns). */
export interface PhotometryFileEntry extends FileBase {
  readonly kind: 'photometry';
  readonly columns: { readonly time: string };
  readonly sites: readonly ManifestSite[];
  /** Largest sampling-interval deviation from the median, as a fraction (readTrace). Default 0.1. */
  readonly jitterTolerance: number;
}

/** A continuous behavioural file (accelerometer, wheel…): a time column and named channels. */
export interface ContinuousFileEntry extends FileBase {
  readonly kind: 'continuous';
  readonly columns: { readonly time: string };
  readonly channels: readonly { readonly name: string; readonly column: string }[];
  readonly jitterTolerance: number;
}

/** An event file: `time,name[,value]`. */
export interface EventsFileEntry extends FileBase {
  readonly kind: 'events';
  readonly columns: { readonly time: string; readonly name: string; readonly value: string };
  readonly duplicates: 'keep' | 'drop' | 'error';
  /**
   * null: the events are on the session clock. Otherwise they are on another device's clock and
   * this says how to map them (sync events of this file, the session clock's copy of the pulses,
   * barcode format); loadSession keeps them apart in `session.deviceEvents`.
   */
  readonly clock: DeviceClockSpec | null;
}

/** A spike file: `unit,time`. */
export interface SpikesFileEntry extends FileBase {
  readonly kind: 'spikes';
  readonly columns: { readonly unit: string; readonly time: string };
  /** Text put before every unit label of this file (e.g. 'probeA/'), to keep labels unique. Default ''. */
  readonly unitPrefix: string;
}

/** A per-trial file: `trial,…`. */
export interface TrialsFileEntry extends FileBase {
  readonly kind: 'trials';
  readonly columns: Readonly<Partial<Record<TrialField, string>>>;
  readonly choiceLabels: readonly string[];
  /** 0 = inferred. */
  readonly nOptions: number;
}

/** A validated file entry of a session manifest. */
export type ManifestFile = PhotometryFileEntry | ContinuousFileEntry | EventsFileEntry | SpikesFileEntry | TrialsFileEntry;

/** A validated session manifest (schema version 1), with paths resolved and defaults filled in. */
export interface SessionManifest {
  readonly schemaVersion: 1;
  /** Session identifier. */
  readonly session: string;
  /** Animal identifier, when given. */
  readonly animal?: string;
  /** Seed for every random step of the analysis, when given. */
  readonly seed?: number;
  /** Analysis options, passed through unvalidated for the stages that use them. */
  readonly options: Readonly<Record<string, unknown>>;
  readonly files: readonly ManifestFile[];
  /** Folder that relative file paths were resolved against. */
  readonly baseDir: string;
}

import type { LogLevel } from '../log/logger.js';

/**
 * Everything needed to analyse one session, as plain data (it is sent to session processes).
 * Paths are absolute.
 */
export interface SessionJob {
  /** Session id (unique in the batch; a plain file name). */
  readonly id: string;
  /** Animal and group labels ('' when not given). */
  readonly animal: string;
  readonly group: string;
  /** Position of the session in the id-sorted batch (0-based). */
  readonly index: number;
  /** Absolute path of the session manifest. */
  readonly manifestPath: string;
  /** Absolute output folder of the run. */
  readonly outRoot: string;
  /** Output folder of this session, relative to `outRoot` ('/' separators). */
  readonly outDir: string;
  /** Analysis options after merging batch, manifest and entry options (seed not included). */
  readonly options: Readonly<Record<string, unknown>>;
  /** Seed passed to the analysis (see the batch manifest documentation for how it is chosen). */
  readonly seed: number;
  /** How the seed was chosen. */
  readonly seedSource: 'entry' | 'manifest' | 'derived';
  /** The `--pipeline` value as given ('tuningfork' by default). */
  readonly pipeline: string;
  /** Module specifier to import the pipeline from. */
  readonly pipelineSpecifier: string;
  /** Redo the session even when its outputs are up to date. */
  readonly force: boolean;
}

/** What happened to one session. */
export interface SessionResult {
  readonly id: string;
  readonly status: 'done' | 'skipped' | 'failed';
  /** Where a failure happened: reading inputs ('load') or analysing/writing ('analyse'). */
  readonly phase: 'load' | 'analyse' | null;
  /** For failures: the error code and its one-line form. */
  readonly code: string | null;
  readonly line: string | null;
  /** For failures when TUNINGFORK_DEBUG=1: the stack trace of the error (else null). */
  readonly stack?: string | null;
  /** Warnings reported by loading and analysis. */
  readonly warnings: number;
  /** Names of the tables written (empty when skipped or failed). */
  readonly tables: readonly string[];
  readonly seconds: number;
}

/** Events a session job reports while it runs (forwarded from session processes). */
export type JobEvent =
  | { readonly kind: 'progress'; readonly session: string; readonly step: string; readonly fraction: number }
  | { readonly kind: 'log'; readonly level: LogLevel; readonly session: string; readonly message: string };

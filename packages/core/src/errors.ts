/**
 * Stable error codes. A released code never changes meaning; messages may be reworded.
 * Each line documents when the code is thrown.
 */
export const ERROR_CODES = {
  /** An options object holds a key the function does not know (typo or wrong function). */
  TF_UNKNOWN_OPTION: 'unknown option key',
  /** An option or argument has the wrong type or is outside its allowed range. */
  TF_BAD_OPTION: 'option value out of range or of the wrong type',
  /** A sample rate is not finite and positive. */
  TF_BAD_SAMPLE_RATE: 'sample rate not finite and > 0',
  /** Timestamps are not strictly increasing, or jitter exceeds the tolerance for a uniform grid. */
  TF_IRREGULAR_SAMPLING: 'timestamps irregular or not increasing',
  /** Arrays that must have equal lengths (or matching matrix shapes) do not. */
  TF_SHAPE_MISMATCH: 'array lengths or matrix shapes disagree',
  /** Too few samples, trials or events for the requested computation. */
  TF_TOO_FEW_SAMPLES: 'not enough data for the computation',
  /** Input holds NaN or ±Infinity where finite values are required. */
  TF_NON_FINITE: 'non-finite value where a finite one is required',
  /** Event times are unsorted, duplicated, or otherwise invalid. */
  TF_BAD_EVENTS: 'event times unsorted, duplicated or invalid',
  /** A requested time or window lies outside the recording. */
  TF_WINDOW_OUT_OF_RANGE: 'time window outside the recording',
  /** A file could not be read, or its content cannot be parsed. */
  TF_BAD_FILE: 'file unreadable or malformed',
  /** A named column is missing from a table or file. */
  TF_MISSING_COLUMN: 'a required column is missing',
  /** A cell could not be parsed as the expected type. */
  TF_BAD_CELL: 'a table cell could not be parsed',
  /** A session manifest violates its schema. */
  TF_BAD_MANIFEST: 'session manifest invalid',
  /** An output path is unusable (a file where a folder is needed, or it escapes the output folder). */
  TF_BAD_OUTPUT_PATH: 'output path unusable or outside the output folder',
  /** Clock synchronisation failed: too few pulses, ambiguous matching, or a time outside the synchronised range. */
  TF_SYNC_FAILED: 'clock synchronisation failed or time outside synchronised range',
  /** An iterative fit did not converge, or a model is not identifiable (e.g. collinear design). */
  TF_FIT_FAILED: 'model fit failed or not identifiable',
  /** A likelihood evaluated to −∞ or NaN (e.g. a choice with probability zero). */
  TF_BAD_LIKELIHOOD: 'likelihood not finite',
  /** A signal is degenerate for the requested correction (e.g. a control channel with no variance). */
  TF_DEGENERATE_SIGNAL: 'signal degenerate for the requested operation',
  /** A value outside the allowed set (unknown choice option, unknown event name, unknown class). */
  TF_BAD_VALUE: 'value outside the allowed set',
  /** The analysis pipeline module cannot be loaded or does not export `analyzeSession` (cli `run`, `--pipeline`). */
  TF_PIPELINE_UNAVAILABLE: 'analysis pipeline module missing or without analyzeSession',
  /** Sessions of a batch have no finished outputs (a shard not run yet, or failed) when merging. */
  TF_INCOMPLETE_BATCH: 'batch sessions without finished outputs',
  /** An unexpected failure inside tuningfork (a bug, not bad input); the message asks for a report. */
  TF_INTERNAL: 'unexpected internal failure',
} as const;

/** A stable tuningfork error code. */
export type ErrorCode = keyof typeof ERROR_CODES;

/**
 * The one error class of tuningfork. `code` is stable and machine-checkable; `message` names the
 * function and parameter, the value seen, the value expected and what to do; `details` carries
 * where (file, column, row, time) as data.
 */
export class TuningforkError extends Error {
  override readonly name = 'TuningforkError';
  readonly code: ErrorCode;
  readonly details: Readonly<Record<string, unknown>>;
  constructor(code: ErrorCode, message: string, details: Readonly<Record<string, unknown>> = {}) {
    super(message);
    this.code = code;
    this.details = details;
  }
}

/** True when `e` is a TuningforkError (optionally with the given code). */
export function isTuningforkError(e: unknown, code?: ErrorCode): e is TuningforkError {
  return e instanceof TuningforkError && (code === undefined || e.code === code);
}

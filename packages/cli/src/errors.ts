import { TuningforkError, isTuningforkError } from '@tuningfork/core';
import type { ErrorCode } from '@tuningfork/core';
import { EXIT_CODES } from './exit-codes.js';

/** What to do about each error code, printed in parentheses after the message. */
const FIXES: Partial<Record<ErrorCode, string>> = {
  TF_UNKNOWN_OPTION: 'check the spelling; `tuningfork <command> --help` lists the options',
  TF_BAD_OPTION: 'see `tuningfork <command> --help` for the allowed values',
  TF_BAD_FILE: 'check that the file exists, is readable and has the format the manifest says',
  TF_MISSING_COLUMN: 'fix the column name in the manifest or in the file header',
  TF_BAD_CELL: 'fix the named cell, or declare the token as a null value in the manifest',
  TF_BAD_MANIFEST: 'fix the named field of the manifest; the schema is in the cli README',
  TF_BAD_OUTPUT_PATH: 'pass --out a folder (not a file) and keep every output path inside it',
  TF_PIPELINE_UNAVAILABLE: 'build the tuningfork package (`npx tsc -b`) or pass --pipeline <module>',
  TF_INCOMPLETE_BATCH: 'run the missing sessions or shards with `tuningfork run`, then merge again',
  TF_INTERNAL: 'this is a bug: please report it with the command line; TUNINGFORK_DEBUG=1 prints the stack',
};

/** The fix hint for a code, or a generic one. */
export function fixFor(code: string): string {
  return FIXES[code as ErrorCode] ?? 'see the message; `tuningfork <command> --help` describes the inputs';
}

const INPUT_ERRNO: Readonly<Record<string, string>> = {
  ENOENT: 'no such file or folder',
  EACCES: 'permission denied',
  EPERM: 'operation not permitted',
  EISDIR: 'is a folder, not a file',
  ENOTDIR: 'a part of the path is a file, not a folder',
  ENOSPC: 'no space left on the device',
  EROFS: 'read-only file system',
};

/**
 * Turn anything thrown into a TuningforkError: TuningforkErrors pass through; Node file-system
 * errors become TF_BAD_FILE (reading) or TF_BAD_OUTPUT_PATH (writing, when `writing` is true);
 * anything else becomes TF_INTERNAL.
 */
export function asTuningforkError(e: unknown, writing = false): TuningforkError {
  if (isTuningforkError(e)) return e;
  const err = e as NodeJS.ErrnoException | undefined;
  const errno = typeof err?.code === 'string' ? err.code : undefined;
  if (errno !== undefined && INPUT_ERRNO[errno] !== undefined) {
    const path = typeof err?.path === 'string' ? `'${err.path}'` : 'a path';
    const code: ErrorCode = writing ? 'TF_BAD_OUTPUT_PATH' : 'TF_BAD_FILE';
    return new TuningforkError(code, `cannot ${writing ? 'write' : 'read'} ${path}: ${INPUT_ERRNO[errno]} (${errno}).`, { errno, path: err?.path });
  }
  const message = e instanceof Error ? `${e.name}: ${e.message}` : String(e);
  return new TuningforkError('TF_INTERNAL', `unexpected failure: ${message}`, { stack: e instanceof Error ? e.stack : undefined });
}

/** Exit code for an error that stopped a whole command. */
export function exitCodeFor(e: TuningforkError): number {
  switch (e.code) {
    case 'TF_INTERNAL': return EXIT_CODES.internal;
    case 'TF_INCOMPLETE_BATCH': return EXIT_CODES.incomplete;
    case 'TF_PIPELINE_UNAVAILABLE': return EXIT_CODES.analysisFailed;
    default: return EXIT_CODES.badInput;
  }
}

/**
 * The one line printed for an error: `CODE: message (fix)`, with line breaks folded into
 * spaces so that a log never shows a multi-line error or a stack trace.
 *
 * @param prefix - Optional context put before the message, e.g. the session id.
 */
export function errorLine(e: TuningforkError, prefix?: string): string {
  const msg = e.message.replace(/\s*\n\s*/g, ' ').trim();
  const fix = typeof e.details.fix === 'string' ? e.details.fix : fixFor(e.code);
  return `${e.code}: ${prefix === undefined ? '' : `${prefix}: `}${msg} (${fix})`;
}

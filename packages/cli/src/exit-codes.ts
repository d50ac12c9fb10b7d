/**
 * Exit codes of the `tuningfork` command. Stable: scripts and job schedulers may branch on them.
 *
 * | code | name | meaning |
 * | --- | --- | --- |
 * | 0 | `ok` | every selected session is finished (analysed now or already up to date) |
 * | 1 | `analysisFailed` | the analysis of at least one session failed; finished sessions are kept |
 * | 2 | `badInput` | bad usage or bad input (arguments, manifest, data files, columns, output folder) |
 * | 3 | `incomplete` | `merge` found sessions of the batch without finished outputs (a shard not run yet) |
 * | 4 | `internal` | an unexpected failure inside tuningfork (a bug: please report it) |
 * | 130 | `interrupted` | stopped by Ctrl-C / SIGINT or SIGTERM; finished sessions are kept, rerun to resume |
 * | 141 | `outputClosed` | the reader of stdout or stderr went away (e.g. `| head`); finished sessions are kept |
 */
export const EXIT_CODES = Object.freeze({
  ok: 0,
  analysisFailed: 1,
  badInput: 2,
  incomplete: 3,
  internal: 4,
  interrupted: 130,
  outputClosed: 141,
} as const);

/** Name of an exit code. */
export type ExitCodeName = keyof typeof EXIT_CODES;

/** The exit-code table as printed at the end of `tuningfork --help` and in the README. */
export const EXIT_CODE_HELP = [
  'Exit codes:',
  '  0    ok: every selected session is finished (analysed now or already up to date)',
  '  1    the analysis of at least one session failed (finished sessions are kept)',
  '  2    bad usage or bad input: arguments, manifest, data files, columns, output folder',
  '  3    merge found sessions without finished outputs (run the missing shards first)',
  '  4    internal error (a bug in tuningfork: please report it)',
  '  130  interrupted (SIGINT/SIGTERM); finished sessions are kept, rerun to resume',
  '  141  output closed: the reader of stdout/stderr went away (e.g. | head); finished sessions are kept',
].join('\n');

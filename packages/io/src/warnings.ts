/**
 * Stable codes of the warnings io readers attach to their results (`warnings[].code`): each is
 * a documented repair or caveat, never a silent change. Messages may be reworded; codes do not change.
 */
export const IO_WARNING_CODES = {
  /** A last line with too few fields and no line end (file cut off mid-write) was dropped. */
  IO_TRUNCATED_LAST_LINE: 'truncated last line dropped',
  /** A channel holds missing samples (NaN); the runs are listed in the result's `nanRuns`. */
  IO_NAN_RUNS: 'runs of missing samples in a channel',
  /** With sampling 'auto', timestamps failed the uniform-grid check; the trace was kept timestamped. */
  IO_IRREGULAR_SAMPLING: 'trace kept on its timestamps',
  /** Event rows were out of time order and were sorted (ties keep file order). */
  IO_EVENTS_SORTED: 'events sorted by time',
  /** Event rows repeat an earlier row's time and name (kept or dropped, as requested). */
  IO_DUPLICATE_EVENTS: 'duplicate events',
  /** The file has no value column of the requested name but a similar one; values are NaN. */
  IO_VALUE_COLUMN_ABSENT: 'value column absent, with a close match',
  /** A unit's spike times were out of order and were sorted. */
  IO_SPIKES_SORTED: 'spike times sorted',
  /** Spikes repeat the previous spike time of their unit (kept). */
  IO_DUPLICATE_SPIKES: 'duplicate spike times',
  /** Trial rows were out of trial-number order and were sorted. */
  IO_TRIALS_SORTED: 'trials sorted by number',
} as const;

/** A stable io warning code. */
export type IoWarningCode = keyof typeof IO_WARNING_CODES;

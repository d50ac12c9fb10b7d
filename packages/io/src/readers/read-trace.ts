import {
  TuningforkError, checkOneOf, checkPositive, closestKey, inferSampleRate, isTuningforkError, resolveOptions,
  type ResultWarning, type TimestampedSignal, type UniformSignal,
} from '@tuningfork/core';
import { readTable, requireFinite, toSeconds, type CsvParseSettings, type LocatedTable, type TableFormat } from '../internal/read-table.js';
import type { ColumnSpec } from '../table.js';

/** Options of readTrace. */
export interface ReadTraceOptions {
  /** File format; `'auto'` recognises Arrow IPC by its magic bytes, else reads text. @defaultValue 'auto' */
  format?: TableFormat;
  /** Name of the time column. @defaultValue 'time' */
  time?: string;
  /**
   * Channels to read: result name → column name, or a list of column names.
   * @defaultValue every column except the time column, under its own name
   */
  channels?: Readonly<Record<string, string>> | readonly string[] | undefined;
  /** Unit of the time column; values are converted to seconds. @defaultValue 's' */
  timeUnit?: 's' | 'ms';
  /**
   * `'uniform'`: the timestamps must form a uniform grid (else TF_IRREGULAR_SAMPLING);
   * `'timestamped'`: keep the timestamps as they are; `'auto'`: uniform when the grid check
   * passes, else timestamped with warning `IO_IRREGULAR_SAMPLING`.
   * @defaultValue 'uniform'
   */
  sampling?: 'uniform' | 'timestamped' | 'auto';
  /**
   * Largest allowed deviation of any sampling interval from the median interval, as a fraction
   * of the median (core inferSampleRate's `tolerance`).
   * @defaultValue 0.1
   */
  jitterTolerance?: number;
  /** CSV parsing settings (delimiter, decimal, commentPrefix, nullTokens, chunkBytes). @defaultValue {} */
  csv?: CsvParseSettings;
}

/** A run of consecutive missing (NaN) samples in one channel. */
export interface NanRun {
  /** First row of the run (0-based data row). */
  readonly startRow: number;
  /** Number of samples in the run. */
  readonly length: number;
  /** Time of the first missing sample, seconds. */
  readonly startTime: number;
  /** 1-based file line of the first missing sample (text files only). */
  readonly line?: number;
}

interface TraceBase {
  /** The file path, as given. */
  readonly file: string;
  /** Number of samples. */
  readonly rows: number;
  /** Timestamps in seconds (after unit conversion), strictly increasing. */
  readonly time: Float64Array;
  /** Missing samples per channel (NaN in the values). */
  readonly nulls: Readonly<Record<string, number>>;
  /** Runs of missing samples per channel, in row order (at most 10 000 listed per channel). */
  readonly nanRuns: Readonly<Record<string, readonly NanRun[]>>;
  /** IO_NAN_RUNS (per channel with missing samples), IO_IRREGULAR_SAMPLING, IO_TRUNCATED_LAST_LINE. */
  readonly warnings: readonly ResultWarning[];
}

/** A trace on a uniform grid: every channel is a UniformSignal with the same rate and t0. */
export interface UniformTrace extends TraceBase {
  readonly sampling: 'uniform';
  /** Hz: (rows − 1) / (last time − first time), snapped to an integer within 1e-9 relative. */
  readonly sampleRate: number;
  /** Time of the first sample, seconds. */
  readonly t0: number;
  /** Largest |time[i] − (t0 + i / sampleRate)|, seconds. */
  readonly jitterSec: number;
  readonly signals: Readonly<Record<string, UniformSignal>>;
}

/** A trace kept on its own timestamps: every channel is a TimestampedSignal sharing `time`. */
export interface TimestampedTrace extends TraceBase {
  readonly sampling: 'timestamped';
  readonly signals: Readonly<Record<string, TimestampedSignal>>;
}

/** Result of readTrace: narrow on `sampling`. */
export type TraceRead = UniformTrace | TimestampedTrace;

const DEFAULTS = Object.freeze({
  format: 'auto' as TableFormat,
  time: 'time',
  channels: undefined as Readonly<Record<string, string>> | readonly string[] | undefined,
  timeUnit: 's' as 's' | 'ms',
  sampling: 'uniform' as 'uniform' | 'timestamped' | 'auto',
  jitterTolerance: 0.1,
  csv: Object.freeze({}) as CsvParseSettings,
});

const MAX_RUNS = 10_000;

/** Throw TF_IRREGULAR_SAMPLING at the first timestamp that does not exceed its predecessor. */
export function checkIncreasing(fn: string, located: LocatedTable, column: string, t: Float64Array): void {
  for (let i = 1; i < t.length; i++) {
    if (!(t[i]! > t[i - 1]!)) {
      const file = located.table.source;
      const kind = t[i] === t[i - 1] ? 'repeats' : 'goes back from';
      throw new TuningforkError(
        'TF_IRREGULAR_SAMPLING',
        `${fn}: file '${file}', column '${column}', ${located.where(i)}: time ${t[i]} s ${kind} ${t[i] === t[i - 1] ? 'the previous timestamp' : `${t[i - 1]} s on the previous row`}; timestamps must strictly increase. Remove duplicated rows or sort the file.`,
        { fn, file, column, row: i, line: located.line(i), time: t[i], previous: t[i - 1] },
      );
    }
  }
}

/** Runs of NaN in `v`, with their start times. */
function nanRunsOf(v: Float64Array, t: Float64Array, located: LocatedTable): { runs: NanRun[]; count: number; longest: number } {
  const runs: NanRun[] = [];
  let count = 0;
  let longest = 0;
  for (let i = 0; i < v.length; ) {
    if (v[i] === v[i]) {
      i++;
      continue;
    }
    let j = i + 1;
    while (j < v.length && v[j] !== v[j]) j++;
    count++;
    longest = Math.max(longest, j - i);
    if (runs.length < MAX_RUNS) {
      const line = located.line(i);
      runs.push({ startRow: i, length: j - i, startTime: t[i]!, ...(line !== undefined ? { line } : {}) });
    }
    i = j;
  }
  return { runs, count, longest };
}

/**
 * Check that timestamps form a uniform grid and return its rate, t0 and jitter, or the
 * TuningforkError describing why not (naming the file and row).
 */
function uniformGrid(fn: string, located: LocatedTable, column: string, t: Float64Array, tolerance: number): { rate: number; t0: number; jitter: number } | TuningforkError {
  const file = located.table.source;
  try {
    inferSampleRate(t, { tolerance });
  } catch (e) {
    if (!isTuningforkError(e, 'TF_IRREGULAR_SAMPLING')) throw e;
    const i = (e.details as { index?: number }).index ?? 0;
    const interval = t[i]! - t[i - 1]!;
    return new TuningforkError(
      'TF_IRREGULAR_SAMPLING',
      `${fn}: file '${file}', column '${column}', ${located.where(i)}: the sampling interval before t=${t[i]} s is ${interval} s, more than ${tolerance * 100} % away from the median interval (a gap, dropped samples or jitter). Pass sampling: 'timestamped' to keep the timestamps, or resample onto a uniform grid.`,
      { fn, file, column, row: i, line: located.line(i), time: t[i], interval },
    );
  }
  const n = t.length;
  const t0 = t[0]!;
  let rate = (n - 1) / (t[n - 1]! - t0);
  const whole = Math.round(rate);
  if (Math.abs(rate - whole) <= 1e-9 * rate) rate = whole;
  let jitter = 0;
  let at = 0;
  for (let i = 0; i < n; i++) {
    const d = Math.abs(t[i]! - (t0 + i / rate));
    if (d > jitter) {
      jitter = d;
      at = i;
    }
  }
  if (jitter > 1 / rate) {
    return new TuningforkError(
      'TF_IRREGULAR_SAMPLING',
      `${fn}: file '${file}', column '${column}', ${located.where(at)}: time ${t[at]} s is ${jitter} s away from the uniform grid t0 + i / ${rate} Hz (more than one sample interval): the rate drifts or changes. Pass sampling: 'timestamped' or resample.`,
      { fn, file, column, row: at, line: located.line(at), time: t[at], deviation: jitter },
    );
  }
  return { rate, t0, jitter };
}

/**
 * Read a continuous trace (a time column plus channels) from CSV/TSV or Arrow IPC.
 *
 * Reads the time column (required, finite) and the channels (numbers; missing cells are NaN),
 * converts time to seconds, and checks that timestamps strictly increase. With
 * `sampling: 'uniform'` (the default) the intervals must pass core `inferSampleRate` (each
 * within `jitterTolerance` of the median) and every timestamp must lie within one interval of
 * the grid `t0 + i / sampleRate`; each channel then becomes a UniformSignal. The rate is taken
 * from the whole span, `(n − 1) / (t[n−1] − t[0])`, which stays right when timestamps are
 * rounded. All channels of a file share one time column, so their lengths always match.
 *
 * Missing samples are kept as NaN, never filled: each channel's runs of NaN are listed in
 * `nanRuns` and reported as warning `IO_NAN_RUNS` (downstream filters propagate NaN).
 *
 * @param path - CSV/TSV or Arrow IPC file.
 * @param options - See ReadTraceOptions.
 * @returns A UniformTrace or TimestampedTrace (narrow on `sampling`).
 * @throws {TuningforkError} TF_BAD_FILE, TF_MISSING_COLUMN (time or a channel, with the closest
 *   name), TF_BAD_CELL as readCsv; TF_NON_FINITE for a missing time; TF_IRREGULAR_SAMPLING for
 *   repeated or decreasing timestamps (naming file and line/row), and with 'uniform' for
 *   intervals or drift off the grid; TF_TOO_FEW_SAMPLES with fewer than 2 rows for 'uniform'
 *   (1 for the others).
 *
 * @example
 * ```ts
 * const tr = await readTrace('photometry.csv', { channels: { signal: 'G', control: 'UV' } });
 * if (tr.sampling === 'uniform') tr.signals.signal.sampleRate; // e.g. 1000
 * ```
 */
export async function readTrace(path: string, options: ReadTraceOptions = {}): Promise<TraceRead> {
  const fn = 'readTrace';
  const o = resolveOptions(fn, DEFAULTS, options);
  const sampling = checkOneOf(fn, 'sampling', o.sampling, ['uniform', 'timestamped', 'auto'] as const);
  const timeUnit = checkOneOf(fn, 'timeUnit', o.timeUnit, ['s', 'ms'] as const);
  const tolerance = checkPositive(fn, 'jitterTolerance', o.jitterTolerance);
  if (typeof o.time !== 'string' || o.time.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: time must be a column name, got ${JSON.stringify(o.time)}.`, { fn, option: 'time' });
  }
  let channelMap: [string, string][] | null = null;
  if (o.channels !== undefined) {
    const entries: [string, unknown][] = Array.isArray(o.channels) ? o.channels.map((c: unknown) => [String(c), c]) : Object.entries(o.channels);
    if (entries.length === 0 || !entries.every(([, c]) => typeof c === 'string' && c.length > 0)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: channels must be a non-empty list of column names or an object of result name → column name.`, { fn, option: 'channels' });
    }
    channelMap = entries as [string, string][];
  }
  const specs: (string | ColumnSpec)[] | null = channelMap === null
    ? null
    : [{ name: o.time, as: '\u0000time' }, ...channelMap.map(([as, name]) => ({ name, as }))];
  const located = await readTable(fn, path, o.format, o.csv, specs);
  const table = located.table;
  const timeKey = channelMap === null ? o.time : '\u0000time';
  const time = table.columns[timeKey];
  if (time === undefined) {
    const hint = closestKey(o.time, table.fields);
    throw new TuningforkError('TF_MISSING_COLUMN', `${fn}: file '${path}' has no time column '${o.time}'.${hint ? ` Did you mean '${hint}'?` : ''} Its columns are: ${table.fields.map((f) => `'${f}'`).join(', ')}. Pass { time: '<name>' }.`, { fn, file: path, column: o.time, ...(hint ? { suggestion: hint } : {}) });
  }
  requireFinite(fn, located, o.time, time);
  toSeconds(time, timeUnit);
  const names = channelMap === null ? Object.keys(table.columns).filter((k) => k !== timeKey) : channelMap.map(([as]) => as);
  const minRows = sampling === 'uniform' ? 2 : 1;
  if (table.rows < minRows) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: file '${path}' has ${table.rows} data rows; a ${sampling === 'uniform' ? 'uniform trace needs at least 2' : 'trace needs at least 1'}.`, { fn, file: path, rows: table.rows });
  }
  checkIncreasing(fn, located, o.time, time);
  const warnings: ResultWarning[] = [...table.warnings];
  const nulls: Record<string, number> = {};
  const nanRuns: Record<string, NanRun[]> = {};
  for (const name of names) {
    const v = table.columns[name]!;
    const r = nanRunsOf(v, time, located);
    nanRuns[name] = r.runs;
    let missing = 0;
    for (const run of r.runs) missing += run.length;
    if (r.count > r.runs.length) missing = table.nulls[name] ?? missing;
    nulls[name] = missing;
    if (r.count > 0) {
      const first = r.runs[0]!;
      warnings.push({
        code: 'IO_NAN_RUNS',
        message: `${fn}: file '${path}', channel '${name}': ${missing} missing samples in ${r.count} run(s), the longest ${r.longest} samples; the first starts at t=${first.startTime} s (${located.where(first.startRow)}). They are NaN, and NaN propagates through filters: interpolate or exclude these spans.`,
        details: { file: path, channel: name, missing, runs: r.count, longest: r.longest },
      });
    }
  }
  const base = { file: path, rows: table.rows, time, nulls, nanRuns, warnings };
  if (sampling !== 'timestamped') {
    const grid = uniformGrid(fn, located, o.time, time, tolerance);
    if (!(grid instanceof TuningforkError)) {
      const signals: Record<string, UniformSignal> = {};
      for (const name of names) signals[name] = { values: table.columns[name]!, sampleRate: grid.rate, t0: grid.t0 };
      return { ...base, sampling: 'uniform', sampleRate: grid.rate, t0: grid.t0, jitterSec: grid.jitter, signals };
    }
    if (sampling === 'uniform') throw grid;
    warnings.push({ code: 'IO_IRREGULAR_SAMPLING', message: `${grid.message} The trace was kept on its timestamps.`, details: grid.details });
  }
  const signals: Record<string, TimestampedSignal> = {};
  for (const name of names) signals[name] = { values: table.columns[name]!, timestamps: time };
  return { ...base, sampling: 'timestamped', signals };
}

import { TuningforkError, checkOneOf, closestKey, makeEventTable, resolveOptions, type EventTable, type ResultWarning } from '@tuningfork/core';
import { readTable, requireFinite, toSeconds, type CsvParseSettings, type TableFormat } from '../internal/read-table.js';

/** Options of readEvents. */
export interface ReadEventsOptions {
  /** File format; `'auto'` recognises Arrow IPC by its magic bytes, else reads text. @defaultValue 'auto' */
  format?: TableFormat;
  /** Column of event times. @defaultValue 'time' */
  time?: string;
  /** Column of event names. @defaultValue 'name' */
  name?: string;
  /** Column of per-event values; when the file has no such column, values are NaN. @defaultValue 'value' */
  value?: string;
  /** Unit of the time column; converted to seconds. @defaultValue 's' */
  timeUnit?: 's' | 'ms';
  /**
   * Rows with the same time and name as an earlier row: `'keep'` them (reported as warning
   * `IO_DUPLICATE_EVENTS`), `'drop'` them (reported too), or `'error'` (TF_BAD_EVENTS).
   * @defaultValue 'keep'
   */
  duplicates?: 'keep' | 'drop' | 'error';
  /** CSV parsing settings (delimiter, decimal, commentPrefix, nullTokens, chunkBytes). @defaultValue {} */
  csv?: CsvParseSettings;
}

/** Result of readEvents. */
export interface EventsRead {
  readonly file: string;
  /** The events, sorted by time (ties keep file order). */
  readonly events: EventTable;
  /** Data rows read. */
  readonly rows: number;
  /** Rows that were out of time order in the file (0 when the file was sorted). */
  readonly reordered: number;
  /** Rows repeating the time and name of another row (kept or dropped as `duplicates` says). */
  readonly duplicates: number;
  /** IO_EVENTS_SORTED, IO_DUPLICATE_EVENTS, IO_TRUNCATED_LAST_LINE. */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  format: 'auto' as TableFormat,
  time: 'time',
  name: 'name',
  value: 'value',
  timeUnit: 's' as 's' | 'ms',
  duplicates: 'keep' as 'keep' | 'drop' | 'error',
  csv: Object.freeze({}) as CsvParseSettings,
});

function columnName(fn: string, key: string, v: unknown): string {
  if (typeof v !== 'string' || v.length === 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${key} must be a column name, got ${JSON.stringify(v)}.`, { fn, option: key });
  return v;
}

/**
 * Read a tidy event table (`time,name[,value]`) from CSV/TSV or Arrow IPC into a core EventTable.
 *
 * Times are required and finite (converted to seconds); names are text and must not be empty;
 * leading and trailing blanks of names are removed; values are numbers (NaN when empty or when the file has no value column). Unsorted rows are
 * sorted by time, keeping file order for ties, and reported as warning `IO_EVENTS_SORTED`;
 * rows repeating an earlier row's time and name are handled as `duplicates` says.
 *
 * @param path - CSV/TSV or Arrow IPC file.
 * @param options - See ReadEventsOptions.
 * @returns `{ events, rows, reordered, duplicates, warnings }`.
 * @throws {TuningforkError} TF_BAD_FILE, TF_MISSING_COLUMN (with the closest name), TF_BAD_CELL as
 *   readCsv; TF_NON_FINITE for a missing time; TF_BAD_CELL for an empty name (naming the line);
 *   TF_BAD_EVENTS for a duplicate with `duplicates: 'error'`.
 *
 * @example
 * ```ts
 * const { events } = await readEvents('events.csv', { timeUnit: 'ms' });
 * eventTimes(events, 'reward');
 * ```
 */
export async function readEvents(path: string, options: ReadEventsOptions = {}): Promise<EventsRead> {
  const fn = 'readEvents';
  const o = resolveOptions(fn, DEFAULTS, options);
  const timeCol = columnName(fn, 'time', o.time);
  const nameCol = columnName(fn, 'name', o.name);
  const valueCol = columnName(fn, 'value', o.value);
  const timeUnit = checkOneOf(fn, 'timeUnit', o.timeUnit, ['s', 'ms'] as const);
  const dupMode = checkOneOf(fn, 'duplicates', o.duplicates, ['keep', 'drop', 'error'] as const);
  const located = await readTable(fn, path, o.format, o.csv, [
    { name: timeCol, as: 'time' },
    { name: nameCol, as: 'name', type: 'string' },
    { name: valueCol, as: 'value', required: false },
  ]);
  const table = located.table;
  const warnings: ResultWarning[] = [...table.warnings];
  const time = toSeconds(table.columns.time!, timeUnit);
  requireFinite(fn, located, timeCol, time);
  const names = table.strings.name!.map((s) => s.trim());
  const value = table.columns.value;
  if (value === undefined) {
    const hint = closestKey(valueCol, table.fields.filter((f) => f !== timeCol && f !== nameCol));
    if (hint !== undefined) {
      warnings.push({ code: 'IO_VALUE_COLUMN_ABSENT', message: `${fn}: file '${path}' has no value column '${valueCol}' (values are NaN); did you mean '${hint}'? Pass { value: '${hint}' }.`, details: { file: path, column: valueCol, suggestion: hint } });
    }
  }
  const n = table.rows;
  for (let i = 0; i < n; i++) {
    if (names[i]!.trim().length === 0) {
      throw new TuningforkError('TF_BAD_CELL', `${fn}: file '${path}', column '${nameCol}', ${located.where(i)}: the event name is empty. Every event needs a name (e.g. 'cue', 'reward').`, { fn, file: path, column: nameCol, row: i, line: located.line(i) });
    }
  }
  let reordered = 0;
  for (let i = 1; i < n; i++) if (time[i]! < time[i - 1]!) reordered++;
  const order = Array.from({ length: n }, (_, i) => i);
  if (reordered > 0) {
    order.sort((a, b) => time[a]! - time[b]! || a - b);
    const first = (() => {
      for (let i = 1; i < n; i++) if (time[i]! < time[i - 1]!) return i;
      return 0;
    })();
    warnings.push({
      code: 'IO_EVENTS_SORTED',
      message: `${fn}: file '${path}': ${reordered} row(s) were earlier than the row before them (first at ${located.where(first)}, t=${time[first]} s); the events were sorted by time, ties in file order.`,
      details: { file: path, reordered, firstRow: first, line: located.line(first) },
    });
  }
  // Duplicates: same time and name as an earlier row (in sorted order, equal times are adjacent).
  const keep = new Uint8Array(n).fill(1);
  let duplicates = 0;
  let firstDup = -1;
  for (let k = 0; k < n; ) {
    let j = k + 1;
    while (j < n && time[order[j]!] === time[order[k]!]) j++;
    if (j - k > 1) {
      const seen = new Set<string>();
      for (let m = k; m < j; m++) {
        const i = order[m]!;
        if (seen.has(names[i]!)) {
          duplicates++;
          keep[m] = 0;
          if (firstDup < 0 || i < firstDup) firstDup = i;
        } else seen.add(names[i]!);
      }
    }
    k = j;
  }
  if (duplicates > 0) {
    const where = located.where(firstDup);
    if (dupMode === 'error') {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: file '${path}', ${where}: event '${names[firstDup]}' at t=${time[firstDup]} s repeats an earlier row (${duplicates} such rows). Remove the repeats or pass duplicates: 'keep' or 'drop'.`, { fn, file: path, row: firstDup, line: located.line(firstDup), duplicates });
    }
    warnings.push({
      code: 'IO_DUPLICATE_EVENTS',
      message: `${fn}: file '${path}': ${duplicates} row(s) repeat the time and name of an earlier row (first at ${where}: '${names[firstDup]}' at t=${time[firstDup]} s); they were ${dupMode === 'drop' ? 'dropped' : 'kept'}.`,
      details: { file: path, duplicates, firstRow: firstDup, line: located.line(firstDup), action: dupMode },
    });
  }
  const m = dupMode === 'drop' ? n - duplicates : n;
  const t = new Float64Array(m);
  const v = new Float64Array(m);
  const nm = new Array<string>(m);
  for (let k = 0, w = 0; k < n; k++) {
    if (dupMode === 'drop' && keep[k] === 0) continue;
    const i = order[k]!;
    t[w] = time[i]!;
    v[w] = value === undefined ? NaN : value[i]!;
    nm[w] = names[i]!;
    w++;
  }
  return { file: path, events: makeEventTable(t, nm, v), rows: n, reordered, duplicates, warnings };
}

import { TuningforkError, checkOneOf, resolveOptions, type ResultWarning, type SpikeTrain } from '@tuningfork/core';
import { readTable, requireFinite, toSeconds, type CsvParseSettings, type TableFormat } from '../internal/read-table.js';

/** Options of readSpikes. */
export interface ReadSpikesOptions {
  /** File format; `'auto'` recognises Arrow IPC by its magic bytes, else reads text. @defaultValue 'auto' */
  format?: TableFormat;
  /** Column of unit labels (text or numbers, read as text). @defaultValue 'unit' */
  unit?: string;
  /** Column of spike times. @defaultValue 'time' */
  time?: string;
  /** Unit of the time column; converted to seconds. @defaultValue 's' */
  timeUnit?: 's' | 'ms';
  /** CSV parsing settings (delimiter, decimal, commentPrefix, nullTokens, chunkBytes). @defaultValue {} */
  csv?: CsvParseSettings;
}

/** Result of readSpikes. */
export interface SpikesRead {
  readonly file: string;
  /** One train per unit, in order of first appearance in the file; times sorted ascending. */
  readonly units: readonly SpikeTrain[];
  /** Data rows read (spikes). */
  readonly rows: number;
  /** IO_SPIKES_SORTED, IO_DUPLICATE_SPIKES, IO_TRUNCATED_LAST_LINE. */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  format: 'auto' as TableFormat,
  unit: 'unit',
  time: 'time',
  timeUnit: 's' as 's' | 'ms',
  csv: Object.freeze({}) as CsvParseSettings,
});

/**
 * Read sorted-unit spike times (`unit,time`, one row per spike) from CSV/TSV or Arrow IPC.
 *
 * Rows are grouped by unit label (order of first appearance); each unit's times are sorted
 * (warning `IO_SPIKES_SORTED` when the file was not) and repeated times within a unit are
 * kept and reported (warning `IO_DUPLICATE_SPIKES`: usually a double-counted spike).
 *
 * @param path - CSV/TSV or Arrow IPC file.
 * @param options - See ReadSpikesOptions.
 * @returns `{ units, rows, warnings }`.
 * @throws {TuningforkError} TF_BAD_FILE, TF_MISSING_COLUMN (with the closest name), TF_BAD_CELL as
 *   readCsv; TF_NON_FINITE for a missing time; TF_BAD_CELL for an empty unit label (naming the line).
 *
 * @example
 * ```ts
 * const { units } = await readSpikes('spikes.tsv', { unit: 'cluster' });
 * units[0].times; // Float64Array, seconds
 * ```
 */
export async function readSpikes(path: string, options: ReadSpikesOptions = {}): Promise<SpikesRead> {
  const fn = 'readSpikes';
  const o = resolveOptions(fn, DEFAULTS, options);
  for (const key of ['unit', 'time'] as const) {
    if (typeof o[key] !== 'string' || o[key].length === 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${key} must be a column name, got ${JSON.stringify(o[key])}.`, { fn, option: key });
  }
  const timeUnit = checkOneOf(fn, 'timeUnit', o.timeUnit, ['s', 'ms'] as const);
  const located = await readTable(fn, path, o.format, o.csv, [
    { name: o.unit, as: 'unit', type: 'string' },
    { name: o.time, as: 'time' },
  ]);
  const table = located.table;
  const time = toSeconds(table.columns.time!, timeUnit);
  requireFinite(fn, located, o.time, time);
  const labels = table.strings.unit!;
  const n = table.rows;
  const index = new Map<string, number>();
  const counts: number[] = [];
  const of = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const u = labels[i]!.trim();
    if (u.length === 0) {
      throw new TuningforkError('TF_BAD_CELL', `${fn}: file '${path}', column '${o.unit}', ${located.where(i)}: the unit label is empty. Every spike needs the label of its unit.`, { fn, file: path, column: o.unit, row: i, line: located.line(i) });
    }
    let k = index.get(u);
    if (k === undefined) {
      k = counts.length;
      index.set(u, k);
      counts.push(0);
    }
    counts[k]!++;
    of[i] = k;
  }
  const trains = counts.map((c) => new Float64Array(c));
  const fill = new Int32Array(counts.length);
  for (let i = 0; i < n; i++) {
    const k = of[i]!;
    trains[k]![fill[k]!++] = time[i]!;
  }
  const warnings: ResultWarning[] = [...table.warnings];
  const unsorted: string[] = [];
  let dupUnits = 0;
  let dupSpikes = 0;
  const names = [...index.keys()];
  trains.forEach((t, k) => {
    let sorted = true;
    for (let i = 1; i < t.length; i++) if (t[i]! < t[i - 1]!) sorted = false;
    if (!sorted) {
      t.sort();
      unsorted.push(names[k]!);
    }
    let d = 0;
    for (let i = 1; i < t.length; i++) if (t[i] === t[i - 1]) d++;
    if (d > 0) {
      dupUnits++;
      dupSpikes += d;
    }
  });
  if (unsorted.length > 0) {
    warnings.push({ code: 'IO_SPIKES_SORTED', message: `${fn}: file '${path}': spike times of ${unsorted.length} unit(s) (${unsorted.slice(0, 5).join(', ')}${unsorted.length > 5 ? ', …' : ''}) were not in time order; they were sorted.`, details: { file: path, units: unsorted } });
  }
  if (dupSpikes > 0) {
    warnings.push({ code: 'IO_DUPLICATE_SPIKES', message: `${fn}: file '${path}': ${dupSpikes} spike(s) in ${dupUnits} unit(s) repeat the previous spike time of their unit; they were kept (check for double-counting).`, details: { file: path, duplicates: dupSpikes, units: dupUnits } });
  }
  return { file: path, units: names.map((name, k) => ({ name, times: trains[k]! })), rows: n, warnings };
}

import { TuningforkError } from './errors.js';
import type { EventTable } from './types.js';

/**
 * Build an EventTable from columns, sorting by time (stable) and validating.
 *
 * @param time - Event times, seconds; must be finite.
 * @param name - Event names, same length.
 * @param value - Optional per-event values (NaN when absent).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH on unequal lengths, TF_BAD_EVENTS on non-finite times
 *   (naming the row) or empty names.
 */
export function makeEventTable(time: ArrayLike<number>, name: readonly string[], value?: ArrayLike<number>): EventTable {
  const n = time.length;
  if (name.length !== n || (value !== undefined && value.length !== n)) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `makeEventTable: time (${n}), name (${name.length})${value ? ` and value (${value.length})` : ''} must have equal lengths.`, {});
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(time[i])) {
      throw new TuningforkError('TF_BAD_EVENTS', `makeEventTable: event row ${i} ('${name[i]}') has non-finite time ${time[i]}.`, { row: i });
    }
    if (typeof name[i] !== 'string' || name[i]!.length === 0) {
      throw new TuningforkError('TF_BAD_EVENTS', `makeEventTable: event row ${i} has an empty name.`, { row: i });
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => time[a]! - time[b]! || a - b);
  const t = new Float64Array(n);
  const v = new Float64Array(n);
  const nm: string[] = new Array<string>(n);
  for (let k = 0; k < n; k++) {
    const i = order[k]!;
    t[k] = time[i]!;
    v[k] = value === undefined ? NaN : value[i]!;
    nm[k] = name[i]!;
  }
  return { time: t, name: nm, value: v };
}

/** Times (sorted) of all events called `name`. */
export function eventTimes(events: EventTable, name: string): Float64Array {
  let count = 0;
  for (let i = 0; i < events.name.length; i++) if (events.name[i] === name) count++;
  const out = new Float64Array(count);
  for (let i = 0, k = 0; i < events.name.length; i++) if (events.name[i] === name) out[k++] = events.time[i]!;
  return out;
}

/** Values of all events called `name`, in time order. */
export function eventValues(events: EventTable, name: string): Float64Array {
  let count = 0;
  for (let i = 0; i < events.name.length; i++) if (events.name[i] === name) count++;
  const out = new Float64Array(count);
  for (let i = 0, k = 0; i < events.name.length; i++) if (events.name[i] === name) out[k++] = events.value[i]!;
  return out;
}

/** The distinct event names, in order of first appearance. */
export function eventNames(events: EventTable): string[] {
  return [...new Set(events.name)];
}

import * as aq from 'arquero';
import { TuningforkError, checkFinite, checkNonNegative, resolveOptions } from '@tuningfork/core';
import type { EventTable, TrialTable } from '@tuningfork/core';
import { checkEventTable, checkTrialTable, eventsToTable, outcomeLabel } from './events-to-table.js';
import type { ArqueroTable } from './events-to-table.js';

type TrialTimeColumn = 'cueTime' | 'choiceTime' | 'outcomeTime';

/** Options of {@link assignTrials}. */
export interface AssignTrialsOptions {
  /** Trial column that opens each trial's interval. @defaultValue 'cueTime' */
  start?: TrialTimeColumn;
  /** Where the interval closes: 'next' = the next trial's start, or a trial time column. @defaultValue 'next' */
  end?: 'next' | TrialTimeColumn;
  /** The interval opens this long before `start`, seconds. @defaultValue 0 */
  preSec?: number;
  /** With a column `end`, the interval closes this long after it, seconds. @defaultValue 0 */
  postSec?: number;
  /** End of the last trial's interval with end: 'next', seconds (e.g. the session end). @defaultValue Infinity */
  lastEndSec?: number;
  /** Column of event times when `events` is an arquero table. @defaultValue 'time' */
  timeColumn?: string;
}

const DEFAULTS = Object.freeze({
  start: 'cueTime' as TrialTimeColumn,
  end: 'next' as 'next' | TrialTimeColumn,
  preSec: 0,
  postSec: 0,
  lastEndSec: Infinity,
  timeColumn: 'time',
});

const TRIAL_COLUMNS = ['trial', 'cueTime', 'choiceTime', 'choice', 'outcomeTime', 'reward', 'outcome', 'sinceStart'] as const;

/**
 * Join events to trials by time intervals: each event gets the trial whose interval holds it.
 *
 * Trial k's interval is `[start_k − preSec, end_k)`, where `end_k` is the next trial's
 * `start − preSec` (end: 'next'; `lastEndSec` for the last trial) or `end column + postSec`.
 * Trials with a NaN start have no interval. The result is the event table with the trial's
 * columns appended (`trial`, `cueTime`, `choiceTime`, `choice`, `outcomeTime`, `reward`,
 * `outcome`) and `sinceStart` = event time − the trial's start (seconds); events in no interval
 * get null in those columns.
 *
 * @param events - An EventTable, or an arquero table with a numeric time column.
 * @param trials - The session's TrialTable.
 * @returns A new arquero table, rows in the input order.
 * @throws {TuningforkError} TF_BAD_EVENTS (trial starts not strictly increasing, or intervals
 *   overlapping, naming the trials); TF_MISSING_COLUMN (no time column); TF_BAD_OPTION (a
 *   trial column name already in the event table); TF_SHAPE_MISMATCH; TF_UNKNOWN_OPTION.
 */
export function assignTrials(events: EventTable | ArqueroTable, trials: TrialTable, options: AssignTrialsOptions = {}): ArqueroTable {
  const fn = 'assignTrials';
  const o = resolveOptions(fn, DEFAULTS, options);
  const pre = checkNonNegative(fn, 'preSec', o.preSec);
  const post = checkNonNegative(fn, 'postSec', o.postSec);
  const lastEnd = o.lastEndSec === Infinity ? Infinity : checkFinite(fn, 'lastEndSec', o.lastEndSec);
  const nT = checkTrialTable(fn, trials);
  let table: ArqueroTable;
  if (events instanceof aq.ColumnTable) {
    table = events;
  } else {
    checkEventTable(fn, events as EventTable);
    table = eventsToTable(events as EventTable);
  }
  const names = table.columnNames();
  if (!names.includes(o.timeColumn)) {
    throw new TuningforkError('TF_MISSING_COLUMN', `${fn}: the event table has no column '${o.timeColumn}' (columns: ${names.join(', ')}). Pass { timeColumn }.`, { fn, column: o.timeColumn });
  }
  for (const c of TRIAL_COLUMNS) {
    if (names.includes(c)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: the event table already has a column '${c}', which the join would overwrite; rename it first.`, { fn, column: c });
    }
  }
  const startCol = trials[o.start];
  // Intervals of trials with a finite start, in trial order.
  const ks: number[] = [];
  for (let k = 0; k < nT; k++) if (Number.isFinite(startCol[k])) ks.push(k);
  const lo = new Float64Array(ks.length);
  const hi = new Float64Array(ks.length);
  for (let q = 0; q < ks.length; q++) {
    const k = ks[q]!;
    lo[q] = startCol[k]! - pre;
    if (q > 0 && !(startCol[k]! > startCol[ks[q - 1]!]!)) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: trial ${trials.trial[k]} starts at ${startCol[k]} s, not after trial ${trials.trial[ks[q - 1]!]} (${startCol[ks[q - 1]!]} s); trial starts must increase.`, { fn, trial: trials.trial[k] });
    }
    if (o.end === 'next') {
      hi[q] = q + 1 < ks.length ? startCol[ks[q + 1]!]! - pre : lastEnd;
    } else {
      const e = trials[o.end][k]!;
      hi[q] = Number.isFinite(e) ? e + post : lo[q]!; // no end: an empty interval
    }
  }
  for (let q = 1; q < ks.length; q++) {
    if (lo[q]! < hi[q - 1]!) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: the intervals of trials ${trials.trial[ks[q - 1]!]} and ${trials.trial[ks[q]!]} overlap ([…, ${hi[q - 1]}) and [${lo[q]}, …)); reduce preSec/postSec or use end: 'next'.`, { fn, trials: [trials.trial[ks[q - 1]!], trials.trial[ks[q]!]] });
    }
  }
  const t = table.array(o.timeColumn) as ArrayLike<unknown>;
  const n = t.length;
  const cols = {
    trial: new Array<number | null>(n), cueTime: new Array<number | null>(n), choiceTime: new Array<number | null>(n),
    choice: new Array<number | null>(n), outcomeTime: new Array<number | null>(n), reward: new Array<number | null>(n),
    outcome: new Array<string | null>(n), sinceStart: new Array<number | null>(n),
  };
  for (let i = 0; i < n; i++) {
    const v = t[i];
    const x = typeof v === 'number' ? v : NaN;
    // Last interval with lo ≤ x.
    let a = 0;
    let b = lo.length;
    while (a < b) {
      const mid = (a + b) >>> 1;
      if (lo[mid]! <= x) a = mid + 1;
      else b = mid;
    }
    const q = a - 1;
    if (Number.isFinite(x) && q >= 0 && x < hi[q]!) {
      const k = ks[q]!;
      cols.trial[i] = trials.trial[k]!;
      cols.cueTime[i] = trials.cueTime[k]!;
      cols.choiceTime[i] = trials.choiceTime[k]!;
      cols.choice[i] = trials.choice[k]!;
      cols.outcomeTime[i] = trials.outcomeTime[k]!;
      cols.reward[i] = trials.reward[k]!;
      cols.outcome[i] = outcomeLabel(trials.reward[k]!);
      cols.sinceStart[i] = x - startCol[k]!;
    } else {
      cols.trial[i] = null;
      cols.cueTime[i] = null;
      cols.choiceTime[i] = null;
      cols.choice[i] = null;
      cols.outcomeTime[i] = null;
      cols.reward[i] = null;
      cols.outcome[i] = null;
      cols.sinceStart[i] = null;
    }
  }
  const base: Record<string, unknown> = {};
  for (const c of names) base[c] = table.array(c);
  return aq.table({ ...base, ...cols });
}

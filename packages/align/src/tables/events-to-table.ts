import * as aq from 'arquero';
import { TuningforkError } from '@tuningfork/core';
import type { EventTable, TrialTable } from '@tuningfork/core';

/** An arquero table (ColumnTable). */
export type ArqueroTable = aq.ColumnTable;

/** Outcome label of a trial: reward > 0 → 'rewarded', 0 → 'omitted', NaN (no outcome) → 'none'. */
export type TrialOutcome = 'rewarded' | 'omitted' | 'none';

/** Label one trial's outcome value. */
export function outcomeLabel(reward: number): TrialOutcome {
  return reward > 0 ? 'rewarded' : reward === 0 ? 'omitted' : 'none';
}

/** Throw unless the columnar EventTable has equal-length columns. @throws TF_SHAPE_MISMATCH */
export function checkEventTable(fn: string, events: EventTable): void {
  const n = events.time.length;
  if (events.name.length !== n || events.value.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: events.time (${n}), events.name (${events.name.length}) and events.value (${events.value.length}) must have equal lengths.`, { fn });
  }
}

/** Throw unless every TrialTable column has one entry per trial. @throws TF_SHAPE_MISMATCH */
export function checkTrialTable(fn: string, trials: TrialTable): number {
  const n = trials.trial.length;
  const cols: [string, ArrayLike<number>][] = [
    ['cueTime', trials.cueTime], ['choiceTime', trials.choiceTime], ['choice', trials.choice],
    ['outcomeTime', trials.outcomeTime], ['reward', trials.reward],
  ];
  for (const [name, c] of cols) {
    if (c.length !== n) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: trials.${name} has ${c.length} entries, trials.trial has ${n}.`, { fn, column: name });
    }
  }
  return n;
}

/**
 * An EventTable as an arquero table with columns `time` (s), `name`, `value` (one row per event),
 * ready for filtering, joins and export (Arrow/CSV).
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when the columns differ in length.
 */
export function eventsToTable(events: EventTable): ArqueroTable {
  checkEventTable('eventsToTable', events);
  return aq.table({ time: events.time, name: events.name.slice(), value: events.value });
}

/**
 * A TrialTable as an arquero table, one row per trial: `trial`, `cueTime`, `choiceTime`, `choice`
 * (−1 = none), `outcomeTime`, `reward` (NaN = no outcome) and `outcome` ('rewarded', 'omitted' or
 * 'none').
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when the columns differ in length.
 */
export function trialsToTable(trials: TrialTable): ArqueroTable {
  const n = checkTrialTable('trialsToTable', trials);
  const outcome: string[] = new Array<string>(n);
  for (let k = 0; k < n; k++) outcome[k] = outcomeLabel(trials.reward[k]!);
  return aq.table({
    trial: trials.trial, cueTime: trials.cueTime, choiceTime: trials.choiceTime, choice: trials.choice,
    outcomeTime: trials.outcomeTime, reward: trials.reward, outcome,
  });
}

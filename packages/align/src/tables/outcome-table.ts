import * as aq from 'arquero';
import { resolveOptions } from '@tuningfork/core';
import type { EventTable, TrialTable } from '@tuningfork/core';
import { checkEventTable, checkTrialTable } from './events-to-table.js';
import type { ArqueroTable } from './events-to-table.js';

/** Outcome type of an outcome event. */
export type OutcomeType = 'rewarded' | 'omitted' | 'bonus';

/** Options of {@link outcomeTable}. */
export interface OutcomeTableOptions {
  /** Event name of unannounced (bonus) rewards in `events`. @defaultValue 'bonus' */
  bonusName?: string;
}

const DEFAULTS = Object.freeze({ bonusName: 'bonus' });

/**
 * All outcome events of a session, labelled: trial outcomes as 'rewarded' (reward > 0) or
 * 'omitted' (reward = 0), and bonus rewards (events named `bonusName`) as 'bonus'.
 *
 * Columns: `time` (s), `trial` (the trial number for trial outcomes; for a bonus, the trial whose
 * cue-to-next-cue interval holds it, null before the first cue), `outcome`, `reward` (the trial's
 * reward, or the bonus event's value), `inTrial` (true for trial outcomes). Rows are sorted by
 * time. Trials with a NaN outcome time or NaN reward (no outcome) are left out.
 *
 * @param trials - The session's TrialTable.
 * @param events - Events holding the bonus rewards (null: none).
 * @returns An arquero table.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH; TF_UNKNOWN_OPTION.
 */
export function outcomeTable(trials: TrialTable, events: EventTable | null = null, options: OutcomeTableOptions = {}): ArqueroTable {
  const fn = 'outcomeTable';
  const o = resolveOptions(fn, DEFAULTS, options);
  const nT = checkTrialTable(fn, trials);
  const rows: { time: number; trial: number | null; outcome: OutcomeType; reward: number; inTrial: boolean }[] = [];
  for (let k = 0; k < nT; k++) {
    const t = trials.outcomeTime[k]!;
    const r = trials.reward[k]!;
    if (!Number.isFinite(t) || !Number.isFinite(r)) continue;
    rows.push({ time: t, trial: trials.trial[k]!, outcome: r > 0 ? 'rewarded' : 'omitted', reward: r, inTrial: true });
  }
  if (events !== null) {
    checkEventTable(fn, events);
    const cues: number[] = [];
    const ids: number[] = [];
    for (let k = 0; k < nT; k++) {
      if (Number.isFinite(trials.cueTime[k])) {
        cues.push(trials.cueTime[k]!);
        ids.push(trials.trial[k]!);
      }
    }
    for (let i = 0; i < events.time.length; i++) {
      if (events.name[i] !== o.bonusName) continue;
      const t = events.time[i]!;
      let a = 0;
      let b = cues.length;
      while (a < b) {
        const mid = (a + b) >>> 1;
        if (cues[mid]! <= t) a = mid + 1;
        else b = mid;
      }
      rows.push({ time: t, trial: a > 0 ? ids[a - 1]! : null, outcome: 'bonus', reward: events.value[i]!, inTrial: false });
    }
  }
  rows.sort((p, q) => p.time - q.time);
  return aq.table({
    time: Float64Array.from(rows, (r) => r.time),
    trial: rows.map((r) => r.trial),
    outcome: rows.map((r) => r.outcome),
    reward: Float64Array.from(rows, (r) => r.reward),
    inTrial: rows.map((r) => r.inTrial),
  });
}

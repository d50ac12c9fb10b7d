import { TuningforkError } from '@tuningfork/core';
import type { EventTable, TrialTable } from '@tuningfork/core';

/** Standard event names of tuningfork's tidy event tables (our convention, documented in the README). */
export const EVENT_NAMES = Object.freeze({
  cue: 'cue',
  choices: ['choice_left', 'choice_right'] as const,
  reward: 'reward',
  omission: 'omission',
  bonus: 'bonus',
  lick: 'lick',
  moveOnset: 'move_onset',
});

/**
 * Rebuild the trial table from events: each `cue` opens a trial, its first choice event sets the
 * choice (0 = choice_left, 1 = choice_right) and the first following `reward`/`omission` closes it.
 * A cue without choice or outcome before the next cue gives a trial with choice −1 / reward NaN.
 *
 * @throws {TuningforkError} TF_BAD_EVENTS when the table holds no cue.
 */
export function trialsFromEvents(events: EventTable): TrialTable {
  const cue: number[] = [], chT: number[] = [], ch: number[] = [], outT: number[] = [], rew: number[] = [];
  let open = -1;
  for (let i = 0; i < events.time.length; i++) {
    const name = events.name[i]!;
    const t = events.time[i]!;
    if (name === EVENT_NAMES.cue) {
      cue.push(t); chT.push(NaN); ch.push(-1); outT.push(NaN); rew.push(NaN);
      open = cue.length - 1;
    } else if (open >= 0) {
      const k = EVENT_NAMES.choices.indexOf(name as 'choice_left');
      if (k >= 0 && ch[open] === -1) {
        ch[open] = k;
        chT[open] = t;
      } else if ((name === EVENT_NAMES.reward || name === EVENT_NAMES.omission) && ch[open] !== -1 && Number.isNaN(outT[open]!)) {
        outT[open] = t;
        rew[open] = name === EVENT_NAMES.reward ? 1 : 0;
      }
    }
  }
  if (cue.length === 0) {
    throw new TuningforkError('TF_BAD_EVENTS', `trialsFromEvents: the event table has no '${EVENT_NAMES.cue}' events, so no trials can be formed. Supply a trials table or cue events.`, {});
  }
  return {
    trial: Int32Array.from(cue, (_, i) => i), cueTime: Float64Array.from(cue), choiceTime: Float64Array.from(chT),
    choice: Int32Array.from(ch), outcomeTime: Float64Array.from(outT), reward: Float64Array.from(rew), nOptions: 2,
  };
}

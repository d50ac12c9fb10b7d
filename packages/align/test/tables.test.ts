import { describe, expect, it } from 'vitest';
import { makeEventTable } from '@tuningfork/core';
import type { TrialTable } from '@tuningfork/core';
import {
  assignTrials, columnTimes, eventsToTable, outcomeTable, periEventMatrix, selectRows, trialsToTable,
} from '../src/index.js';

// A hand-made session: three trials (rewarded, omitted, no choice) and a bonus between trials.
const trials: TrialTable = {
  trial: Int32Array.of(0, 1, 2),
  cueTime: Float64Array.of(10, 20, 30),
  choiceTime: Float64Array.of(11, 21.5, NaN),
  choice: Int32Array.of(0, 1, -1),
  outcomeTime: Float64Array.of(11.5, 22, NaN),
  reward: Float64Array.of(1, 0, NaN),
  nOptions: 2,
};
const events = makeEventTable(
  [5, 10, 11, 11.5, 12, 20, 21.5, 22, 26, 30, 40],
  ['lick', 'cue', 'choice_left', 'reward', 'lick', 'cue', 'choice_right', 'omission', 'bonus', 'cue', 'lick'],
  [1, 1, 1, 1, 1, 1, 1, 0, 1, 1, 1],
);

describe('eventsToTable', () => {
  it('eventsToTable gives one row per event with time, name and value columns', () => {
    const t = eventsToTable(events);
    expect(t.numRows()).toBe(11);
    expect(t.columnNames()).toEqual(['time', 'name', 'value']);
    expect(t.array('name')[8]).toBe('bonus');
  });
});

describe('trialsToTable', () => {
  it('trialsToTable labels outcomes rewarded / omitted / none', () => {
    const t = trialsToTable(trials);
    expect(t.array('outcome')).toEqual(['rewarded', 'omitted', 'none']);
    expect(Array.from(t.array('choice') as Int32Array)).toEqual([0, 1, -1]);
  });
});

describe('assignTrials', () => {
  it('assignTrials joins each event to the trial whose [cue, next cue) interval holds it', () => {
    const t = assignTrials(events, trials, { lastEndSec: 35 });
    expect(t.array('trial')).toEqual([null, 0, 0, 0, 0, 1, 1, 1, 1, 2, null]);
    expect(t.array('outcome')).toEqual([null, 'rewarded', 'rewarded', 'rewarded', 'rewarded', 'omitted', 'omitted', 'omitted', 'omitted', 'none', null]);
    // sinceStart = event time − cue time (exact differences of short decimals).
    expect(t.array('sinceStart')).toEqual([null, 0, 1, 1.5, 2, 0, 1.5, 2, 6, 0, null]);
  });

  it('assignTrials with end: outcomeTime and postSec keeps only events up to 1 s after each outcome', () => {
    const t = assignTrials(events, trials, { end: 'outcomeTime', postSec: 1 });
    // Trial 2 has no outcome: empty interval.
    expect(t.array('trial')).toEqual([null, 0, 0, 0, 0, 1, 1, 1, null, null, null]);
  });

  it('assignTrials refuses overlapping intervals and unsorted trial starts with TF_BAD_EVENTS', () => {
    expect(() => assignTrials(events, trials, { end: 'outcomeTime', postSec: 9 })).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
    const bad = { ...trials, cueTime: Float64Array.of(10, 5, 30) };
    expect(() => assignTrials(events, bad)).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
    expect(() => assignTrials(eventsToTable(events), trials, { timeColumn: 't' })).toThrow(expect.objectContaining({ code: 'TF_MISSING_COLUMN' }));
  });
});

describe('outcomeTable', () => {
  it('outcomeTable lists rewarded, omitted and bonus outcomes in time order with their trials', () => {
    const t = outcomeTable(trials, events);
    expect(Array.from(t.array('time') as Float64Array)).toEqual([11.5, 22, 26]);
    expect(t.array('outcome')).toEqual(['rewarded', 'omitted', 'bonus']);
    expect(t.array('trial')).toEqual([0, 1, 1]);
    expect(t.array('inTrial')).toEqual([true, true, false]);
  });
});

describe('selectRows', () => {
  it('selectRows filters by values, value lists and predicates on any column', () => {
    const t = assignTrials(events, trials, { lastEndSec: 35 });
    const licks = selectRows(t, { name: 'lick', trial: null });
    expect(Array.from(columnTimes(licks))).toEqual([5, 40]);
    const late = selectRows(t, { name: ['cue', 'bonus'], sinceStart: (v) => typeof v === 'number' && v > 1 });
    expect(Array.from(columnTimes(late))).toEqual([26]);
    expect(() => selectRows(t, { nope: 1 })).toThrow(expect.objectContaining({ code: 'TF_MISSING_COLUMN' }));
  });
});

describe('columnTimes', () => {
  it('columnTimes feeds selected events into periEventMatrix (null → NaN → missing-time)', () => {
    const t = outcomeTable(trials, events);
    const rewarded = selectRows(t, { outcome: ['rewarded', 'bonus'] });
    const times = columnTimes(rewarded);
    expect(Array.from(times)).toEqual([11.5, 26]);
    const s = { values: new Float64Array(1000), sampleRate: 20, t0: 0 };
    const m = periEventMatrix(s, times, { preSec: 1, postSec: 1 });
    expect(m.rows).toBe(2);
    const tt = trialsToTable(trials);
    expect(Number.isNaN(columnTimes(tt, 'choiceTime')[2])).toBe(true);
    expect(() => columnTimes(tt, 'outcome')).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
  });
});

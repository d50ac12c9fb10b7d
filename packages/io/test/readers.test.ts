import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { encodeArrow, readEvents, readSpikes, readTrace, readTrials } from '../src/index.js';

const tmp = mkdtempSync(join(tmpdir(), 'tf-io-readers-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

let counter = 0;
function file(text: string | Uint8Array, ext = 'csv'): string {
  const p = join(tmp, `f${counter++}.${ext}`);
  writeFileSync(p, text);
  return p;
}
const code = (c: string, details: Record<string, unknown> = {}) =>
  expect.objectContaining({ code: c, details: expect.objectContaining(details) });

/** `time,a,b` rows on the grid t = i / rate, printed with `decimals` decimals; a = i, b = −i. */
function grid(n: number, rate: number, decimals = 6, edit?: (i: number, cells: string[]) => string[] | null): string {
  const lines = ['time,a,b'];
  for (let i = 0; i < n; i++) {
    const cells = [(i / rate).toFixed(decimals), String(i), String(-i)];
    const out = edit ? edit(i, cells) : cells;
    if (out) lines.push(out.join(','));
  }
  return lines.join('\n') + '\n';
}

describe('readTrace', () => {
  it('readTrace returns UniformSignals at the rate of a clean 1 kHz grid', async () => {
    const tr = await readTrace(file(grid(500, 1000, 3)));
    expect(tr.sampling).toBe('uniform');
    if (tr.sampling !== 'uniform') return;
    // Closed form: t_i = i / 1000 s, so (n − 1) / span = 1000 exactly after snapping float noise.
    expect(tr.sampleRate).toBe(1000);
    expect(tr.t0).toBe(0);
    expect(Object.keys(tr.signals)).toEqual(['a', 'b']);
    expectAllClose(tr.signals.b!.values, Float64Array.from({ length: 500 }, (_, i) => -i), { rtol: 0 }); // exact integers
    // Printed with 3 decimals, times are within half a microsecond-rounding of the grid.
    expect(tr.jitterSec).toBeLessThanOrEqual(1e-12);
    expect(tr.warnings).toEqual([]);
  });

  it('readTrace takes the rate from the whole span, so 0.1 ms-rounded timestamps of a 1017.25 Hz device give 1017.25 Hz', async () => {
    const n = 20000;
    // Rounded intervals are 0.9 or 1.0 ms (median 1.0 ms): 10 % apart, so allow 15 %.
    const tr = await readTrace(file(grid(n, 1017.25, 4)), { jitterTolerance: 0.15 });
    if (tr.sampling !== 'uniform') throw new Error('expected uniform');
    // Closed form: only the two end timestamps' rounding (≤ 0.05 ms each) enters (n−1)/span.
    // (A median interval would say 1000 Hz here: most rounded intervals are 1.0 ms.)
    const span = (n - 1) / 1017.25;
    expectAllClose(tr.sampleRate, 1017.25, { rtol: 1e-4 / span });
    // ≤ 0.05 ms rounding of the sample itself + ≤ 0.05 ms of the grid line through the rounded ends.
    expect(tr.jitterSec).toBeLessThanOrEqual(1e-4 + 1e-9);
  });

  it('readTrace converts a millisecond time column to seconds', async () => {
    const tr = await readTrace(file('t_ms;x\n100;1\n110;2\n120;3\n'), { time: 't_ms', timeUnit: 'ms' });
    if (tr.sampling !== 'uniform') throw new Error('expected uniform');
    expect(tr.t0).toBe(0.1);
    expect(tr.sampleRate).toBe(100); // 10 ms steps
    expect(Array.from(tr.time)).toEqual([0.1, 0.11, 0.12]); // correctly rounded divisions by 1000
  });

  it('readTrace reads named channels under new names, and the same data from Arrow IPC', async () => {
    const csv = await readTrace(file(grid(50, 100)), { channels: { sig: 'a' } });
    const n = 50;
    const arrow = file(encodeArrow({ time: Float64Array.from({ length: n }, (_, i) => i / 100), a: Float64Array.from({ length: n }, (_, i) => i) }), 'arrow');
    const fromArrow = await readTrace(arrow, { channels: { sig: 'a' } });
    expect(Object.keys(csv.signals)).toEqual(['sig']);
    expect(fromArrow.signals.sig!.values).toEqual(csv.signals.sig!.values);
    expect(fromArrow.sampling === 'uniform' && fromArrow.sampleRate).toBe(100);
  });

  it('readTrace reports each channel\'s runs of missing samples (NaN kept) with rows, times and lines', async () => {
    const text = grid(40, 10, 1, (i, c) => (i >= 5 && i <= 7 ? [c[0]!, '', c[2]!] : i === 20 ? [c[0]!, 'NaN', c[2]!] : c));
    const tr = await readTrace(file(text));
    expect(tr.nulls).toEqual({ a: 4, b: 0 });
    expect(tr.nanRuns.a).toEqual([
      { startRow: 5, length: 3, startTime: 0.5, line: 7 }, // header is line 1, row r is line r + 2
      { startRow: 20, length: 1, startTime: 2, line: 22 },
    ]);
    expect(tr.nanRuns.b).toEqual([]);
    expect(tr.warnings.map((w) => w.code)).toEqual(['IO_NAN_RUNS']);
    expect(Number.isNaN(tr.signals.a!.values[6])).toBe(true);
  });

  it('readTrace throws TF_IRREGULAR_SAMPLING naming file and line for a repeated or decreasing timestamp', async () => {
    const dup = file(grid(10, 10, 1, (i, c) => (i === 4 ? ['0.3', c[1]!, c[2]!] : c)));
    await expect(readTrace(dup)).rejects.toThrow(code('TF_IRREGULAR_SAMPLING', { file: dup, line: 6, row: 4 }));
    const back = file(grid(10, 10, 1, (i, c) => (i === 6 ? ['0.45', c[1]!, c[2]!] : c)));
    await expect(readTrace(back, { sampling: 'timestamped' })).rejects.toThrow(code('TF_IRREGULAR_SAMPLING', { file: back, line: 8, row: 6 }));
  });

  it('readTrace rejects a dropped sample on a uniform grid, and keeps timestamps when asked', async () => {
    const gap = file(grid(30, 100, 2, (i, c) => (i === 12 ? null : c)));
    await expect(readTrace(gap)).rejects.toThrow(code('TF_IRREGULAR_SAMPLING', { file: gap, row: 12, line: 14 }));
    const auto = await readTrace(gap, { sampling: 'auto' });
    expect(auto.sampling).toBe('timestamped');
    expect(auto.warnings.map((w) => w.code)).toEqual(['IO_IRREGULAR_SAMPLING']);
    const ts = await readTrace(gap, { sampling: 'timestamped' });
    if (ts.sampling !== 'timestamped') throw new Error('expected timestamped');
    expect(ts.signals.a!.timestamps).toBe(ts.time);
    expect(ts.rows).toBe(29);
  });

  it('readTrace throws TF_NON_FINITE for a missing time, TF_MISSING_COLUMN with a suggestion, TF_TOO_FEW_SAMPLES for one row', async () => {
    const p = file(grid(5, 10, 1, (i, c) => (i === 2 ? ['', c[1]!, c[2]!] : c)));
    await expect(readTrace(p)).rejects.toThrow(code('TF_NON_FINITE', { file: p, column: 'time', line: 4 }));
    const q = file(grid(5, 10));
    await expect(readTrace(q, { time: 'tmie' })).rejects.toThrow(code('TF_MISSING_COLUMN', { suggestion: 'time' }));
    await expect(readTrace(q, { channels: ['a', 'c'] })).rejects.toThrow(code('TF_MISSING_COLUMN', { column: 'c' }));
    await expect(readTrace(file('time,a\n0,1\n'))).rejects.toThrow(code('TF_TOO_FEW_SAMPLES'));
    await expect(readTrace(q, { sampling: 'uniforn' as never })).rejects.toThrow(code('TF_BAD_OPTION'));
  });
});

describe('readEvents', () => {
  it('readEvents sorts unsorted rows by time (ties in file order) and reports IO_EVENTS_SORTED', async () => {
    const r = await readEvents(file('time,name,value\n2.0,reward,1\n0.5,cue,\n2.0,lick,\n1.0,choice,0\n'));
    expect(Array.from(r.events.time)).toEqual([0.5, 1, 2, 2]);
    expect(r.events.name).toEqual(['cue', 'choice', 'reward', 'lick']);
    expect(Array.from(r.events.value)).toEqual([NaN, 0, 1, NaN]);
    expect(r.reordered).toBe(2); // rows 2 (0.5 after 2.0) and 4 (1.0 after 2.0)
    expect(r.warnings.map((w) => w.code)).toEqual(['IO_EVENTS_SORTED']);
    expect(r.warnings[0]!.details).toMatchObject({ line: 3 });
  });

  it('readEvents keeps, drops or rejects rows repeating an earlier time and name', async () => {
    const p = file('t\tevent\n1.5\tcue\n1.5\tcue\n1.5\tlick\n3\tcue\n');
    const kept = await readEvents(p, { time: 't', name: 'event' });
    expect(kept.events.name).toEqual(['cue', 'cue', 'lick', 'cue']);
    expect(kept.duplicates).toBe(1);
    expect(kept.warnings.map((w) => w.code)).toEqual(['IO_DUPLICATE_EVENTS']);
    const dropped = await readEvents(p, { time: 't', name: 'event', duplicates: 'drop' });
    expect(dropped.events.name).toEqual(['cue', 'lick', 'cue']);
    await expect(readEvents(p, { time: 't', name: 'event', duplicates: 'error' })).rejects.toThrow(code('TF_BAD_EVENTS', { line: 3 }));
  });

  it('readEvents converts ms to seconds, trims names, and reports a value column that looks misspelled', async () => {
    const r = await readEvents(file('time,name,vaule\n1500, cue ,1\n2500,reward,2\n'), { timeUnit: 'ms' });
    expect(Array.from(r.events.time)).toEqual([1.5, 2.5]);
    expect(r.events.name).toEqual(['cue', 'reward']);
    expect(Array.from(r.events.value)).toEqual([NaN, NaN]);
    expect(r.warnings[0]).toMatchObject({ code: 'IO_VALUE_COLUMN_ABSENT', details: { suggestion: 'vaule' } });
  });

  it('readEvents throws TF_BAD_CELL for an empty name and TF_NON_FINITE for a missing time, naming the line', async () => {
    const p = file('time,name\n1,cue\n2,\n');
    await expect(readEvents(p)).rejects.toThrow(code('TF_BAD_CELL', { file: p, column: 'name', line: 3 }));
    const q = file('time,name\n1,cue\n,reward\n');
    await expect(readEvents(q)).rejects.toThrow(code('TF_NON_FINITE', { file: q, column: 'time', line: 3 }));
    await expect(readEvents(file('tim,name\n1,cue\n'))).rejects.toThrow(code('TF_MISSING_COLUMN', { suggestion: 'tim' }));
  });
});

describe('readSpikes', () => {
  it('readSpikes groups spikes by unit in order of first appearance, sorting and reporting out-of-order times', async () => {
    const r = await readSpikes(file('unit,time\n7,0.5\nu2,0.1\n7,0.25\n7,0.9\nu2,0.3\nu2,0.3\n'));
    expect(r.units.map((u) => u.name)).toEqual(['7', 'u2']);
    expect(Array.from(r.units[0]!.times)).toEqual([0.25, 0.5, 0.9]);
    expect(Array.from(r.units[1]!.times)).toEqual([0.1, 0.3, 0.3]);
    expect(r.warnings.map((w) => w.code)).toEqual(['IO_SPIKES_SORTED', 'IO_DUPLICATE_SPIKES']);
    expect(r.rows).toBe(6);
  });

  it('readSpikes maps columns, converts ms, and names the line of an empty unit label', async () => {
    const r = await readSpikes(file('cluster;t\nA;1000\nA;1001,5\n'), { unit: 'cluster', time: 't', timeUnit: 'ms', csv: { decimal: ',' } });
    expect(Array.from(r.units[0]!.times)).toEqual([1, 1.0015]);
    const p = file('unit,time\nA,1\n,2\n');
    await expect(readSpikes(p)).rejects.toThrow(code('TF_BAD_CELL', { file: p, column: 'unit', line: 3 }));
  });
});

describe('readTrials', () => {
  it('readTrials builds a TrialTable from labels or indices, with -1 for no choice and NaN for absent columns', async () => {
    const r = await readTrials(file('trial,cue_on,choice,reward,block,note\n1,0.5,left,1,0,ok\n2,10.5,,NaN,0,"late, slow"\n3,20.5,1,0,1,\n'), { columns: { cueTime: 'cue_on' } });
    expect(Array.from(r.trials.trial)).toEqual([1, 2, 3]);
    expect(Array.from(r.trials.cueTime)).toEqual([0.5, 10.5, 20.5]);
    expect(Array.from(r.trials.choice)).toEqual([0, -1, 1]);
    expect(Array.from(r.trials.reward)).toEqual([1, NaN, 0]);
    expect(Array.from(r.trials.choiceTime)).toEqual([NaN, NaN, NaN]);
    expect(r.trials.nOptions).toBe(2);
    expect(r.present).toEqual(['trial', 'cueTime', 'reward', 'choice']);
    expect(Array.from(r.extra.block!)).toEqual([0, 0, 1]);
    expect(r.extraStrings.note).toEqual(['ok', 'late, slow', '']);
  });

  it('readTrials orders rows by trial number with IO_TRIALS_SORTED and converts ms time columns', async () => {
    const r = await readTrials(file('trial,cueTime,outcomeTime\n2,2000,2500\n1,1000,1500\n'), { timeUnit: 'ms' });
    expect(Array.from(r.trials.trial)).toEqual([1, 2]);
    expect(Array.from(r.trials.outcomeTime)).toEqual([1.5, 2.5]);
    expect(r.warnings.map((w) => w.code)).toEqual(['IO_TRIALS_SORTED']);
  });

  it('readTrials throws TF_BAD_CELL naming the line for a repeated or non-integer trial or an unknown choice', async () => {
    const dup = file('trial,choice\n1,left\n2,right\n2,left\n');
    await expect(readTrials(dup)).rejects.toThrow(code('TF_BAD_CELL', { file: dup, column: 'trial', line: 4 }));
    await expect(readTrials(file('trial\n1\n1.5\n'))).rejects.toThrow(code('TF_BAD_CELL', { line: 3 }));
    await expect(readTrials(file('trial,choice\n1,up\n'))).rejects.toThrow(code('TF_BAD_CELL', { column: 'choice', line: 2, text: 'up' }));
    await expect(readTrials(file('trial,choice\n1,2\n'), { nOptions: 2 })).rejects.toThrow(code('TF_BAD_CELL', { column: 'choice' }));
    await expect(readTrials(file('trail,choice\n1,2\n'))).rejects.toThrow(code('TF_MISSING_COLUMN', { suggestion: 'trail' }));
    await expect(readTrials(file('trial\n1\n'), { columns: { cuetime: 'x' } as never })).rejects.toThrow(code('TF_UNKNOWN_OPTION', { suggestion: 'cueTime' }));
  });

  // Reference: the documented rule (ReadTrialsOptions.choiceLabels): a cell holding a label gets
  // that label's index. With labels ['1', '2'] (two ports named 1 and 2), cells 1, 2, 1 are the
  // labels '1', '2', '1', i.e. options [0, 1, 0], whether the file is text or Arrow integers.
  it('readTrials maps choices to numeric-looking choiceLabels the same way from CSV text and from Arrow integers', async () => {
    const expected = [0, 1, 0];
    const csv = await readTrials(file('trial,choice\n1,1\n2,2\n3,1\n'), { choiceLabels: ['1', '2'] });
    const arrow = await readTrials(file(encodeArrow({ trial: Int32Array.of(1, 2, 3), choice: Int32Array.of(1, 2, 1) }), 'arrow'), { choiceLabels: ['1', '2'] });
    expect(Array.from(csv.trials.choice)).toEqual(expected);
    expect(Array.from(arrow.trials.choice)).toEqual(expected);
    expect([csv.trials.nOptions, arrow.trials.nOptions]).toEqual([2, 2]);
  });

  it('readTrials throws TF_BAD_CELL for a number that is not one of numeric-looking choiceLabels (it cannot also be an index)', async () => {
    // With labels '1' and '2', a cell 0 or 3 could be an index or a third port's label.
    for (const cell of ['0', '3']) {
      const p = file(`trial,choice\n1,1\n2,${cell}\n`);
      await expect(readTrials(p, { choiceLabels: ['1', '2'] })).rejects.toThrow(code('TF_BAD_CELL', { file: p, column: 'choice', line: 3, text: cell }));
    }
    const a = file(encodeArrow({ trial: Int32Array.of(1, 2), choice: Int32Array.of(2, 3) }), 'arrow');
    await expect(readTrials(a, { choiceLabels: ['1', '2'] })).rejects.toThrow(code('TF_BAD_CELL', { file: a, column: 'choice', row: 1 }));
  });

  // Reference: ECMAScript Int32Array stores ToInt32(v) (ECMA-262 §7.1.6), so 10000000000 would
  // be stored as 1410065408; the largest Int32 is 2^31 − 1 = 2147483647.
  it('readTrials throws TF_BAD_CELL for a choice index too large for the Int32 choice column instead of wrapping it', async () => {
    const p = file('trial,choice\n1,0\n2,10000000000\n');
    await expect(readTrials(p)).rejects.toThrow(code('TF_BAD_CELL', { file: p, column: 'choice', line: 3 }));
    const a = file(encodeArrow({ trial: Int32Array.of(1, 2), choice: Float64Array.of(1, 1e10) }), 'arrow');
    await expect(readTrials(a)).rejects.toThrow(code('TF_BAD_CELL', { file: a, column: 'choice', row: 1 }));
  });
});

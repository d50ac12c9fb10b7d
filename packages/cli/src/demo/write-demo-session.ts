import { mkdir } from 'node:fs/promises';
import { checkBoolean, resolveOptions } from '@tuningfork/core';
import { join } from 'node:path';
import { MANIFEST_SCHEMA_VERSION, writeArrow, writeCsv, writeJson } from '@tuningfork/io';
import type { ColumnData } from '@tuningfork/io';
import type { SimulatedSession } from '@tuningfork/simulate';

/** Options of writeDemoSession. */
export interface WriteDemoSessionOptions {
  /** Also write every table as CSV (besides Arrow IPC). @defaultValue true */
  csv?: boolean;
  /** Write the ground truth (`truth.json`, `truth_traces.arrow`). @defaultValue true */
  truth?: boolean;
}

const DEFAULTS = Object.freeze({ csv: true, truth: true });

/** File name of the session manifest the demo writes. */
export const DEMO_MANIFEST = 'session.json';

/** Animal label the demo manifest gives its simulated rat. */
export const DEMO_ANIMAL = 'sim-rat';

function timeColumn(n: number, t0: number, rate: number): Float64Array {
  const t = new Float64Array(n);
  for (let i = 0; i < n; i++) t[i] = t0 + i / rate;
  return t;
}

/**
 * Write a simulated session into `dir` as tidy tables — each as `<name>.csv` and `<name>.arrow`:
 * `photometry` (time, `<site>_signal`, `<site>_control`), `accel` (time, accel in g), `events`
 * (time, name, value), `trials` (trial, cueTime, choiceTime, choice as 'left'/'right'/empty,
 * outcomeTime, reward) and `spikes` (unit, time) — plus `truth.json` (the ground truth except
 * the long traces), `truth_traces.arrow` (time, true ΔF/F per site, motion artefact) and a session
 * manifest `session.json` (io's schema, version 1) naming the Arrow files. Every file is written
 * atomically; the same simulation gives byte-identical files. `csv: false` leaves out the CSV
 * copies and `truth: false` the truth files (large batches for benchmarks).
 *
 * @throws {TuningforkError} TF_UNKNOWN_OPTION, TF_BAD_OPTION for bad options;
 *   TF_BAD_OUTPUT_PATH when a file cannot be written.
 * @returns The file names written, in writing order.
 */
export async function writeDemoSession(sim: SimulatedSession, dir: string, options: WriteDemoSessionOptions = {}): Promise<string[]> {
  const o = resolveOptions('writeDemoSession', DEFAULTS, options);
  const csv = checkBoolean('writeDemoSession', 'csv', o.csv);
  const truth = checkBoolean('writeDemoSession', 'truth', o.truth);
  await mkdir(dir, { recursive: true });
  const s = sim.session;
  const written: string[] = [];
  const both = async (name: string, data: ColumnData): Promise<void> => {
    if (csv) {
      await writeCsv(join(dir, `${name}.csv`), data);
      written.push(`${name}.csv`);
    }
    await writeArrow(join(dir, `${name}.arrow`), data);
    written.push(`${name}.arrow`);
  };

  if (s.photometry.length > 0) {
    const first = s.photometry[0]!.signal;
    const cols: Record<string, Float64Array> = { time: timeColumn(first.values.length, first.t0, first.sampleRate) };
    for (const site of s.photometry) {
      cols[`${site.name}_signal`] = site.signal.values;
      cols[`${site.name}_control`] = site.control.values;
    }
    await both('photometry', cols);
  }
  const accel = s.continuous.accel;
  if (accel !== undefined) await both('accel', { time: timeColumn(accel.values.length, accel.t0, accel.sampleRate), accel: accel.values });
  await both('events', { time: s.events.time, name: s.events.name, value: s.events.value });
  if (s.trials !== undefined) {
    const t = s.trials;
    const labels = ['left', 'right'];
    await both('trials', {
      trial: t.trial,
      cueTime: t.cueTime,
      choiceTime: t.choiceTime,
      choice: Array.from(t.choice, (c) => labels[c] ?? ''),
      outcomeTime: t.outcomeTime,
      reward: t.reward,
    });
  }
  if (s.units.length > 0) {
    const total = s.units.reduce((a, u) => a + u.times.length, 0);
    const unit = new Array<string>(total);
    const time = new Float64Array(total);
    let at = 0;
    for (const u of s.units) {
      unit.fill(u.name, at, at + u.times.length);
      time.set(u.times, at);
      at += u.times.length;
    }
    await both('spikes', { unit, time });
  }

  const tr = sim.truth;
  if (truth) await writeJson(join(dir, 'truth.json'), {
    description: 'Ground truth of the simulated session (tuningfork simulateSession). Times in seconds on the session clock.',
    session: s.id,
    simulateOptions: sim.options,
    cells: tr.cells,
    agent: tr.agent,
    clock: tr.clock,
    bleaching: tr.bleaching,
    kernels: tr.kernels,
    trials: { rpe: tr.rpe, ape: tr.ape, qChosen: tr.qChosen, cChosen: tr.cChosen, pChoice: tr.pChoice, pReward: tr.pReward },
    blockStarts: tr.blockStarts,
    movement: { onsets: tr.movementOnsets, vigour: tr.movementVigour, atChoice: tr.movementAtChoice },
    bonusTimes: tr.bonusTimes,
    traces: 'truth_traces.arrow: time, <site>_dff (true ΔF/F, fraction), artefact (shared fractional motion artefact)',
  });
  if (truth) written.push('truth.json');
  if (truth && s.photometry.length > 0) {
    const first = s.photometry[0]!.signal;
    const cols: Record<string, Float64Array> = { time: timeColumn(first.values.length, first.t0, first.sampleRate) };
    s.photometry.forEach((site, i) => { cols[`${site.name}_dff`] = tr.dff[i]!; });
    cols.artefact = tr.artefact;
    await writeArrow(join(dir, 'truth_traces.arrow'), cols);
    written.push('truth_traces.arrow');
  }

  const files: unknown[] = [];
  if (s.photometry.length > 0) {
    files.push({ kind: 'photometry', path: 'photometry.arrow', sites: s.photometry.map((p) => ({ name: p.name, signal: `${p.name}_signal`, control: `${p.name}_control` })) });
  }
  if (accel !== undefined) files.push({ kind: 'continuous', path: 'accel.arrow', channels: [{ name: 'accel', column: 'accel' }] });
  files.push({ kind: 'events', path: 'events.arrow' });
  if (s.trials !== undefined) files.push({ kind: 'trials', path: 'trials.arrow', choiceLabels: ['left', 'right'] });
  if (s.units.length > 0) files.push({ kind: 'spikes', path: 'spikes.arrow' });
  await writeJson(join(dir, DEMO_MANIFEST), {
    schemaVersion: MANIFEST_SCHEMA_VERSION,
    session: s.id,
    animal: DEMO_ANIMAL,
    seed: sim.options.seed,
    notes: 'Simulated by `tuningfork demo`; the same tables are also written as CSV next to the Arrow files.',
    options: {},
    files,
  });
  written.push(DEMO_MANIFEST);
  return written;
}

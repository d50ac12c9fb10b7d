import { mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { resolveOptions } from '@tuningfork/core';
import type { SimulatedSession } from './types.js';

export interface PeerLayoutOptions {
  /** Write the truth movement onsets as `move_onset` events (value = vigour, g). @defaultValue true */
  moveOnsets?: boolean;
}

const DEFAULTS = Object.freeze({ moveOnsets: true });

function writeAtomic(path: string, data: string | Uint8Array): void {
  const tmp = `${path}.tmp-${process.pid}`;
  try {
    writeFileSync(tmp, data);
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw e;
  }
}

/**
 * Write a simulated session in the plain generic layout read by the numpy/scipy yardstick
 * script: `session.json`, per site `photometry_<site>.json` + a planar little-endian float64 file
 * (N times, N sensor values, N control values), and `events.csv` (`time,name,value` with cue,
 * choice_left, choice_right, reward, omission, bonus and move_onset; times on the photometry
 * clock). Each file is written to a temporary name and renamed, so none is ever half-written.
 *
 * @returns The list of files written (relative names).
 */
export function writePeerLayout(sim: SimulatedSession, dir: string, options: PeerLayoutOptions = {}): string[] {
  const opts = resolveOptions('writePeerLayout', DEFAULTS, options);
  mkdirSync(dir, { recursive: true });
  const written: string[] = [];
  const sites = sim.session.photometry.map((s) => s.name);
  writeAtomic(join(dir, 'session.json'), JSON.stringify({ id: sim.session.id, sites, duration_s: sim.session.end - sim.session.start }, null, 2) + '\n');
  written.push('session.json');
  for (const site of sim.session.photometry) {
    const n = site.signal.values.length;
    const buf = new Float64Array(3 * n);
    for (let i = 0; i < n; i++) buf[i] = site.signal.t0 + i / site.signal.sampleRate;
    buf.set(site.signal.values, n);
    buf.set(site.control.values, 2 * n);
    const f64 = `photometry_${site.name}.f64`;
    writeAtomic(join(dir, f64), new Uint8Array(buf.buffer));
    writeAtomic(join(dir, `photometry_${site.name}.json`), JSON.stringify({
      file: f64, n_samples: n, fs: site.signal.sampleRate, t0: site.signal.t0,
      columns: ['time', 'signal', 'control'], layout: 'planar',
    }, null, 2) + '\n');
    written.push(f64, `photometry_${site.name}.json`);
  }
  const rows: [number, string, number][] = [];
  const ev = sim.session.events;
  for (let i = 0; i < ev.time.length; i++) {
    const name = ev.name[i]!;
    if (name === 'lick') continue;
    rows.push([ev.time[i]!, name, ev.value[i]!]);
  }
  if (opts.moveOnsets) {
    const on = sim.truth.movementOnsets;
    for (let i = 0; i < on.length; i++) rows.push([on[i]!, 'move_onset', sim.truth.movementVigour[i]!]);
  }
  rows.sort((a, b) => a[0] - b[0]);
  const csv = ['time,name,value', ...rows.map(([t, n, v]) => `${t},${n},${v}`)].join('\n') + '\n';
  writeAtomic(join(dir, 'events.csv'), csv);
  written.push('events.csv');
  return written;
}

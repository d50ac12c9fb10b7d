import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeArrow, writeCsv } from '@tuningfork/io';
import { simulateSession, writePeerLayout } from '@tuningfork/simulate';
import type { BenchCase, BenchRow } from '../harness.js';

const here = dirname(fileURLToPath(import.meta.url));
const repo = join(here, '..', '..');
const PEER = join(repo, '..', 'shared', 'peer', 'pipeline.py');

/** tuningfork step(s) ↔ peer step(s), as the peer's README names them. */
const MAP: [string, string[], string[]][] = [
  ['load', ['load'], ['load']],
  ['learning model', ['learning'], ['learning_model_fit']],
  ['low-pass + IRLS ΔF/F + z', ['condition'], ['1_lowpass', '2_huber_dff_z']],
  ['peri-event matrices', ['peri_event'], ['3_peri_event']],
  ['bootstrap bands', ['bootstrap'], ['4_bootstrap_ci']],
  ['encoding, unique ΔR², shift null, classes', ['encode'], ['5_encoding_full', '6_unique_dr2', '7_shift_null_classify']],
];

/**
 * The same simulated 60-minute, 1 kHz, 4-site session analysed by tuningfork (from a manifest of
 * Arrow/CSV files, in a child process) and by the numpy/scipy yardstick (from its planar layout),
 * in one run. Both compute peri-event windows of reward and move_onset (−2 to +5 s) with B = 2000
 * percentile bands; ours resample the 10 Hz-low-passed trace to 50 Hz (Nyquist 25 Hz, our
 * default) where the peer keeps 1 kHz (the native-rate bootstrap alone is compared in the stats
 * bench). Our encoding step runs 1000 circular shifts (the peer runs 200) and our conditioning
 * also fits bleaching. QC and the HTML report (no peer counterpart) are off; per-site intermediates
 * are kept as a batch run keeps them (intermediates: 'outputs'). Prints per-step and
 * total ratios (tuningfork / peer) and both peak memories.
 */
async function sideBySide(): Promise<BenchRow[]> {
  if (!existsSync(PEER)) return [{ operation: 'pipeline vs peer', size: '', medianSec: NaN, note: `skipped: ${PEER} not found` }];
  const dir = mkdtempSync(join(tmpdir(), 'tuningfork-peer-'));
  try {
    const sim = simulateSession({ durationSec: 3600, photometryRate: 1000, nSites: 4, nUnits: 0, seed: 1 });
    writePeerLayout(sim, join(dir, 'peer'));
    const s = sim.session;
    const n = s.photometry[0]!.signal.values.length;
    const cols: Record<string, Float64Array> = { time: Float64Array.from({ length: n }, (_, i) => i / 1000) };
    for (const p of s.photometry) { cols[`${p.name}_signal`] = p.signal.values; cols[`${p.name}_control`] = p.control.values; }
    await writeArrow(join(dir, 'photometry.arrow'), cols);
    const acc = s.continuous.accel!;
    await writeArrow(join(dir, 'accel.arrow'), { time: Float64Array.from(acc.values, (_, i) => i / acc.sampleRate), accel: acc.values });
    await writeCsv(join(dir, 'events.csv'), { time: s.events.time, name: s.events.name, value: s.events.value });
    writeFileSync(join(dir, 'session.json'), JSON.stringify({
      schemaVersion: 1, session: s.id,
      files: [
        { kind: 'photometry', path: 'photometry.arrow', sites: s.photometry.map((p) => ({ name: p.name, signal: `${p.name}_signal`, control: `${p.name}_control` })) },
        { kind: 'continuous', path: 'accel.arrow', channels: [{ name: 'accel', column: 'accel' }] },
        { kind: 'events', path: 'events.csv' },
      ],
    }));
    const options = {
      seed: 0, qc: false, report: false, intermediates: 'outputs',
      periEvent: { responses: { reward: { reward: ['reward'] }, movement: { onset: ['move_onset'] } }, unitEvents: [], resamples: 2000, baselineSec: null },
    };
    const ours = spawnSync(process.execPath, ['--max-old-space-size=16000', '--import', 'tsx', join(here, '..', 'pipeline-child.ts'), join(dir, 'session.json'), JSON.stringify(options)], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (ours.status !== 0) throw new Error(`tuningfork run failed:\n${ours.stderr}`);
    const peer = spawnSync('python3', [PEER, join(dir, 'peer'), '--results', join(dir, 'peer.json')], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (peer.status !== 0) throw new Error(`peer run failed:\n${peer.stderr}`);
    const o = JSON.parse(ours.stdout.trim().split('\n').pop()!) as { steps: Record<string, number>; total: number; peakMB: number };
    const p = JSON.parse(peer.stdout.slice(peer.stdout.indexOf('{'))) as { steps_s: Record<string, number>; total_s: number; peak_rss_mb: number };
    const rows: BenchRow[] = MAP.map(([label, ourSteps, peerSteps]) => {
      const a = ourSteps.reduce((x, k) => x + (o.steps[k] ?? 0), 0);
      const b = peerSteps.reduce((x, k) => x + (p.steps_s[k] ?? 0), 0);
      return { operation: `pipeline vs peer: ${label}`, size: '60 min × 1 kHz × 4 sites', medianSec: a, note: `peer ${b.toFixed(3)} s, ratio ${(a / b).toFixed(3)}` };
    });
    rows.push({ operation: 'pipeline vs peer: total', size: '60 min × 1 kHz × 4 sites', medianSec: o.total, peakMB: o.peakMB, note: `peer ${p.total_s.toFixed(2)} s (peak ${p.peak_rss_mb.toFixed(0)} MB), ratio ${(o.total / p.total_s).toFixed(3)} (target ≤ 0.2)` });
    return rows;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export const cases: BenchCase[] = [
  { name: 'pipeline vs peer (60-min session, side by side)', size: '60 min × 1 kHz × 4 sites', custom: sideBySide },
];

// Benchmarks of @tuningfork/signal (issue 3). Targets: complete conditioning (low-pass, IRLS fit,
// ΔF/F, z-score) of all 4 sites of a 60-minute 1 kHz session ≤ 1.5 s; time growing linearly with
// duration (15, 30, 60, 120 min); ratio to the numpy/scipy yardstick's steps `1_lowpass` and
// `2_huber_dff_z` ≤ 0.2× (the peer runs its whole pipeline, ~80 s; only those two steps are compared).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { PhotometrySite } from '@tuningfork/core';
import { butterworth, conditionSite, deltaFOverF, filterSignal, fitControl, zScore } from '@tuningfork/signal';
import { simulateSession, writePeerLayout } from '@tuningfork/simulate';
import type { BenchCase, BenchRow } from '../harness.js';

type Sim = ReturnType<typeof simulateSession>;
const SIZE = '60 min × 1 kHz × 4 sites';

/** The simulated session (units off: they do not enter these steps). */
function session(durationSec: number): Sim {
  return simulateSession({ durationSec, photometryRate: 1000, nSites: 4, nUnits: 0, seed: 1 });
}

/** Sites truncated to the first `sec` seconds (views, no copy). */
function prefix(sites: readonly PhotometrySite[], sec: number): PhotometrySite[] {
  return sites.map((s) => {
    const n = Math.round(sec * s.signal.sampleRate);
    return { name: s.name, signal: { ...s.signal, values: s.signal.values.subarray(0, n) }, control: { ...s.control, values: s.control.values.subarray(0, n) } };
  });
}

/** The conditioning steps of the target: low-pass, robust IRLS fit, ΔF/F, z-score (no bleaching fit). */
function conditionAll(sites: readonly PhotometrySite[]): number {
  let sink = 0;
  for (const s of sites) sink += conditionSite(s, { detrend: 'none' }).z.scale;
  return sink;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
}

function timeIt(reps: number, f: () => unknown): number {
  const t: number[] = [];
  for (let i = 0; i < reps; i++) {
    const a = process.hrtime.bigint();
    f();
    t.push(Number(process.hrtime.bigint() - a) / 1e9);
  }
  return median(t);
}

/** ../shared/peer/pipeline.py relative to the repository root. */
const peerScript = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..', '..', 'shared', 'peer', 'pipeline.py');

export const cases: BenchCase[] = [
  {
    name: 'signal: condition 4 sites (low-pass, IRLS, ΔF/F, z-score)',
    size: SIZE,
    reps: 3,
    targetSec: 1.5,
    setup: () => session(3600).session.photometry,
    run: (sites: PhotometrySite[]) => conditionAll(sites),
  },
  {
    name: 'signal: condition 4 sites, default chain (+ double-exponential bleaching fits)',
    size: SIZE,
    reps: 3,
    setup: () => session(3600).session.photometry,
    run: (sites: PhotometrySite[]) => {
      let sink = 0;
      for (const s of sites) sink += conditionSite(s).z.scale;
      return sink;
    },
  },
  {
    name: 'signal: conditioning time vs duration',
    size: '15/30/60/120 min × 1 kHz × 4 sites',
    custom: () => {
      const sites = session(7200).session.photometry;
      conditionAll(prefix(sites, 60)); // warm-up
      const rows: BenchRow[] = [];
      const per: number[] = [];
      for (const min of [15, 30, 60, 120]) {
        const sub = prefix(sites, min * 60);
        const sec = timeIt(3, () => conditionAll(sub));
        per.push(sec / min);
        rows.push({ operation: `signal: condition 4 sites, ${min} min`, size: `${min} min × 1 kHz × 4 sites`, medianSec: sec, note: `${((sec / min) * 1000).toFixed(1)} ms per minute` });
      }
      const ratio = per[3]! / per[0]!;
      const verdict = ratio >= 0.7 && ratio <= 1.4 ? 'PASS' : 'FAIL';
      rows[3]!.note += `; time per minute at 120 vs 15 min = ${ratio.toFixed(2)} (${verdict}: linear if within 0.7–1.4)`;
      return rows;
    },
  },
  {
    name: 'signal: ratio to numpy/scipy peer (1_lowpass, 2_huber_dff_z)',
    size: SIZE,
    custom: () => {
      if (!existsSync(peerScript)) {
        return [{ operation: 'signal: ratio to peer', size: SIZE, medianSec: NaN, note: 'SKIPPED: ../shared/peer/pipeline.py not found' }];
      }
      const sim = session(3600);
      const sites = sim.session.photometry;
      const dir = mkdtempSync(join(tmpdir(), 'tf-signal-peer-'));
      try {
        writePeerLayout(sim, dir);
        // The peer runs its whole pipeline (~80 s); we read only the two comparable steps.
        const p = spawnSync('python3', [peerScript, dir, '--results', join(dir, 'details.json')], { encoding: 'utf8', maxBuffer: 1 << 26 });
        if (p.status !== 0) return [{ operation: 'signal: ratio to peer', size: SIZE, medianSec: NaN, note: `peer failed: ${p.stderr.slice(-300)}` }];
        // pipeline.py prints its timing report (steps_s) on stdout and repeats it under `timing`
        // in the --results file.
        const details = JSON.parse(readFileSync(join(dir, 'details.json'), 'utf8')) as { timing?: { steps_s?: Record<string, number> } };
        const steps = details.timing?.steps_s ?? (JSON.parse(p.stdout) as { steps_s: Record<string, number> }).steps_s;
        const peerLow = steps['1_lowpass']!;
        const peerFit = steps['2_huber_dff_z']!;
        // Ours, the same work: 4th-order 10 Hz zero-phase Butterworth of 8 channels; then a
        // full-rate Huber IRLS fit (k = 1.345, MAD scale), ΔF/F and session z-score per site.
        const lp = butterworth({ order: 4, cutoffHz: 10, sampleRate: 1000 });
        let filtered: PhotometrySite[] = [];
        const low = timeIt(3, () => {
          filtered = sites.map((s) => ({ name: s.name, signal: filterSignal(s.signal, lp).signal, control: filterSignal(s.control, lp).signal }));
        });
        const fit = timeIt(3, () => {
          for (const s of filtered) {
            const f = fitControl(s.signal.values, s.control.values, { method: 'huber' });
            const d = deltaFOverF(s.signal.values, { intercept: f.intercept, slope: f.slope, control: s.control.values });
            zScore({ values: d.values, sampleRate: s.signal.sampleRate, t0: s.signal.t0 });
          }
        });
        const chain = timeIt(3, () => conditionAll(sites));
        const verdict = (r: number): string => `${r <= 0.2 ? 'PASS' : 'FAIL'} (target ≤ 0.2×)`;
        return [
          { operation: 'signal vs peer: 1_lowpass', size: SIZE, medianSec: low, note: `peer ${peerLow.toFixed(3)} s; ratio ${(low / peerLow).toFixed(3)} ${verdict(low / peerLow)}` },
          { operation: 'signal vs peer: 2_huber_dff_z (full-rate Huber)', size: SIZE, medianSec: fit, note: `peer ${peerFit.toFixed(3)} s; ratio ${(fit / peerFit).toFixed(3)} ${verdict(fit / peerFit)}` },
          { operation: 'signal vs peer: both steps, conditionSite chain', size: SIZE, medianSec: chain, note: `peer ${(peerLow + peerFit).toFixed(3)} s; ratio ${(chain / (peerLow + peerFit)).toFixed(3)} ${verdict(chain / (peerLow + peerFit))} (bisquare on 2 Hz fit copies)` },
        ];
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
  },
];

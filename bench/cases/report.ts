// Benchmark of @tuningfork/report: the full session report for a 60-minute, 4-site, 40-unit
// session with inputs of realistic sizes (synthetic, made here with the core RNG; the values only
// need realistic shapes and sizes). Targets (issue 8): renders in ≤ 2 s and is ≤ 10 MB.
import { makeProvenance, rng, type Rng } from '@tuningfork/core';
import { sessionReport, type SessionReportInput } from '@tuningfork/report';
import type { BenchCase, BenchRow } from '../harness.js';

const RATE = 1000; // Hz
const SECONDS = 3600;
const N = SECONDS * RATE; // 3.6e6 samples per trace
const SITES = 4;
const UNITS = 40;
const TRIALS = 350;
const COLS = 7001; // −2 … +5 s at 1 kHz
const EVENTS = ['cue', 'choice', 'outcome'];
const CLASSES = ['reward', 'movement', 'mixed', 'action-prediction', 'none'];

function trace(g: Rng, base: number, bleach: number, noise: number): Float64Array {
  const v = new Float64Array(N);
  let ar = 0;
  for (let i = 0; i < N; i++) {
    ar = 0.999 * ar + 0.002 * (g.uniform() - 0.5);
    v[i] = base * (1 + bleach * Math.exp(-i / (900 * RATE))) + ar + noise * (g.uniform() - 0.5);
  }
  return v;
}

function makeInput(): SessionReportInput {
  const g = rng(2024);
  const times = Float64Array.from({ length: COLS }, (_, c) => -2 + c / RATE);
  const rpe = Float64Array.from({ length: TRIALS }, () => 2 * g.uniform() - 1);
  const freqs = Float64Array.from({ length: 2048 }, (_, k) => ((k + 1) * RATE) / 4096);
  const qc = [];
  const responses = [];
  const heatmaps = [];
  for (let s = 0; s < SITES; s++) {
    const raw = trace(g, 2, 0.2, 0.02);
    const ctl = trace(g, 2, 0.2, 0.005);
    const dff = Float64Array.from(raw, (v, i) => (100 * (v - ctl[i]!)) / ctl[i]!);
    const site = `site${s + 1}`;
    qc.push({
      site, raw: { values: raw, sampleRate: RATE, t0: 0 }, fittedControl: { values: ctl, sampleRate: RATE, t0: 0 }, dff: { values: dff, sampleRate: RATE, t0: 0 },
      rawUnit: 'V', dffUnit: '%', spectrum: { frequencies: freqs, power: Float64Array.from(freqs, (f) => 1 / (1 + f) + 0.01 * g.uniform()), unit: '%²/Hz' },
      metrics: { 'fit slope': 0.9, 'SNR (dB)': 12, 'bleaching (%)': 20 },
    });
    for (const ev of EVENTS) {
      const cond = (label: string, gain: number) => {
        const mean = Float64Array.from(times, (t) => (t > 0 ? gain * Math.exp(-t) * Math.sin(4 * t) : 0) + 0.05 * (g.uniform() - 0.5));
        return { label, times, mean, low: Float64Array.from(mean, (m) => m - 0.3), high: Float64Array.from(mean, (m) => m + 0.3), n: TRIALS / 2, runs: [{ onset: 0.1, offset: 0.8, sign: 1 }] };
      };
      responses.push({ cell: site, event: ev, unit: '%', level: 0.95, conditions: [cond('rewarded', 2), cond('omitted', -1)] });
      const data = new Float64Array(TRIALS * COLS);
      for (let r = 0; r < TRIALS; r++) for (let c = 0; c < COLS; c++) data[r * COLS + c] = (times[c]! > 0 ? 3 * rpe[r]! * Math.exp(-times[c]!) : 0) + (g.uniform() - 0.5);
      heatmaps.push({ cell: site, event: ev, matrix: { data, rows: TRIALS, cols: COLS }, times, sortBy: { label: 'RPE', values: rpe }, unit: '%' });
    }
  }
  const rasters = [];
  for (let u = 0; u < UNITS; u++) {
    const trials = Array.from({ length: TRIALS }, () => {
      const n = Math.floor(50 + 40 * g.uniform()); // ~10 Hz over 7 s
      return Float64Array.from({ length: n }, () => -2 + 7 * g.uniform()).sort();
    });
    const pt = Float64Array.from({ length: 140 }, (_, k) => -2 + (k + 0.5) * 0.05);
    const rate = Float64Array.from(pt, (t) => 10 + (t > 0 ? 8 * Math.exp(-3 * t) : 0) + g.uniform());
    rasters.push({ unit: `unit${String(u + 1).padStart(3, '0')}`, event: 'outcome', window: [-2, 5] as const, trials, peth: { times: pt, rate, low: Float64Array.from(rate, (r) => r - 1.5), high: Float64Array.from(rate, (r) => r + 1.5) }, sortBy: { label: 'RPE', values: rpe } });
  }
  const lags = Float64Array.from({ length: 401 }, (_, i) => -1 + i / 100);
  const names = [...Array.from({ length: SITES }, (_, s) => `site${s + 1}`), ...rasters.map((r) => r.unit)];
  const kern = (label: string, a: number) => {
    const est = Float64Array.from(lags, (t) => a * Math.exp(-((t - 0.4) ** 2) / 0.1) + 0.05 * (g.uniform() - 0.5));
    return { label, lags, estimate: est, low: Float64Array.from(est, (v) => v - 0.1), high: Float64Array.from(est, (v) => v + 0.1) };
  };
  const kernels = names.map((cell) => ({ cell, groups: [{ group: 'reward', kernels: [kern('outcome × RPE', 1), kern('bonus', 0.7)] }, { group: 'movement', kernels: [kern('onset × vigour', 0.4)] }, { group: 'action', kernels: [kern('choice × APE', 0.2)] }] }));
  const cells = names.map((cell, i) => ({ cell, kind: i < SITES ? 'site' : 'unit', class: CLASSES[i % 5]!, sign: i % 3 ? 1 : -1, rewardUnique: 0.1 * g.uniform(), movementUnique: 0.1 * g.uniform() }));
  const counts = CLASSES.map((c) => ({ class: c, count: cells.filter((x) => x.class === c).length }));
  return {
    session: 'bench-60min', files: ['bench/photometry.arrow', 'bench/spikes.arrow'], qc, responses, heatmaps, rasters, kernels, tuning: { cells, counts },
    provenance: makeProvenance('bench report', { seed: 2024, sites: SITES, units: UNITS }, 2024),
  };
}

export const cases: BenchCase[] = [
  {
    name: 'report: full session report (60 min, 4 sites, 40 units)',
    size: '4 × 3 × 3.6e6-sample traces, 12 × 350 × 7001 heatmaps, 40 rasters × 350 trials, 44 kernel sets',
    custom: async (): Promise<BenchRow[]> => {
      const input = makeInput();
      const times: number[] = [];
      let bytes = 0;
      for (let rep = 0; rep < 4; rep++) {
        const t = process.hrtime.bigint();
        const html = sessionReport(input);
        const sec = Number(process.hrtime.bigint() - t) / 1e9;
        if (rep > 0) times.push(sec); // first run warms up the JIT
        bytes = Buffer.byteLength(html, 'utf8');
      }
      times.sort((a, b) => a - b);
      const med = times[1]!;
      const mb = bytes / 1e6;
      const verdict = `${med <= 2 ? 'PASS' : 'FAIL'} (≤ 2 s); size ${mb.toFixed(2)} MB ${mb <= 10 ? 'PASS' : 'FAIL'} (≤ 10 MB)`;
      return [{ operation: 'report: full session report (60 min, 4 sites, 40 units)', size: '60 min × 1 kHz × 4 sites, 40 units, 350 trials', medianSec: med, note: verdict }];
    },
  },
];

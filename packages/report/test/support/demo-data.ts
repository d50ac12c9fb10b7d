/**
 * Demo-like report inputs built from the ground-truth simulator. The analysis steps here (OLS
 * control fit, periodogram, trial averages with normal-approximation intervals) are simple
 * stand-ins for the real stages, written only to give the report realistic-looking data.
 */
import { hashInput, makeProvenance, rng, type UniformSignal } from '@tuningfork/core';
import { simulateSession } from '@tuningfork/simulate';
import type {
  ClassCount, KernelInput, QcInput, RasterInput, ResponseInput, SessionReportInput, TrialHeatmapInput, TuningCell,
} from '../../src/index.js';

export const XSS_CHANNEL = '<img src=x onerror=alert(1)>';
export const XSS_EVENT = 'outcome "&\' <b>bold</b>';

/** Radix-2 in-place FFT (real and imaginary arrays), length a power of two. */
function fft(re: Float64Array, im: Float64Array): void {
  const n = re.length;
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    if (i < j) {
      [re[i], re[j]] = [re[j]!, re[i]!];
      [im[i], im[j]] = [im[j]!, im[i]!];
    }
  }
  for (let len = 2; len <= n; len <<= 1) {
    const ang = (-2 * Math.PI) / len;
    for (let i = 0; i < n; i += len) {
      for (let k = 0; k < len / 2; k++) {
        const wr = Math.cos(ang * k), wi = Math.sin(ang * k);
        const a = i + k, b = i + k + len / 2;
        const xr = re[b]! * wr - im[b]! * wi;
        const xi = re[b]! * wi + im[b]! * wr;
        re[b] = re[a]! - xr; im[b] = im[a]! - xi;
        re[a] = re[a]! + xr; im[a] = im[a]! + xi;
      }
    }
  }
}

/** Averaged Hann-window periodogram (one-sided, unit²/Hz). */
function spectrum(x: Float64Array, rate: number, seg = 4096): { frequencies: Float64Array; power: Float64Array } {
  const nSeg = Math.max(1, Math.floor(x.length / seg));
  const p = new Float64Array(seg / 2 + 1);
  const w = Float64Array.from({ length: seg }, (_, i) => 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / seg));
  let u = 0;
  for (const v of w) u += v * v;
  for (let s = 0; s < nSeg; s++) {
    const re = new Float64Array(seg);
    const im = new Float64Array(seg);
    let mean = 0;
    for (let i = 0; i < seg; i++) mean += x[s * seg + i]! / seg;
    for (let i = 0; i < seg; i++) re[i] = (x[s * seg + i]! - mean) * w[i]!;
    fft(re, im);
    for (let k = 0; k <= seg / 2; k++) p[k]! += ((re[k]! ** 2 + im[k]! ** 2) / (rate * u)) * (k === 0 || k === seg / 2 ? 1 : 2) / nSeg;
  }
  const f = Float64Array.from({ length: seg / 2 }, (_, k) => ((k + 1) * rate) / seg);
  return { frequencies: f, power: p.slice(1) };
}

function olsFit(y: Float64Array, x: Float64Array): Float64Array {
  let mx = 0, my = 0;
  for (let i = 0; i < x.length; i++) { mx += x[i]!; my += y[i]!; }
  mx /= x.length; my /= x.length;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < x.length; i++) { sxy += (x[i]! - mx) * (y[i]! - my); sxx += (x[i]! - mx) ** 2; }
  const b = sxy / sxx;
  return Float64Array.from(x, (v) => my + b * (v - mx));
}

/** Trials × time matrix of `x` around events, sampled every `step` samples over [pre, post] s. */
function periMatrix(s: UniformSignal, events: Float64Array, pre: number, post: number, outRate: number) {
  const cols = Math.round((post - pre) * outRate) + 1;
  const times = Float64Array.from({ length: cols }, (_, c) => pre + c / outRate);
  const data = new Float64Array(events.length * cols);
  for (let r = 0; r < events.length; r++) {
    for (let c = 0; c < cols; c++) {
      const i = Math.round((events[r]! + times[c]! - s.t0) * s.sampleRate);
      data[r * cols + c] = i >= 0 && i < s.values.length ? s.values[i]! : NaN;
    }
  }
  return { data, rows: events.length, cols, times };
}

function meanBand(data: Float64Array, rows: readonly number[], cols: number) {
  const mean = new Float64Array(cols), low = new Float64Array(cols), high = new Float64Array(cols);
  for (let c = 0; c < cols; c++) {
    let s = 0, ss = 0, n = 0;
    for (const r of rows) { const v = data[r * cols + c]!; if (v === v) { s += v; ss += v * v; n++; } }
    const m = s / n;
    const se = Math.sqrt(Math.max(0, ss / n - m * m) / Math.max(1, n - 1));
    mean[c] = m; low[c] = m - 1.96 * se; high[c] = m + 1.96 * se;
  }
  return { mean, low, high };
}

function runsOf(times: Float64Array, low: Float64Array, high: Float64Array, minLen = 5) {
  const runs: { onset: number; offset: number; sign: number }[] = [];
  let start = -1, sign = 0;
  for (let i = 0; i <= times.length; i++) {
    const s = i < times.length ? (low[i]! > 0 ? 1 : high[i]! < 0 ? -1 : 0) : 0;
    if (s !== sign) {
      if (sign !== 0 && i - start >= minLen) runs.push({ onset: times[start]!, offset: times[i - 1]!, sign });
      start = i; sign = s;
    }
  }
  return runs;
}

/** A report input from a simulated session (300 s, 4 sites, 6 units by default). */
export function demoReportInput(opts: { durationSec?: number; nUnits?: number; seed?: number } = {}): SessionReportInput {
  const seed = opts.seed ?? 7;
  const sim = simulateSession({ durationSec: opts.durationSec ?? 300, nSites: 4, nUnits: opts.nUnits ?? 6, seed, photometryRate: 200 });
  const s = sim.session;
  const trials = s.trials!;
  const ok: number[] = [];
  for (let k = 0; k < trials.outcomeTime.length; k++) if (Number.isFinite(trials.outcomeTime[k]!) && trials.outcomeTime[k]! > 2 && trials.outcomeTime[k]! < s.end - 4) ok.push(k);
  const outcome = Float64Array.from(ok, (k) => trials.outcomeTime[k]!);
  const rpe = Float64Array.from(ok, (k) => sim.truth.rpe[k]!);
  const rewarded = ok.map((k, r) => (trials.reward[k] === 1 ? r : -1)).filter((r) => r >= 0);
  const omitted = ok.map((k, r) => (trials.reward[k] === 0 ? r : -1)).filter((r) => r >= 0);

  const qc: QcInput[] = [];
  const responses: ResponseInput[] = [];
  const heatmaps: TrialHeatmapInput[] = [];
  s.photometry.forEach((site, i) => {
    const name = i === 0 ? XSS_CHANNEL : site.name;
    const fit = olsFit(site.signal.values, site.control.values);
    const dffV = Float64Array.from(site.signal.values, (v, j) => (100 * (v - fit[j]!)) / fit[j]!);
    const dff: UniformSignal = { values: dffV, sampleRate: site.signal.sampleRate, t0: site.signal.t0 };
    const sp = spectrum(dffV, dff.sampleRate, 1024);
    qc.push({
      site: name, raw: site.signal, fittedControl: { ...site.control, values: fit }, dff, rawUnit: 'V', dffUnit: '%',
      spectrum: { ...sp, unit: '%²/Hz' },
      metrics: { 'fit slope': 0.9 + 0.05 * i, 'SNR (dB)': 12.5 - i, 'bleaching (%)': 18 + 3 * i },
    });
    const m = periMatrix(dff, outcome, -1, 3, 50);
    const a = meanBand(m.data, rewarded, m.cols);
    const b = meanBand(m.data, omitted, m.cols);
    responses.push({
      cell: name, event: i === 1 ? XSS_EVENT : 'outcome', unit: '%', level: 0.95,
      conditions: [
        { label: 'rewarded', times: m.times, ...a, n: rewarded.length, runs: runsOf(m.times, a.low, a.high) },
        { label: 'omitted', times: m.times, ...b, n: omitted.length, runs: runsOf(m.times, b.low, b.high) },
      ],
    });
    heatmaps.push({ cell: name, event: 'outcome', matrix: { data: m.data, rows: m.rows, cols: m.cols }, times: m.times, sortBy: { label: 'RPE', values: rpe }, unit: '%' });
  });

  const rasters: RasterInput[] = s.units.map((u) => {
    const perTrial = Array.from(outcome, (t) => {
      const lo = t - 1, hi = t + 3;
      const sel: number[] = [];
      for (const x of u.times) if (x >= lo && x <= hi) sel.push(x - t);
      return Float64Array.from(sel);
    });
    const binW = 0.05;
    const nb = Math.round(4 / binW);
    const times = Float64Array.from({ length: nb }, (_, k) => -1 + (k + 0.5) * binW);
    const rate = new Float64Array(nb);
    for (const tr of perTrial) for (const x of tr) rate[Math.min(nb - 1, Math.floor((x + 1) / binW))]! += 1 / (binW * perTrial.length);
    const sd = Float64Array.from(rate, (r) => 1.96 * Math.sqrt(r / (binW * perTrial.length)));
    return { unit: u.name, event: 'outcome', window: [-1, 3] as const, trials: perTrial, peth: { times, rate, low: Float64Array.from(rate, (r, k) => r - sd[k]!), high: Float64Array.from(rate, (r, k) => r + sd[k]!) }, sortBy: { label: 'RPE', values: rpe } };
  });

  const g = rng(seed).stream(99);
  const kl = sim.truth.kernels;
  const kernels: KernelInput[] = sim.truth.cells.map((c, i) => {
    const scale = c.kind === 'site' ? 100 : 1; // sites in % ΔF/F, units in Hz
    let peak = 0;
    for (const k of [kl.reward, kl.movement, kl.ape]) for (const v of k) peak = Math.max(peak, Math.abs(v));
    const noise = 0.04 * peak * scale * Math.max(c.gainReward, c.gainMovement, c.gainApe, 0.2);
    const mk = (label: string, base: Float64Array, gain: number) => {
      let e = 0;
      const est = Float64Array.from(base, (v) => { e = 0.8 * e + noise * g.normal(); return scale * gain * v + e; });
      return { label, lags: kl.lags, estimate: est, low: Float64Array.from(est, (v) => v - 2.5 * noise), high: Float64Array.from(est, (v) => v + 2.5 * noise) };
    };
    return {
      cell: c.kind === 'site' && i === 0 ? XSS_CHANNEL : c.name,
      groups: [
        { group: 'reward', kernels: [mk('outcome × RPE', kl.reward, c.gainReward * c.sign), mk('bonus', kl.reward, 0.8 * c.gainReward * c.sign)] },
        { group: 'movement', kernels: [mk('onset × vigour', kl.movement, c.gainMovement * c.sign)] },
        { group: 'action', kernels: [mk('choice × APE', kl.ape, c.gainApe * c.sign)] },
      ],
    };
  });

  const base: Record<string, [number, number]> = { reward: [0.08, 0.004], movement: [0.004, 0.07], mixed: [0.05, 0.05], 'action-prediction': [0.01, 0.01], none: [0.001, 0.001] };
  const cells: TuningCell[] = sim.truth.cells.map((c, i) => {
    const [r, m] = base[c.class]!;
    return { cell: c.kind === 'site' && i === 0 ? XSS_CHANNEL : c.name, kind: c.kind, class: c.class, sign: c.sign, rewardUnique: r * (0.6 + 0.8 * g.uniform()), movementUnique: m * (0.6 + 0.8 * g.uniform()) };
  });
  const countMap = new Map<string, number>();
  for (const c of cells) countMap.set(c.class, (countMap.get(c.class) ?? 0) + 1);
  const counts: ClassCount[] = [...countMap].map(([k, v]) => ({ class: k, count: v }));

  return {
    session: s.id,
    files: [`${s.id}/photometry.arrow`, `${s.id}/${XSS_CHANNEL}.csv`],
    qc, responses, heatmaps, rasters, kernels,
    tuning: { cells, counts },
    tables: [{ caption: 'Events', columns: [{ key: 'name', label: 'event' }, { key: 'n', label: 'count', type: 'number', decimals: 0 }], rows: [{ name: 'outcome', n: outcome.length }, { name: XSS_EVENT, n: 3 }, { name: XSS_CHANNEL, n: NaN }] }],
    warnings: [{ code: 'TF_DEMO', message: `channel ${XSS_CHANNEL} renamed nothing; this is a test warning` }],
    provenance: [
      makeProvenance('simulateSession', sim.options, seed, [hashInput('truth.rpe', sim.truth.rpe)]),
      makeProvenance('report demo', { channel: XSS_CHANNEL, note: '</script><script>alert(2)</script>' }, null, [hashInput(`${XSS_CHANNEL}.csv`, 'time,signal\n')]),
    ],
  };
}

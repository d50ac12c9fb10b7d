// Benchmarks of @tuningfork/encode (issue 7), on a simulated 60-minute session binned at 50 Hz
// (180,000 rows): 4 photometry sites (ratio ΔF/F of their own channels), 40 units.
// Targets: cross-validated ridge, 12 penalties × 5 folds, 4 sites ≤ 2 s (design ≈ 80 columns);
// Poisson GLMs (full fit + 5 CV folds) for 40 units ≤ 10 s (wall; units run on worker threads, CPU
// time of all threads reported beside it); a 1,000-shift null for one cell
// ≤ 3 × one cross-validated fit of that cell (same models and penalties); steps 5–7 of the
// numpy/scipy yardstick (../shared/peer/pipeline.py) run on the same session in the same run,
// with ratios ours/peer (target for step 7 ≤ 0.05).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import {
  classifyCells, designMatrix, fitRidgeCV, poissonGLMCV, ridgeRegression, shiftNull,
} from '@tuningfork/encode';
import type { CellSignal, EncodingDesign, PoissonGLMCVOptions, Regressor } from '@tuningfork/encode';
import { simulateSession, writePeerLayout } from '@tuningfork/simulate';
import type { SimulatedSession } from '@tuningfork/simulate';
import type { BenchCase, BenchRow } from '../harness.js';

const PEER = fileURLToPath(new URL('../../../shared/peer/pipeline.py', import.meta.url));
const RATE = 50;
const PENALTIES12 = Float64Array.from({ length: 12 }, (_, i) => 10 ** (-3 + (6 * i) / 11));

function median(x: number[]): number {
  const s = [...x].sort((a, b) => a - b);
  const h = s.length >> 1;
  return s.length % 2 ? s[h]! : (s[h - 1]! + s[h]!) / 2;
}

function timeIt<T>(f: () => T): [T, number] {
  const t0 = performance.now();
  const v = f();
  return [v, (performance.now() - t0) / 1000];
}

function blockMeans(x: Float64Array, factor: number, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let b = 0; b < n; b++) {
    let s = 0;
    for (let i = b * factor; i < (b + 1) * factor; i++) s += x[i]!;
    out[b] = s / factor;
  }
  return out;
}

/** Sensor/control ratio over a fitted smooth baseline (constant + exponentials), minus 1. */
function ratioDff(sig: Float64Array, ctl: Float64Array): Float64Array {
  const n = sig.length;
  const r = Float64Array.from(sig, (v, i) => v / ctl[i]!);
  const taus = [15, 30, 60, 120, 240, 480, 960, 1920];
  const x = new Float64Array(n * taus.length);
  for (let i = 0; i < n; i++) for (let k = 0; k < taus.length; k++) x[i * taus.length + k] = Math.exp(-i / RATE / taus[k]!);
  const f = ridgeRegression({ data: x, rows: n, cols: taus.length }, r, { penalty: 1e-6 * n });
  return Float64Array.from(r, (v, i) => {
    let b = f.intercept;
    for (let k = 0; k < taus.length; k++) b += f.coefficients[k]! * x[i * taus.length + k]!;
    return v / b - 1;
  });
}

interface Prepared {
  readonly sim: SimulatedSession;
  readonly n: number;
  readonly sites: CellSignal[];
  readonly units: CellSignal[];
}

let cached: Prepared | null = null;
function prepared(): Prepared {
  if (cached) return cached;
  const sim = simulateSession({ durationSec: 3600, nSites: 4, nUnits: 40, seed: 1 });
  const n = 3600 * RATE;
  const sites = sim.session.photometry.map((s) => {
    const f = s.signal.sampleRate / RATE;
    return { name: s.name, values: ratioDff(blockMeans(s.signal.values, f, n), blockMeans(s.control.values, f, n)) };
  });
  const units = sim.session.units.map((u) => {
    const c = new Float64Array(n);
    for (const t of u.times) {
      const b = Math.floor(t * RATE + 0.5);
      if (b >= 0 && b < n) c[b] = c[b]! + 1;
    }
    return { name: u.name, values: c, kind: 'counts' as const };
  });
  cached = { sim, n, sites, units };
  return cached;
}

/** The ≈ 80-column design: 9 event kernels (with RPE, vigour, APE modulators; licks) and a lagged accelerometer. */
function richDesign(p: Prepared): EncodingDesign {
  const { sim } = p;
  const tr = sim.session.trials!;
  const t = sim.truth;
  const ev = sim.session.events;
  const licks = Float64Array.from(ev.time.filter((_, i) => ev.name[i] === 'lick'));
  const accel = sim.session.continuous.accel!;
  const f = accel.sampleRate / RATE;
  const acc = { values: blockMeans(accel.values, f, p.n), sampleRate: RATE, t0: 0 };
  const move = { preSec: 1, nPreBumps: 2 };
  const regs: Regressor[] = [
    { name: 'cue', group: 'cue', times: tr.cueTime },
    { name: 'outcome', group: 'reward', times: tr.outcomeTime },
    { name: 'outcome×RPE', group: 'reward', times: tr.outcomeTime, modulator: t.rpe },
    { name: 'bonus', group: 'reward', times: t.bonusTimes },
    { name: 'move', group: 'movement', times: t.movementOnsets, basis: move },
    { name: 'move×vigour', group: 'movement', times: t.movementOnsets, modulator: t.movementVigour, basis: move },
    { name: 'accel', group: 'movement', signal: acc, lagsSec: [-0.2, 0.5], nBumps: 4 },
    { name: 'choice', group: 'action-prediction', times: tr.choiceTime },
    { name: 'choice×APE', group: 'action-prediction', times: tr.choiceTime, modulator: t.ape },
    { name: 'lick', group: 'lick', times: licks },
  ];
  return designMatrix(regs, { startSec: 0, endSec: 3600, binRate: RATE });
}

/** The yardstick's own design: 5 regressors × 8 raised cosines over 0–3 s, 4 groups. */
function peerDesign(p: Prepared): EncodingDesign {
  const { sim } = p;
  const tr = sim.session.trials!;
  const t = sim.truth;
  const rewarded = tr.outcomeTime.filter((_, i) => tr.reward[i] === 1);
  const outT = Float64Array.from([...tr.outcomeTime, ...t.bonusTimes]);
  const outV = Float64Array.from([...t.rpe, ...new Array<number>(t.bonusTimes.length).fill(1)]);
  let vm = 0;
  for (const v of t.movementVigour) vm += v / t.movementVigour.length;
  const raw = { centreModulator: false };
  return designMatrix([
    { name: 'cue', group: 'cue', times: tr.cueTime },
    { name: 'reward', group: 'reward', times: Float64Array.from([...rewarded, ...t.bonusTimes]) },
    { name: 'reward_rpe', group: 'reward', times: outT, modulator: outV, ...raw },
    { name: 'move', group: 'move', times: t.movementOnsets, modulator: t.movementVigour.map((v) => v / vm), ...raw },
    { name: 'choice_ape', group: 'choice_ape', times: tr.choiceTime, modulator: t.ape, ...raw },
  ], { startSec: 0, endSec: 3600, binRate: RATE });
}

/** One timed poissonGLMCV call on all units: wall time against the target, and process CPU time (all threads). */
function glmRows(operation: string, size: string, opts: PoissonGLMCVOptions): BenchRow[] {
  const p = prepared();
  const d = richDesign(p);
  const c0 = process.cpuUsage();
  const [r, sec] = timeIt(() => poissonGLMCV(d, p.units, opts));
  const c = process.cpuUsage(c0);
  const cpu = (c.user + c.system) / 1e6;
  const workers = r.warnings.some((w) => w.code === 'workers-unavailable') ? 'workers unavailable' : `${availableParallelism()} threads available`;
  return [{ operation, size, medianSec: sec, note: `${sec <= 10 ? 'PASS' : 'FAIL'} (target ≤ 10 s); CPU ${cpu.toFixed(1)} s (all threads; ${workers}); one run` }];
}

export const cases: BenchCase[] = [
  {
    name: 'encode: design matrix (≈ 80 columns)',
    size: '60 min × 50 Hz = 180,000 rows; 9 event kernels + lagged accel',
    setup: () => prepared(),
    run: (p: Prepared) => richDesign(p).nCols,
    reps: 3,
  },
  {
    name: 'encode: CV ridge, 12 penalties × 5 folds, 4 sites',
    size: '180,000 rows × 80 columns, full model',
    setup: () => {
      const p = prepared();
      return { p, d: richDesign(p) };
    },
    run: ({ p, d }: { p: Prepared; d: EncodingDesign }) =>
      fitRidgeCV(d, p.sites, { penalties: PENALTIES12, contributions: false, jackknifeBlocks: 0 }).cells[0]!.cvR2,
    reps: 5,
    targetSec: 2,
  },
  {
    name: 'encode: CV ridge + unique/alone ΔR² + jackknife CIs, 4 sites',
    size: '180,000 rows × 80 columns, 12 models, 20 jackknife blocks',
    setup: () => {
      const p = prepared();
      return { p, d: richDesign(p) };
    },
    run: ({ p, d }: { p: Prepared; d: EncodingDesign }) => fitRidgeCV(d, p.sites, { penalties: PENALTIES12 }).cells[0]!.cvR2,
    reps: 3,
  },
  {
    name: 'encode: Poisson GLMs (full + 5 CV folds), 40 units',
    size: '180,000 rows × 80 columns × 40 units, penalty 1',
    custom: (): BenchRow[] => glmRows('encode: Poisson GLMs (full + 5 CV folds), 40 units', '180,000 rows × 80 columns × 40 units, penalty 1', {}),
  },
  {
    name: 'encode: Poisson GLMs (full + 5 one-Newton-step folds), 40 units',
    size: '180,000 rows × 80 columns × 40 units, penalty 1, foldFits newton-step',
    custom: (): BenchRow[] => glmRows('encode: Poisson GLMs (full + 5 one-Newton-step folds), 40 units', '180,000 rows × 80 columns × 40 units, penalty 1, foldFits newton-step', { foldFits: 'newton-step' }),
  },
  {
    name: 'encode: 1,000-shift null vs one CV fit, one cell',
    size: '180,000 rows × 80 columns, 12 penalties, 5 folds, full + 5 reduced models',
    custom: (): BenchRow[] => {
      const p = prepared();
      const d = richDesign(p);
      const cell = [p.sites[0]!];
      const fits: number[] = [];
      const nulls: number[] = [];
      let fit = fitRidgeCV(d, cell, { penalties: PENALTIES12, jackknifeBlocks: 0 }); // warm-up
      shiftNull(d, fit, { nShifts: 50 });
      let route = '';
      for (let r = 0; r < 3; r++) {
        const [f, tf] = timeIt(() => fitRidgeCV(d, cell, { penalties: PENALTIES12, jackknifeBlocks: 0 }));
        fit = f;
        fits.push(tf);
        const [nul, tn] = timeIt(() => shiftNull(d, fit, { nShifts: 1000, seed: r }));
        nulls.push(tn);
        route = `${nul.route.directTerms} terms direct, ${nul.route.fftTerms} by FFT`;
      }
      const tf = median(fits);
      const tn = median(nulls);
      const ratio = tn / tf;
      // the same null for all 4 sites at once (design-level FFTs shared), per cell
      const fit4 = fitRidgeCV(d, p.sites, { penalties: PENALTIES12, jackknifeBlocks: 0 });
      const [nul4, t4] = timeIt(() => shiftNull(d, fit4, { nShifts: 1000, seed: 9 }));
      const per = t4 / p.sites.length;
      return [
        { operation: 'encode: 1,000-shift null, 4 sites in one call, per cell', size: `180,000 × 80; ${nul4.route.directTerms} direct, ${nul4.route.fftTerms} FFT`, medianSec: per, note: `${(per / tf).toFixed(2)} × one CV fit (one run)` },
        { operation: 'encode: one CV fit (full + 5 reduced + 5 alone models), one cell', size: '180,000 × 80, 12 penalties × 5 folds', medianSec: tf },
        { operation: 'encode: 1,000-shift null, one cell', size: `180,000 × 80; ${route}`, medianSec: tn, note: `${ratio.toFixed(2)} × one CV fit (${ratio <= 3 ? 'PASS' : 'FAIL'}, target ≤ 3)` },
      ];
    },
  },
  {
    name: 'encode: steps 5–7 vs peer',
    size: 'same 60-min session, 4 sites, 50 Hz, 5 regressors × 8 bumps, 10 penalties, 200 shifts',
    custom: (): BenchRow[] => {
      const p = prepared();
      const pens = Float64Array.from({ length: 10 }, (_, i) => 10 ** (-3 + (6 * i) / 9));
      const size = '60 min, 4 sites, 180,000 rows × 40 columns';
      const t5: number[] = [];
      const t56: number[] = [];
      const t7: number[] = [];
      let sink = 0;
      for (let r = 0; r < 3; r++) {
        const [fit5, a] = timeIt(() => fitRidgeCV(peerDesign(p), p.sites, { penalties: pens, contributions: false, jackknifeBlocks: 0 }));
        sink += fit5.cells[0]!.cvR2;
        const [both, b] = timeIt(() => {
          const d = peerDesign(p);
          return { d, fit: fitRidgeCV(d, p.sites, { penalties: pens, jackknifeBlocks: 0 }) };
        });
        const [cls, c] = timeIt(() => classifyCells(both.d, both.fit, shiftNull(both.d, both.fit, { nShifts: 200, seed: r }), { groupRoles: { move: 'movement', choice_ape: 'action-prediction' } }));
        sink += cls.cells.length;
        t5.push(a);
        t56.push(b);
        t7.push(c);
      }
      const ours5 = median(t5);
      const ours56 = median(t56);
      const ours7 = median(t7);
      const rows: BenchRow[] = [
        { operation: 'encode: step 5 (ours: design + CV ridge, full model)', size, medianSec: ours5 },
        { operation: 'encode: steps 5+6 (ours: design + full, reduced and alone models)', size, medianSec: ours56, note: 'one fitRidgeCV call; step 6 alone is not separable' },
        { operation: 'encode: step 7 (ours: 200-shift CV null + classes)', size, medianSec: ours7, note: Number.isFinite(sink) ? '' : '!' },
      ];
      if (!existsSync(PEER)) return rows.map((r) => ({ ...r, note: 'peer absent (../shared/peer/pipeline.py): no ratio' }));
      const dir = mkdtempSync(join(tmpdir(), 'tf-encode-peer-'));
      try {
        writePeerLayout(p.sim, dir);
        const py = spawnSync('python3', [PEER, dir, '--encode-fs', '50', '--shifts', '200'], { encoding: 'utf8', maxBuffer: 1 << 24 });
        if (py.status !== 0) return rows.map((r) => ({ ...r, note: `peer failed: ${py.stderr.slice(0, 160)}` }));
        const rep = JSON.parse(py.stdout) as { steps_s: Record<string, number> };
        const s = rep.steps_s;
        const peer5 = s['5_encoding_full']!;
        const peer6 = s['6_unique_dr2']!;
        const peer7 = s['7_shift_null_classify']!;
        const note = (ours: number, peer: number, target?: number) =>
          `ratio ours/peer = ${(ours / peer).toFixed(3)}${target === undefined ? '' : ` (${ours / peer <= target ? 'PASS' : 'FAIL'}, target ≤ ${target})`}`;
        rows[0] = { ...rows[0]!, note: note(ours5, peer5) };
        rows[1] = { ...rows[1]!, note: `${note(ours56, peer5 + peer6)} (vs peer steps 5 + 6); ${rows[1]!.note}` };
        rows[2] = { ...rows[2]!, note: note(ours7, peer7, 0.05) };
        rows.push(
          { operation: 'encode: step 5_encoding_full (peer numpy)', size, medianSec: peer5, note: 'one run of pipeline.py on the same session' },
          { operation: 'encode: step 6_unique_dr2 (peer numpy)', size, medianSec: peer6 },
          { operation: 'encode: step 7_shift_null_classify (peer numpy)', size, medianSec: peer7 },
        );
        return rows;
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
  },
];

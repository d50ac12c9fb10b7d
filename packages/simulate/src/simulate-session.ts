import { makeEventTable, rng as makeRng } from '@tuningfork/core';
import type { PhotometrySite, Rng, SpikeTrain, TrialTable, UniformSignal } from '@tuningfork/core';
import { makeCells } from './cells.js';
import { resolveSimulateOptions } from './defaults.js';
import { addKernelTrain, apeKernel, KERNEL_SPAN, KERNEL_SUPPORT, movementKernel, rewardKernel } from './kernels.js';
import { movementBouts, runTask } from './task.js';
import type { MovementBouts, TaskRun } from './task.js';
import type { BleachParams, CellTruth, SimulateOptions, SimulatedSession } from './types.js';

/** Rate (Hz) of the internal neural grid on which responses and firing rates are evaluated. */
const GRID_RATE = 1000;
/** Median vigour (g); movement responses scale with vigour / this. */
const VIGOUR_REF = 0.3;

/**
 * Simulate one session of the demo operant choice task with known ground truth.
 *
 * A light cue starts each trial; the simulated rat pokes the left or right port; each port pays a
 * sucrose drop with a probability that reverses in blocks; unannounced bonus drops arrive in the
 * inter-trial interval; a head-mounted accelerometer records approach and spontaneous movement.
 * The agent learns by Q-learning with a choice kernel (see runTask). Each photometry site and unit
 * has a known class: reward (outcome response ∝ RPE, bonus response ∝ 1), movement (response ∝
 * vigour around movement onsets), mixed (both), action-prediction (choice response ∝ APE) or none.
 *
 * Photometry: per site, sensor = B_s(t)·(1 + ΔF/F(t))·(1 + m(t)) + noise and control =
 * B_c(t)·(1 + m(t)) + noise, where B is a double-exponential bleaching curve (different per
 * channel), m a shared multiplicative motion artefact (at random times and, optionally, during
 * movement bouts), and the noise
 * white and shot-like (sd ∝ √B). ΔF/F is the cell's response plus slow AR(1) background.
 * Units: inhomogeneous Poisson spikes with an absolute refractory period (thinning), rate =
 * baseline + responses, rectified at 0.
 * Clocks: behaviour events and sync pulses are also returned on a second device clock with offset
 * and drift (and 0.1 ms pulse jitter); each side loses `syncDropFraction` of the pulses.
 *
 * Same options and seed give bit-identical output.
 *
 * @throws {TuningforkError} TF_UNKNOWN_OPTION, TF_BAD_OPTION for invalid options.
 *
 * References
 * - Lewis, P. A. W. & Shedler, G. S. (1979). Simulation of nonhomogeneous Poisson processes by
 *   thinning. Naval Res. Logist. Q. 26(3):403–413. doi:10.1002/nav.3800260304
 */
export function simulateSession(options: SimulateOptions = {}): SimulatedSession {
  const o = resolveSimulateOptions(options);
  const root = makeRng(o.seed);
  const task = runTask(o, root.stream(1));
  const bouts = movementBouts(o, task, root.stream(2));
  const cells = makeCells(o, root.stream(3));
  const nGrid = Math.floor(o.durationSec * GRID_RATE);

  // Unit-gain response drivers on the neural grid.
  const needNeural = o.nSites + o.nUnits > 0;
  const drive = needNeural ? neuralDrivers(nGrid, task, bouts) : null;
  const artefact = motionArtefact(nGrid, o, bouts, root.stream(6));

  const sites: PhotometrySite[] = [];
  const dffs: Float64Array[] = [];
  const bleaching: { signal: BleachParams; control: BleachParams }[] = [];
  const siteCells = cells.filter((c) => c.kind === 'site');
  siteCells.forEach((cell, i) => {
    const res = photometrySite(cell, o, drive!, artefact, root.stream(10 + i));
    sites.push(res.site);
    dffs.push(res.dff);
    bleaching.push(res.bleach);
  });
  const artefactOut = resampleGrid(artefact, o.photometryRate, Math.floor(o.durationSec * o.photometryRate));

  const units: SpikeTrain[] = cells
    .filter((c) => c.kind === 'unit')
    .map((cell, i) => ({ name: cell.name, times: spikeTrain(cell, o, drive!, root.stream(1000 + i)) }));

  const accel = accelerometer(o, bouts, root.stream(4));
  const sync = syncPulses(o, root.stream(5));

  // Events on the session clock.
  const times: number[] = [];
  const names: string[] = [];
  const values: number[] = [];
  const push = (t: number, name: string, v: number) => { times.push(t); names.push(name); values.push(v); };
  for (let k = 0; k < task.cueTime.length; k++) {
    push(task.cueTime[k]!, 'cue', 1);
    push(task.choiceTime[k]!, task.choice[k] === 0 ? 'choice_left' : 'choice_right', 1);
    push(task.outcomeTime[k]!, task.reward[k] === 1 ? 'reward' : 'omission', task.reward[k]!);
  }
  for (const t of task.bonusTimes) push(t, 'bonus', 1);
  for (const t of task.lickTimes) push(t, 'lick', 1);
  const events = makeEventTable(times, names, values);
  const drift = 1 + o.deviceDriftPpm * 1e-6;
  const devRng = root.stream(7);
  const devTimes = Float64Array.from(events.time, (t) => o.deviceOffsetSec + drift * t + 5e-5 * devRng.normal());
  const deviceEvents = makeEventTable(devTimes, events.name, events.value);

  const trials: TrialTable = {
    trial: Int32Array.from({ length: task.cueTime.length }, (_, i) => i),
    cueTime: task.cueTime, choiceTime: task.choiceTime, choice: task.choice,
    outcomeTime: task.outcomeTime, reward: task.reward, nOptions: 2,
  };
  const lagRate = 100;
  const lags = Float64Array.from({ length: Math.round((KERNEL_SPAN.toSec - KERNEL_SPAN.fromSec) * lagRate) + 1 }, (_, i) => KERNEL_SPAN.fromSec + i / lagRate);

  return {
    session: {
      id: `sim-seed${o.seed}`, start: 0, end: o.durationSec,
      photometry: sites, units, events, trials,
      continuous: { accel },
    },
    device: { events: deviceEvents, syncPulses: sync.device },
    sync: { pulses: sync.session, line: sync.line },
    truth: {
      cells,
      kernels: { lags, reward: lags.map(rewardKernel), movement: lags.map(movementKernel), ape: lags.map(apeKernel) },
      agent: { alpha: o.alpha, beta: o.beta, alphaC: o.alphaC, betaC: o.betaC, q0: 0, c0: 0 },
      rpe: task.rpe, ape: task.ape, qChosen: task.qChosen, cChosen: task.cChosen, pChoice: task.pChoice,
      pReward: task.pReward, blockStarts: task.blockStarts,
      movementOnsets: bouts.onset, movementVigour: bouts.vigour, movementAtChoice: bouts.atChoice,
      bonusTimes: task.bonusTimes, dff: dffs, artefact: artefactOut, bleaching,
      clock: { offsetSec: o.deviceOffsetSec, driftPpm: o.deviceDriftPpm },
    },
    options: o,
  };
}

interface Drivers {
  readonly reward: Float64Array; readonly movement: Float64Array; readonly ape: Float64Array;
  /** max |driver|, bounds for thinning. */
  readonly maxReward: number; readonly maxMovement: number; readonly maxApe: number;
}

function maxAbs(x: Float64Array): number {
  let m = 0;
  for (let i = 0; i < x.length; i++) {
    const a = Math.abs(x[i]!);
    if (a > m) m = a;
  }
  return m;
}

function neuralDrivers(n: number, task: TaskRun, bouts: MovementBouts): Drivers {
  const reward = new Float64Array(n);
  addKernelTrain(reward, GRID_RATE, task.outcomeTime, task.rpe, rewardKernel, KERNEL_SUPPORT.reward);
  addKernelTrain(reward, GRID_RATE, task.bonusTimes, new Float64Array(task.bonusTimes.length).fill(1), rewardKernel, KERNEL_SUPPORT.reward);
  const movement = new Float64Array(n);
  addKernelTrain(movement, GRID_RATE, bouts.onset, bouts.vigour.map((v) => v / VIGOUR_REF), movementKernel, KERNEL_SUPPORT.movement);
  const ape = new Float64Array(n);
  addKernelTrain(ape, GRID_RATE, task.choiceTime, task.ape, apeKernel, KERNEL_SUPPORT.ape);
  return { reward, movement, ape, maxReward: maxAbs(reward), maxMovement: maxAbs(movement), maxApe: maxAbs(ape) };
}

/**
 * Shared fractional motion artefact: raised-cosine dips at random times (Poisson, artefactRate,
 * 0.4–1.4 s long) and, optionally, during a fraction of the movement bouts.
 */
function motionArtefact(n: number, o: Required<SimulateOptions>, bouts: MovementBouts, rng: Rng): Float64Array {
  const a = new Float64Array(n);
  if (o.artefactSize === 0) return a;
  const dip = (on: number, dur: number, size: number) => {
    const i0 = Math.max(0, Math.ceil(on * GRID_RATE));
    const i1 = Math.min(n - 1, Math.floor((on + dur) * GRID_RATE));
    for (let i = i0; i <= i1; i++) {
      const u = (i / GRID_RATE - on) / dur;
      a[i] = a[i]! - size * 0.5 * (1 - Math.cos(2 * Math.PI * u));
    }
  };
  const duration = n / GRID_RATE;
  if (o.artefactRate > 0) {
    for (let t = rng.exponential(o.artefactRate); t < duration; t += rng.exponential(o.artefactRate)) {
      dip(t, 0.4 + rng.uniform(), o.artefactSize * (0.5 + rng.uniform()));
    }
  }
  const bRng = rng.stream(1);
  for (let b = 0; b < bouts.onset.length; b++) {
    const hit = bRng.uniform() < o.artefactAtMovement;
    const size = o.artefactSize * (0.5 + bRng.uniform());
    if (hit) dip(bouts.onset[b]!, bouts.duration[b]! + 0.2, size);
  }
  return a;
}

/** Sample a grid signal at `rate` Hz by nearest grid index. */
function resampleGrid(grid: Float64Array, rate: number, n: number): Float64Array {
  if (rate === GRID_RATE && n === grid.length) return grid.slice();
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = grid[Math.min(grid.length - 1, Math.round((i / rate) * GRID_RATE))]!;
  return out;
}

function bleachParams(f0: number, rng: Rng, kind: 'signal' | 'control'): BleachParams {
  const fa = kind === 'signal' ? 0.25 : 0.12;
  const fb = kind === 'signal' ? 0.2 : 0.25;
  const a = fa * f0 * (0.8 + 0.4 * rng.uniform());
  const b = fb * f0 * (0.8 + 0.4 * rng.uniform());
  const tau1 = kind === 'signal' ? 60 + 90 * rng.uniform() : 40 + 120 * rng.uniform();
  const tau2 = kind === 'signal' ? 900 + 1100 * rng.uniform() : 700 + 1500 * rng.uniform();
  return { a, tau1, b, tau2, c: f0 - a - b };
}

/** Evaluate a·e^(−t/τ1) + b·e^(−t/τ2) + c. */
export function bleachCurve(p: BleachParams, t: number): number {
  return p.a * Math.exp(-t / p.tau1) + p.b * Math.exp(-t / p.tau2) + p.c;
}

function photometrySite(cell: CellTruth, o: Required<SimulateOptions>, d: Drivers, artefact: Float64Array, rng: Rng) {
  const rate = o.photometryRate;
  const n = Math.floor(o.durationSec * rate);
  const f0s = 2 * (0.9 + 0.2 * rng.uniform());
  const f0c = 1.2 * (0.9 + 0.2 * rng.uniform());
  const bs = bleachParams(f0s, rng, 'signal');
  const bc = bleachParams(f0c, rng, 'control');
  const dff = new Float64Array(n);
  const sig = new Float64Array(n);
  const ctl = new Float64Array(n);
  const phi = Math.exp(-1 / rate); // AR(1) with a 1 s time constant
  const innov = o.backgroundDff * Math.sqrt(1 - phi * phi);
  let bg = o.backgroundDff * rng.normal();
  const { gainReward: gr, gainMovement: gm, gainApe: ga } = cell;
  const sameGrid = rate === GRID_RATE;
  const e1s = Math.exp(-1 / (rate * bs.tau1)), e2s = Math.exp(-1 / (rate * bs.tau2));
  const e1c = Math.exp(-1 / (rate * bc.tau1)), e2c = Math.exp(-1 / (rate * bc.tau2));
  let x1s = bs.a, x2s = bs.b, x1c = bc.a, x2c = bc.b;
  for (let i = 0; i < n; i++) {
    // Exponentials advance by an exact per-sample factor; re-anchored every 4096 samples so the
    // product never drifts from the closed form (relative error < 1e-12).
    if ((i & 4095) === 0) {
      const t = i / rate;
      x1s = bs.a * Math.exp(-t / bs.tau1); x2s = bs.b * Math.exp(-t / bs.tau2);
      x1c = bc.a * Math.exp(-t / bc.tau1); x2c = bc.b * Math.exp(-t / bc.tau2);
    }
    const g = sameGrid ? i : Math.min(artefact.length - 1, Math.round((i / rate) * GRID_RATE));
    const v = gr * d.reward[g]! + gm * d.movement[g]! + ga * d.ape[g]! + bg;
    dff[i] = v;
    const m = 1 + artefact[g]!;
    const Bs = x1s + x2s + bs.c;
    const Bc = x1c + x2c + bc.c;
    sig[i] = Bs * (1 + v) * m + o.shotNoise * Math.sqrt(Bs * f0s) * rng.normal();
    ctl[i] = Bc * m + o.shotNoise * Math.sqrt(Bc * f0c) * rng.normal();
    bg = phi * bg + innov * rng.normal();
    x1s *= e1s; x2s *= e2s; x1c *= e1c; x2c *= e2c;
  }
  const signal: UniformSignal = { values: sig, sampleRate: rate, t0: 0 };
  const control: UniformSignal = { values: ctl, sampleRate: rate, t0: 0 };
  return { site: { name: cell.name, signal, control }, dff, bleach: { signal: bs, control: bc } };
}

/** Inhomogeneous Poisson spikes with an absolute refractory period, by thinning. */
function spikeTrain(cell: CellTruth, o: Required<SimulateOptions>, d: Drivers, rng: Rng): Float64Array {
  const n = d.reward.length;
  const { gainReward: gr, gainMovement: gm, gainApe: ga, baseRate } = cell;
  const lmax = baseRate + Math.abs(gr) * d.maxReward + Math.abs(gm) * d.maxMovement + Math.abs(ga) * d.maxApe;
  if (!(lmax > 0)) return new Float64Array(0);
  let cap = Math.ceil(lmax * o.durationSec * 1.1) + 16;
  let out = new Float64Array(cap);
  let k = 0;
  let last = -Infinity;
  const dur = o.durationSec;
  for (let t = rng.exponential(lmax); t < dur; t += rng.exponential(lmax)) {
    const g = Math.min(n - 1, Math.floor(t * GRID_RATE));
    let lam = baseRate + gr * d.reward[g]! + gm * d.movement[g]! + ga * d.ape[g]!;
    if (lam < 0) lam = 0;
    if (rng.uniform() * lmax >= lam) continue;
    if (t - last < o.refractorySec) continue;
    if (k === cap) { cap *= 2; const nx = new Float64Array(cap); nx.set(out); out = nx; }
    out[k++] = t;
    last = t;
  }
  return out.slice(0, k);
}

/** Accelerometer magnitude (g): 1 g of gravity, sensor noise and movement bouts. */
function accelerometer(o: Required<SimulateOptions>, bouts: MovementBouts, rng: Rng): UniformSignal {
  const rate = o.accelRate;
  const n = Math.floor(o.durationSec * rate);
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = 1 + 0.01 * rng.normal();
  for (let b = 0; b < bouts.onset.length; b++) {
    const on = bouts.onset[b]!;
    const dur = bouts.duration[b]!;
    const vig = bouts.vigour[b]!;
    const f = 2.5 + 2 * rng.uniform();
    const i0 = Math.max(0, Math.ceil(on * rate));
    const i1 = Math.min(n - 1, Math.floor((on + dur + 0.3) * rate));
    for (let i = i0; i <= i1; i++) {
      const s = i / rate - on;
      const rise = 1 - Math.exp(-s / 0.02);
      const fall = s > dur ? Math.exp(-(s - dur) / 0.05) : 1;
      x[i] = x[i]! + vig * rise * fall * (0.7 + 0.3 * Math.cos(2 * Math.PI * f * s));
    }
  }
  return { values: x, sampleRate: rate, t0: 0 };
}

/** Sync pulses: random 0.5–1.5 s intervals; each side drops its own share; device side drifts. */
function syncPulses(o: Required<SimulateOptions>, rng: Rng) {
  const all: number[] = [];
  for (let t = 0.5 + rng.uniform(); t < o.durationSec - 0.5; t += 0.5 + rng.uniform()) all.push(t);
  const session: number[] = [];
  const device: number[] = [];
  const drift = 1 + o.deviceDriftPpm * 1e-6;
  for (const t of all) {
    const dropS = rng.uniform() < o.syncDropFraction;
    const dropD = rng.uniform() < o.syncDropFraction;
    const jitter = 1e-4 * rng.normal();
    if (!dropS) session.push(t);
    if (!dropD) device.push(o.deviceOffsetSec + drift * t + jitter);
  }
  const rate = o.photometryRate;
  const n = Math.floor(o.durationSec * rate);
  const line = new Float64Array(n);
  const width = Math.max(0.05, 2 / rate);
  for (const t of session) {
    const i0 = Math.ceil(t * rate);
    const i1 = Math.min(n, Math.ceil((t + width) * rate));
    for (let i = i0; i < i1; i++) line[i] = 1;
  }
  return { session: Float64Array.from(session), device: Float64Array.from(device), line: { values: line, sampleRate: rate, t0: 0 } as UniformSignal };
}

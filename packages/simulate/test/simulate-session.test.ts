import { describe, expect, it } from 'vitest';
import { eventTimes, sha256Typed } from '@tuningfork/core';
import { expectAllClose } from '@tuningfork/test-utils';
import { agentPolicy, agentUpdate, bleachCurve, simulateSession } from '../src/index.js';

const base = { durationSec: 900, nSites: 2, nUnits: 5 };
const sim = simulateSession({ ...base, seed: 3 });

describe('agentPolicy / agentUpdate', () => {
  // Reference: INFERENCE.md §3.8 "Q-learning fixture" and "RW + choice kernel" (own numpy fixture
  // in the methods reference): two arms, Q0 = C0 = 0.
  const choices = [0, 0, 1, 0, 1, 1, 0, 0, 0, 1];
  const rewards = [1, 0, 1, 1, 0, 1, 1, 0, 1, 0];
  const run = (p: { alpha: number; beta: number; alphaC: number; betaC: number }) => {
    const st = { q: new Float64Array(2), c: new Float64Array(2) };
    let nll = 0;
    const rpe: number[] = [];
    const ape: number[] = [];
    choices.forEach((ch, t) => {
      nll -= Math.log(agentPolicy(st, p)[ch]!);
      const e = agentUpdate(st, p, ch, rewards[t]!);
      rpe.push(e.rpe);
      ape.push(e.ape);
    });
    return { nll, rpe, ape, st };
  };
  it('Q-learning (α 0.3, β 2) reproduces the NLL 7.455297294853 and the RPE sequence', () => {
    const r = run({ alpha: 0.3, beta: 2, alphaC: 0, betaC: 0 });
    expectAllClose(r.nll, 7.455297294853, { rtol: 1e-11, source: 'INFERENCE.md §3.8' });
    // RPEs are printed to 3–5 significant digits in the reference; tolerance at that precision.
    expectAllClose(r.rpe, [1, -0.3, 1, 0.79, -0.3, 0.79, 0.553, -0.6129, 0.57097, -0.447], { atol: 6e-4, source: 'INFERENCE.md §3.8' });
    expectAllClose(Array.from(r.st.q), [0.600321, 0.3129], { atol: 1e-6, source: 'INFERENCE.md §3.8' });
  });
  it('β = 0 gives NLL = 10 ln 2', () => {
    expectAllClose(run({ alpha: 0.3, beta: 0, alphaC: 0, betaC: 0 }).nll, 10 * Math.LN2, { rtol: 1e-14 });
  });
  it('RW + choice kernel (α 0.3, β 2, α_C 0.2, β_C 1.5) reproduces NLL 8.246754983434, APEs and final C', () => {
    const r = run({ alpha: 0.3, beta: 2, alphaC: 0.2, betaC: 1.5 });
    expectAllClose(r.nll, 8.246754983434, { rtol: 1e-11, source: 'INFERENCE.md §3.8' });
    // APE of the chosen action, trials 1–3: (1, 0)[0] = 1, (0.8, 0)[0] = 0.8, (−0.36, 1)[1] = 1.
    expectAllClose(r.ape.slice(0, 3), [1, 0.8, 1], { rtol: 1e-14 });
    expectAllClose(Array.from(r.st.c), [0.50322678, 0.38939904], { atol: 1e-8, source: 'INFERENCE.md §3.8' });
  });
});

describe('simulateSession', () => {
  it('is bit-identical for equal seeds and differs across seeds', () => {
    const again = simulateSession({ ...base, seed: 3 });
    const other = simulateSession({ ...base, seed: 4 });
    const h = (s: typeof sim) => [
      ...s.session.photometry.flatMap((p) => [sha256Typed(p.signal.values), sha256Typed(p.control.values)]),
      ...s.session.units.map((u) => sha256Typed(u.times)),
      sha256Typed(s.session.events.time), sha256Typed(s.session.continuous.accel!.values), sha256Typed(s.device.syncPulses),
    ];
    expect(h(again)).toEqual(h(sim));
    expect(h(other)[0]).not.toBe(h(sim)[0]);
  });

  it('the agent chooses with the probability its softmax gives (calibration, binomial test per bin)', () => {
    const s = simulateSession({ durationSec: 7200, nSites: 0, nUnits: 0, seed: 9 });
    const { choice } = s.session.trials!;
    // pChoice is the probability of the choice made; convert to P(right) and bin.
    const pRight = Float64Array.from(s.truth.pChoice, (p, i) => (choice[i] === 1 ? p : 1 - p));
    // Five groups of equal size by predicted probability.
    const order = Array.from(pRight.keys()).sort((a, b) => pRight[a]! - pRight[b]!);
    const groups = 5;
    let checked = 0;
    for (let g = 0; g < groups; g++) {
      const idx = order.slice(Math.floor((g * order.length) / groups), Math.floor(((g + 1) * order.length) / groups));
      let k = 0, ps = 0, pv = 0;
      for (const i of idx) { k += choice[i]!; ps += pRight[i]!; pv += pRight[i]! * (1 - pRight[i]!); }
      checked++;
      // Observed count of right choices vs Σp, sd √Σp(1−p) (Poisson-binomial); 4 sd.
      expect(Math.abs(k - ps)).toBeLessThan(4 * Math.sqrt(pv) + 1);
    }
    expect(checked).toBeGreaterThanOrEqual(3);
  });

  it('per-trial RPE and APE follow the agent equations from the choices and outcomes', () => {
    const { choice, reward } = sim.session.trials!;
    const st = { q: new Float64Array(2), c: new Float64Array(2) };
    const p = sim.truth.agent;
    const rpe = new Float64Array(choice.length), ape = new Float64Array(choice.length), pc = new Float64Array(choice.length);
    for (let t = 0; t < choice.length; t++) {
      // Recomputed here from the written equations of INFERENCE.md §3.3–3.4, independently of agentUpdate.
      const z = [0, 1].map((a) => p.beta * st.q[a]! + p.betaC * st.c[a]!);
      pc[t] = Math.exp(z[choice[t]!]!) / (Math.exp(z[0]!) + Math.exp(z[1]!));
      rpe[t] = reward[t]! - st.q[choice[t]!]!;
      ape[t] = 1 - st.c[choice[t]!]!;
      const ch = choice[t]!;
      st.q[ch] = st.q[ch]! + p.alpha * rpe[t]!;
      for (let a = 0; a < 2; a++) st.c[a] = st.c[a]! + p.alphaC * ((a === ch ? 1 : 0) - st.c[a]!);
    }
    expectAllClose(sim.truth.rpe, rpe, { rtol: 1e-12, atol: 1e-15 });
    expectAllClose(sim.truth.ape, ape, { rtol: 1e-12, atol: 1e-15 });
    expectAllClose(sim.truth.pChoice, pc, { rtol: 1e-12 });
  });

  it('reversal blocks have the configured lengths and swap the better port', () => {
    const s = simulateSession({ durationSec: 7200, nSites: 0, nUnits: 0, blockTrials: [20, 25], seed: 2 });
    const starts = Array.from(s.truth.blockStarts);
    const nTrials = s.session.trials!.trial.length;
    for (let b = 0; b + 1 < starts.length; b++) {
      const len = starts[b + 1]! - starts[b]!;
      expect(len).toBeGreaterThanOrEqual(20);
      expect(len).toBeLessThanOrEqual(25);
    }
    expect(nTrials - starts[starts.length - 1]!).toBeLessThanOrEqual(25);
    for (let b = 1; b < starts.length; b++) {
      const t = starts[b]!;
      // The reward probabilities of the two ports swap at each block start.
      expect(s.truth.pReward[2 * t]).toBe(s.truth.pReward[2 * (t - 1) + 1]);
      expect(s.truth.pReward[2 * t + 1]).toBe(s.truth.pReward[2 * (t - 1)]);
    }
  });

  it('rewards arrive with the port probability (binomial test)', () => {
    const s = simulateSession({ durationSec: 7200, nSites: 0, nUnits: 0, seed: 5 });
    const { choice, reward } = s.session.trials!;
    let k = 0, ps = 0, pv = 0;
    for (let t = 0; t < choice.length; t++) {
      const p = s.truth.pReward[2 * t + choice[t]!]!;
      k += reward[t]!; ps += p; pv += p * (1 - p);
    }
    expect(Math.abs(k - ps)).toBeLessThan(4 * Math.sqrt(pv));
  });

  it('without noise, response or artefact, each channel equals its double-exponential bleaching curve (closed form)', () => {
    const s = simulateSession({ durationSec: 600, photometryRate: 250, nSites: 1, nUnits: 0, shotNoise: 0, backgroundDff: 0, artefactSize: 0, responseDff: 0, seed: 8 });
    const site = s.session.photometry[0]!;
    const bp = s.truth.bleaching[0]!;
    const t = Float64Array.from(site.signal.values, (_, i) => i / 250);
    expectAllClose(site.signal.values, Float64Array.from(t, (x) => bleachCurve(bp.signal, x)), { rtol: 1e-12 });
    expectAllClose(site.control.values, Float64Array.from(t, (x) => bleachCurve(bp.control, x)), { rtol: 1e-12 });
    // Different bleaching per channel.
    expect(bp.signal.tau1).not.toBe(bp.control.tau1);
  });

  it('sensor = bleaching × (1 + ΔF/F) × (1 + artefact) and control = bleaching × (1 + artefact) without noise', () => {
    const s = simulateSession({ durationSec: 300, nSites: 2, nUnits: 0, shotNoise: 0, seed: 12 });
    const site = s.session.photometry[1]!;
    const bp = s.truth.bleaching[1]!;
    const n = site.signal.values.length;
    const expS = new Float64Array(n), expC = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const t = i / 1000;
      expS[i] = bleachCurve(bp.signal, t) * (1 + s.truth.dff[1]![i]!) * (1 + s.truth.artefact[i]!);
      expC[i] = bleachCurve(bp.control, t) * (1 + s.truth.artefact[i]!);
    }
    expectAllClose(site.signal.values, expS, { rtol: 1e-12 });
    expectAllClose(site.control.values, expC, { rtol: 1e-12 });
    // Artefacts are present and shared: some dips deeper than 2 %.
    expect(s.truth.artefact.reduce((m, x) => Math.min(m, x), 0)).toBeLessThan(-0.02);
  });

  it('spike counts of untuned units are Poisson: Fano factor ≈ 1 (textbook property)', () => {
    const s = simulateSession({ durationSec: 2000, nSites: 0, nUnits: 10, unitClasses: ['none'], refractorySec: 0, seed: 21 });
    for (const u of s.session.units) {
      const counts = new Float64Array(2000);
      for (const t of u.times) counts[Math.floor(t)]!++;
      let m = 0, v = 0;
      for (const c of counts) m += c;
      m /= counts.length;
      for (const c of counts) v += (c - m) ** 2;
      v /= counts.length - 1;
      // SE of the Fano factor of n Poisson counts ≈ √(2/(n−1)) = 0.032 for n = 2000 (plus a 1/λ term); 5 SE.
      expect(Math.abs(v / m - 1)).toBeLessThan(5 * Math.sqrt(2 / 1999 + 1 / (m * 2000)) + 0.02);
      const cell = s.truth.cells.find((c) => c.name === u.name)!;
      // Mean rate equals the configured base rate (Poisson SE √(λT)/T).
      expect(Math.abs(m - cell.baseRate)).toBeLessThan(5 * Math.sqrt(cell.baseRate / 2000));
    }
  });

  it('no inter-spike interval is shorter than the refractory period', () => {
    for (const u of sim.session.units) {
      let minIsi = Infinity;
      for (let i = 1; i < u.times.length; i++) minIsi = Math.min(minIsi, u.times[i]! - u.times[i - 1]!);
      expect(minIsi).toBeGreaterThanOrEqual(sim.options.refractorySec);
    }
  });

  it('device clock = offset + (1 + drift)·session clock for events and surviving sync pulses', () => {
    const { offsetSec, driftPpm } = sim.truth.clock;
    const dev = sim.device.events.time;
    const ses = sim.session.events.time;
    expect(dev.length).toBe(ses.length);
    const mapped = Float64Array.from(ses, (t) => offsetSec + (1 + driftPpm * 1e-6) * t);
    // Device event jitter sd 0.05 ms: 6 sd.
    expectAllClose(dev, mapped, { atol: 3e-4, rtol: 0 });
    // Each side loses about syncDropFraction of the pulses.
    const total = Math.max(sim.sync.pulses.length, sim.device.syncPulses.length);
    expect(sim.sync.pulses.length).toBeGreaterThan(0.9 * total);
    // The digital line is high right after every session-side pulse.
    const line = sim.sync.line;
    for (const t of sim.sync.pulses.subarray(0, 50)) expect(line.values[Math.ceil(t * line.sampleRate) + 1]).toBe(1);
  });

  it('trials, events and truth agree: cue < choice < outcome, reward/omission events per outcome', () => {
    const tr = sim.session.trials!;
    for (let k = 0; k < tr.trial.length; k++) {
      expect(tr.cueTime[k]!).toBeLessThan(tr.choiceTime[k]!);
      expect(tr.choiceTime[k]!).toBeLessThan(tr.outcomeTime[k]!);
    }
    const nRew = eventTimes(sim.session.events, 'reward').length;
    const nOm = eventTimes(sim.session.events, 'omission').length;
    expect(nRew + nOm).toBe(tr.trial.length);
    expect(nRew).toBe(tr.reward.reduce((a, b) => a + b, 0));
    expect(eventTimes(sim.session.events, 'bonus').length).toBe(sim.truth.bonusTimes.length);
    expect(sim.truth.rpe.length).toBe(tr.trial.length);
  });

  it('movement onsets are preceded by quiescence and raise the accelerometer magnitude', () => {
    const acc = sim.session.continuous.accel!;
    for (let b = 0; b < sim.truth.movementOnsets.length; b++) {
      const on = sim.truth.movementOnsets[b]!;
      const i = Math.round(on * acc.sampleRate);
      if (i < 20 || i + 20 >= acc.values.length) continue;
      const before = acc.values.subarray(i - 20, i - 2);
      const after = acc.values.subarray(i + 2, i + 20);
      expect(Math.max(...before)).toBeLessThan(1.06);
      expect(Math.max(...after)).toBeGreaterThan(1 + 0.4 * sim.truth.movementVigour[b]!);
    }
  });

  it('rejects invalid options with coded errors', () => {
    const bad: [object, string][] = [
      [{ durationSec: -5 }, 'TF_BAD_OPTION'], [{ photometryRate: 0 }, 'TF_BAD_OPTION'], [{ photometryRate: 5000 }, 'TF_BAD_OPTION'],
      [{ nSites: 1.5 }, 'TF_BAD_OPTION'], [{ durationSecs: 10 }, 'TF_UNKNOWN_OPTION'], [{ blockTrials: [50, 10] }, 'TF_BAD_OPTION'],
      [{ siteClasses: ['reward', 'dopamine'] }, 'TF_BAD_OPTION'], [{ seed: -1 }, 'TF_BAD_OPTION'], [{ rewardProbs: [1.2, 0] }, 'TF_BAD_OPTION'],
      [{ shotNoise: Number.NaN }, 'TF_BAD_OPTION'], [{ siteClasses: [] }, 'TF_BAD_OPTION'],
    ];
    for (const [opts, code] of bad) expect(() => simulateSession(opts), JSON.stringify(opts)).toThrow(expect.objectContaining({ code }));
  });
});

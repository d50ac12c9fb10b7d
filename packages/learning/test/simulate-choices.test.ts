import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { agentPolicy, agentUpdate } from '@tuningfork/simulate';
import { reversalSchedule, simulateChoices } from '../src/index.js';

describe('simulateChoices', () => {
  // Reference: the simulator package's agent (@tuningfork/simulate agentPolicy/agentUpdate, written
  // independently by another engineer from INFERENCE.md §3.3–3.4): replaying our simulated choices and
  // rewards through it must give the same pre-update RPE, APE and choice probabilities as our truth.
  it('simulateChoices truth matches the @tuningfork/simulate agent replayed on the same choices and rewards', () => {
    const { schedule } = reversalSchedule({ nTrials: 300, seed: 4 });
    const p = { alpha: 0.4, beta: 5, alphaC: 0.3, betaC: 1.5 };
    const sim = simulateChoices(schedule, p, { model: 'q-ck', seed: 8 });
    const state = { q: new Float64Array(2), c: new Float64Array(2) };
    const rpe = new Float64Array(300);
    const ape = new Float64Array(300);
    const pc = new Float64Array(300);
    for (let t = 0; t < 300; t++) {
      pc[t] = agentPolicy(state, p)[sim.choice[t]!]!;
      const e = agentUpdate(state, p, sim.choice[t]!, sim.reward[t]!);
      rpe[t] = e.rpe;
      ape[t] = e.ape;
    }
    // Same recursion, different code: ~1 ulp per step.
    expectAllClose(sim.truth.rpe, rpe, { rtol: 1e-12, atol: 1e-14 });
    expectAllClose(sim.truth.ape, ape, { rtol: 1e-12, atol: 1e-14 });
    expectAllClose(sim.truth.pChoice, pc, { rtol: 1e-12, atol: 1e-14 });
  });

  it('simulateChoices pays exactly the options whose reward probability is 1', () => {
    const data = new Float64Array(200 * 3);
    for (let t = 0; t < 200; t++) data[t * 3 + (t % 3)] = 1; // option t mod 3 always pays, the others never
    const sim = simulateChoices({ data, rows: 200, cols: 3 }, { alpha: 0.3, beta: 1 }, { model: 'q', seed: 2 });
    for (let t = 0; t < 200; t++) expect(sim.reward[t]).toBe(sim.choice[t] === t % 3 ? 1 : 0);
  });

  // Binomial: with β = 0 each choice is a fair coin; 4000 trials → SD of the proportion 0.0079; 4 SD bound.
  it('simulateChoices with β = 0 chooses each of two options half of the time (binomial, 4 SD)', () => {
    const { schedule } = reversalSchedule({ nTrials: 4000, seed: 1 });
    const sim = simulateChoices(schedule, { alpha: 0.5, beta: 0 }, { model: 'q', seed: 3 });
    const frac = sim.choice.reduce((s, c) => s + c, 0) / 4000;
    expect(Math.abs(frac - 0.5)).toBeLessThan(4 * Math.sqrt(0.25 / 4000));
  });

  it('simulateChoices is reproducible for a seed and reports it', () => {
    const { schedule } = reversalSchedule({ nTrials: 100, seed: 1 });
    const a = simulateChoices(schedule, { epsilon: 0.1 }, { model: 'wsls', seed: 5 });
    const b = simulateChoices(schedule, { epsilon: 0.1 }, { model: 'wsls', seed: 5 });
    expect(Array.from(a.choice)).toEqual(Array.from(b.choice));
    expect(a.seed).toBe(5);
    expect(Array.from(simulateChoices(schedule, { epsilon: 0.1 }, { model: 'wsls', seed: 6 }).choice)).not.toEqual(Array.from(a.choice));
  });

  it('simulateChoices rejects probabilities outside [0, 1] and parameters outside their bounds', () => {
    const bad = { data: Float64Array.of(0.5, 0.5, 1.2, 0), rows: 2, cols: 2 };
    expect(() => simulateChoices(bad, { alpha: 0.3, beta: 1 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    const { schedule } = reversalSchedule({ nTrials: 10 });
    expect(() => simulateChoices(schedule, { alpha: -0.1, beta: 1 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('reversalSchedule', () => {
  it('reversalSchedule alternates the better option in blocks of 30–60 trials with probabilities 0.8 / 0.2', () => {
    const r = reversalSchedule({ nTrials: 1000, seed: 7 });
    const starts = Array.from(r.blockStarts);
    for (let b = 0; b + 1 < starts.length; b++) {
      const len = starts[b + 1]! - starts[b]!;
      expect(len).toBeGreaterThanOrEqual(30);
      expect(len).toBeLessThanOrEqual(60);
      expect(r.better[starts[b + 1]!]).toBe(1 - r.better[starts[b]!]!);
    }
    const better = Array.from(r.better, (b, t) => r.schedule.data[t * 2 + b]);
    const worse = Array.from(r.better, (b, t) => r.schedule.data[t * 2 + 1 - b]);
    expect(better).toEqual(new Array(1000).fill(0.8));
    expect(worse).toEqual(new Array(1000).fill(0.2));
  });

  it('reversalSchedule rejects a block range with min > max', () => {
    expect(() => reversalSchedule({ blockTrials: [60, 30] })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

import { describe, expect, it } from 'vitest';
import { rng } from '@tuningfork/core';
import { expectAllClose } from '@tuningfork/test-utils';
import { microstimuli, tdLambda, tdWithinTrial } from '../src/index.js';
import type { TdEpisode } from '../src/index.js';

/** Random-walk episodes: states 0 … n−1, start in the middle, step ±1 with probability ½; leaving on the left pays `left`, on the right pays `right`. */
function randomWalk(nStates: number, nEpisodes: number, left: number, right: number, seed: number): TdEpisode[] {
  const r = rng(seed);
  const out: TdEpisode[] = [];
  for (let e = 0; e < nEpisodes; e++) {
    const states: number[] = [];
    const rewards: number[] = [];
    let s = (nStates - 1) / 2;
    for (;;) {
      states.push(s);
      const next = s + (r.uniform() < 0.5 ? -1 : 1);
      if (next < 0) { rewards.push(left); break; }
      if (next >= nStates) { rewards.push(right); break; }
      rewards.push(0);
      s = next;
    }
    out.push({ states, rewards });
  }
  return out;
}

function rms(a: Float64Array, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += (a[i]! - b[i]!) ** 2;
  return Math.sqrt(s / a.length);
}

describe('tdLambda', () => {
  // Reference: Sutton & Barto (2018), Example 6.2, true values 1/6 … 5/6 (INFERENCE.md §3.8, confirmed
  // there with numpy.linalg.solve); criterion RMS < 0.05 (common practice, INFERENCE.md §3.8).
  it('tdLambda TD(0) on the 5-state random walk reaches the true values 1/6 … 5/6 (RMS < 0.05)', () => {
    const episodes = randomWalk(5, 3000, 0, 1, 1);
    const { weights } = tdLambda(episodes, { nStates: 5, alpha: 0.01, gamma: 1, lambda: 0 });
    const truth = [1, 2, 3, 4, 5].map((i) => i / 6);
    expect(rms(weights, truth)).toBeLessThan(0.05);
  });

  // Reference: Sutton & Barto (2018), Example 7.1, 19 states, −1 on the left and +1 on
  // the right; true values (i − 10)/10 (INFERENCE.md §3.8).
  it('tdLambda TD(λ = 0.8) on the 19-state random walk reaches (i − 10)/10 (RMS < 0.05)', () => {
    const episodes = randomWalk(19, 3000, -1, 1, 2);
    const { weights } = tdLambda(episodes, { nStates: 19, alpha: 0.005, gamma: 1, lambda: 0.8 });
    const truth = Array.from({ length: 19 }, (_, i) => (i + 1 - 10) / 10);
    expect(rms(weights, truth)).toBeLessThan(0.05);
  });

  // One update by hand (Sutton & Barto 2018, eq. 12.5–12.7): w = 0, x = (1, 0) then (0, 1) then terminal,
  // reward 1 on the last transition, α = 0.5, γ = 0.9, λ = 0.5: δ_0 = 0, δ_1 = 1, z_1 = (0.45, 1),
  // so w = (0.225, 0.5).
  it('tdLambda applies the accumulating-trace update of Sutton & Barto eq. 12.5–12.7', () => {
    const res = tdLambda([{ features: { data: Float64Array.of(1, 0, 0, 1), rows: 2, cols: 2 }, rewards: [0, 1] }], { alpha: 0.5, gamma: 0.9, lambda: 0.5 });
    expectAllClose(res.delta, [0, 1], { rtol: 1e-15 });
    expectAllClose(res.weights, [0.225, 0.5], { rtol: 1e-15 });
  });

  // TD(0), one tabular state revisited with γ = 0: δ_t = r − w_t and w ← w + αδ, so δ_t = r(1 − α)^t
  // (closed form of the linear recursion). With α = 3 (allowed: α > 0), |δ_t| = 2^t is finite up to
  // t = 1023 but the update of step 1023 gives w = 1 − 2^1024 = −Infinity; that last update has no δ
  // after it, so the weights came back as [−Infinity] with every δ finite.
  it('tdLambda rejects a recursion that diverges, also when only the last update overflows (TF_NON_FINITE)', () => {
    const n = 1024;
    expect(Number.isFinite(Math.pow(2, n - 1))).toBe(true);
    expect(Number.isFinite(1 - Math.pow(2, n))).toBe(false);
    const run = (steps: number) => tdLambda([{ states: new Int32Array(steps), rewards: new Float64Array(steps).fill(1) }], { nStates: 1, alpha: 3, gamma: 0 });
    expect(() => run(n)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ episode: 0, step: n - 1, diverged: true }) }));
    // One step fewer stays finite and follows the closed form δ_t = (1 − α)^t = (−2)^t.
    const ok = run(n - 1);
    // Past t ≈ 53 the "1 +" is below one ulp of 2^t, so recursion and closed form differ by a few ulps.
    expectAllClose(ok.delta[n - 2]!, Math.pow(-2, n - 2), { rtol: 1e-13, label: 'δ_1022 = (−2)^1022' });
    expectAllClose(ok.weights[0]!, 1 - Math.pow(-2, n - 1), { rtol: 1e-13, label: 'w = 1 − (−2)^1023' });
  });

  it('tdLambda rejects a state outside 0 … nStates − 1 and rewards of the wrong length', () => {
    expect(() => tdLambda([{ states: [0, 5], rewards: [0, 1] }], { nStates: 5 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => tdLambda([{ states: [0, 1], rewards: [0] }], { nStates: 5 })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('microstimuli', () => {
  // Reference: INFERENCE.md §3.8 "Microstimuli (formula above; d = 0.985, σ = 0.08, m = 10)";
  // formula of Ludvig, Sutton & Kehoe (2008). Values given to 6 decimals → atol 5e-7.
  it('microstimuli(51) gives max x_10 = 0.398942 at t = 0 and y = 0.469690, max x_5 = 0.174402 at t = 50', () => {
    const x = microstimuli(51, { count: 10, decay: 0.985, width: 0.08 });
    const row0 = x.data.subarray(0, 10);
    const row50 = x.data.subarray(500, 510);
    expect(row0.indexOf(Math.max(...row0))).toBe(9);
    expect(row50.indexOf(Math.max(...row50))).toBe(4);
    expectAllClose(row0[9]!, 0.398942, { atol: 5e-7, rtol: 0 });
    expectAllClose(row50[4]!, 0.174402, { atol: 5e-7, rtol: 0 });
    expectAllClose(Math.pow(0.985, 50), 0.46969, { atol: 5e-6, rtol: 0, label: 'trace height y(50)' });
  });

  // At t = 0 the trace is y = 1 = i/m for the last microstimulus, so its Gaussian factor is exp(0) = 1 and
  // x_m(0) = (2π)^(−1/2) = 0.3989422804014327 for ANY width σ > 0 (Ludvig et al. 2008, eq. for x_i). With
  // σ = 1e-170, 2σ² underflows to 0 and u²/(2σ²) was 0/0 = NaN.
  it('microstimuli keeps x_m(0) = (2π)^(−1/2) for a width so small that 2σ² underflows', () => {
    const x = microstimuli(3, { count: 4, width: 1e-170 });
    expect(x.data.every((v) => !Number.isNaN(v))).toBe(true);
    expectAllClose(x.data[3]!, 1 / Math.sqrt(2 * Math.PI), { rtol: 1e-15, label: 'x_m(0)' });
  });

  it('microstimuli rejects a decay outside (0, 1)', () => {
    expect(() => microstimuli(5, { decay: 1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('tdWithinTrial', () => {
  // Reference: INFERENCE.md §3.8 "CSC TD(0) (numpy simulation; γ = 0.9, T = 5, α = 0.2, 3000 trials)":
  // V = 0.6561 0.729 0.81 0.9 1, δ at the cue = 0.59049, δ = 0 afterwards; omitted reward δ = −r (§3.2, derived).
  it('tdWithinTrial with a complete serial compound reaches the asymptote V(k) = γ^(T−1−k), δ_cue = γ^T', () => {
    const n = 3001;
    const reward = new Float64Array(n).fill(1);
    reward[n - 1] = 0; // probe: omit the reward on the last trial
    const res = tdWithinTrial({ reward, rewardStep: new Int32Array(n).fill(5) }, { representation: 'csc', nSteps: 8, alpha: 0.2, gamma: 0.9, lambda: 0 });
    const last = (n - 2) * 8;
    // 3000 trials of α = 0.2 leave an error far below 1e-9.
    expectAllClose(res.value.data.subarray(last, last + 5), [0.6561, 0.729, 0.81, 0.9, 1], { rtol: 1e-9 });
    expectAllClose(res.delta.data.subarray(last, last + 8), [0.59049, 0, 0, 0, 0, 0, 0, 0], { rtol: 1e-9, atol: 1e-9 });
    const omit = (n - 1) * 8;
    expectAllClose(res.delta.data[omit + 5]!, -1, { rtol: 1e-9, label: 'δ at the omitted reward = −r' });
    expectAllClose(res.horizonSec, -0.05 / Math.log(0.9), { rtol: 1e-15, label: 'horizon −Δt/ln γ (INFERENCE.md §3.2)' });
  });

  // Ludvig, Sutton & Kehoe (2008): microstimuli generalise in time, so an omitted reward gives a
  // negative δ smaller in size than the CSC's −r (INFERENCE.md §3.2).
  it('tdWithinTrial with microstimuli gives a smaller negative δ at an omitted reward than the CSC', () => {
    const n = 1001;
    const reward = new Float64Array(n).fill(1);
    reward[n - 1] = 0;
    const rewardStep = new Int32Array(n).fill(30);
    const opts = { nSteps: 60, gamma: 0.98, lambda: 0.9, alpha: 0.05 } as const;
    const micro = tdWithinTrial({ reward, rewardStep }, { ...opts, representation: 'microstimulus', microstimulusCount: 20 });
    const csc = tdWithinTrial({ reward, rewardStep }, { ...opts, representation: 'csc' });
    const dm = micro.delta.data[(n - 1) * 60 + 30]!;
    const dc = csc.delta.data[(n - 1) * 60 + 30]!;
    expect(dm).toBeLessThan(0);
    expect(dm).toBeGreaterThan(dc);
    expect(micro.delta.data[(n - 2) * 60]!).toBeGreaterThan(0.1); // a learned cue response
  });

  it('tdWithinTrial rejects a NaN reward naming the trial and a reward step outside the trial', () => {
    expect(() => tdWithinTrial({ reward: [1, NaN], rewardStep: [2, 2] }, { nSteps: 5 })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ trial: 1 }) }));
    expect(() => tdWithinTrial({ reward: [1, 1], rewardStep: [2, 7] }, { nSteps: 5 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION', details: expect.objectContaining({ trial: 1 }) }));
  });
});

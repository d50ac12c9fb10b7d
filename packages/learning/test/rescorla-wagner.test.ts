import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose } from '@tuningfork/test-utils';
import { rescorlaWagner } from '../src/index.js';

describe('rescorlaWagner', () => {
  // Reference: INFERENCE.md §3.8 "RW (closed form; α = 0.1, r = 1, V0 = 0)"; closed form
  // δ_k = (r − V0)(1 − α)^(k−1), V_{k+1} = r − (r − V0)(1 − α)^k (Rescorla & Wagner 1972).
  it('rescorlaWagner(ones, { alpha: 0.1 }) reproduces the closed-form δ and V of INFERENCE.md §3.8', () => {
    const res = rescorlaWagner(new Float64Array(20).fill(1), { alpha: 0.1 });
    // 20 multiply-adds accumulate a few ulps; 1e-12 relative still catches any off-by-one trial.
    expectAllClose(res.delta.subarray(0, 3), [1, 0.9, 0.81], { rtol: 1e-12, label: 'δ 1..3' });
    expectAllClose(res.delta[9]!, 0.387420489, { rtol: 1e-12, label: 'δ_10' });
    expectAllClose(res.values.data[10]!, 0.6513215599, { rtol: 1e-10, label: 'V after 10 trials (doc gives 10 digits)' });
    expectAllClose(res.final[0]!, 0.8784233454, { rtol: 1e-10, label: 'V after 20 trials (doc gives 10 digits)' });
  });

  it('rescorlaWagner follows the closed form for any α, r and V0 (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 1, noNaN: true }), fc.double({ min: -5, max: 5, noNaN: true }), fc.double({ min: -5, max: 5, noNaN: true }), fc.integer({ min: 1, max: 40 }), (alpha, r, v0, n) => {
        const res = rescorlaWagner(new Float64Array(n).fill(r), { alpha, v0 });
        const expected = Float64Array.from({ length: n }, (_, k) => (r - v0) * Math.pow(1 - alpha, k));
        // closed form (Rescorla & Wagner 1972) vs the recursion: rounding grows with n; 1e-9 absolute on |r − V0| ≤ 10.
        expectAllClose(res.delta, expected, { rtol: 1e-9, atol: 1e-9 });
      }),
      { seed: 11, numRuns: 60 },
    );
  });

  // Compound cues share one error δ = r − ΣV (Rescorla & Wagner 1972): two cues always together,
  // equal α, reach V_A + V_B = r with V_A = V_B = r/2 (derived here: symmetric updates).
  it('rescorlaWagner with two cues presented together splits the asymptote between them (shared δ)', () => {
    const n = 400;
    const cues = { data: new Float64Array(n * 2).fill(1), rows: n, cols: 2 };
    const res = rescorlaWagner(new Float64Array(n).fill(1), { alpha: 0.05, cues });
    // (1 − 2α)^400 ≈ 5e-19: at asymptote to double precision.
    expectAllClose(res.final, [0.5, 0.5], { rtol: 1e-12 });
    expectAllClose(res.prediction[1]!, 0.1, { rtol: 1e-12, label: 'ΣV after one trial = 2·α·r' });
  });

  // With cue intensity x, one cue and constant r, the recursion is the Widrow–Hoff (LMS) rule:
  // δ_t = r·(1 − αx²)^t (derived from δ' = r − x(V + αxδ) = δ(1 − αx²); stable iff 0 < αx² < 2; Widrow & Hoff
  // 1960). Intensities in physical units (70 dB) with α = 0.1 give αx² = 490: |δ_t| = 489^t passes
  // Number.MAX_VALUE at t = ⌈ln MAX_VALUE / ln 489⌉ = 115, where the strengths overflow; before the fix the
  // result silently held ±Infinity and NaN from there on.
  it('rescorlaWagner rejects a diverging recursion (α·Σx² > 2) when it overflows, naming the trial (TF_NON_FINITE)', () => {
    const n = 200;
    const x = 70;
    const alpha = 0.1;
    const firstOverflow = Math.ceil(Math.log(Number.MAX_VALUE) / Math.log(Math.abs(1 - alpha * x * x)));
    expect(firstOverflow).toBe(115);
    const cues = { data: new Float64Array(n).fill(x), rows: n, cols: 1 };
    expect(() => rescorlaWagner(new Float64Array(n).fill(1), { alpha, cues })).toThrow(
      expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ trial: firstOverflow }) }),
    );
    // Just below the overflow the recursion is still finite and follows the closed form (LMS, above).
    const short = rescorlaWagner(new Float64Array(firstOverflow).fill(1), { alpha, cues: { data: new Float64Array(firstOverflow).fill(x), rows: firstOverflow, cols: 1 } });
    expectAllClose(short.delta[100]!, Math.pow(1 - alpha * x * x, 100), { rtol: 1e-11, label: 'δ_100 = (1 − αx²)^100' });
  });

  it('rescorlaWagner rejects a NaN outcome naming the trial (TF_NON_FINITE)', () => {
    expect(() => rescorlaWagner([1, 0, NaN, 1])).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ trial: 2 }) }));
  });

  it('rescorlaWagner rejects α outside [0, 1] and cues with the wrong number of rows', () => {
    expect(() => rescorlaWagner([1, 0], { alpha: 1.5 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => rescorlaWagner([1, 0], { cues: { data: new Float64Array(3), rows: 3, cols: 1 } })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => rescorlaWagner([1, 0], { alhpa: 0.2 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });
});

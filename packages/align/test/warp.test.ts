import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose } from '@tuningfork/test-utils';
import { periEventMatrix, warpTime, warpTrials } from '../src/index.js';

describe('warpTime', () => {
  // Reference: SIGNALS.md §3.7 check [np-spec].
  it('warpTime maps (9.5, 10, 10.4, 10.8, 11.15, 11.5, 12) to (−.5, 0, .25, .5, .75, 1, 1.5) for L = [10, 10.8, 11.5], R = [0, .5, 1]', () => {
    const u = warpTime([9.5, 10, 10.4, 10.8, 11.15, 11.5, 12], [10, 10.8, 11.5], [0, 0.5, 1]);
    // One multiply-divide per value on times near 10: rounding ≲ 1e-14.
    expectAllClose(u, [-0.5, 0, 0.25, 0.5, 0.75, 1, 1.5], { rtol: 1e-12, atol: 1e-13, source: 'SIGNALS.md 3.7' });
  });

  it('warpTime rejects landmarks that do not increase (TF_BAD_EVENTS) and mismatched lengths (TF_SHAPE_MISMATCH)', () => {
    expect(() => warpTime([1], [10, 10, 11], [0, 0.5, 1])).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
    expect(() => warpTime([1], [10, 11], [0, 0.5, 1])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('warpTrials', () => {
  const t = Float64Array.from({ length: 600 }, (_, i) => i / 20);
  const clock = { values: t, sampleRate: 20, t0: 0 }; // x = t: each row shows the times it read

  it('warpTrials samples each trial at u⁻¹(grid): the SIGNALS.md 3.7 example read backwards', () => {
    const m = warpTrials(clock, [[10], [10.8], [11.5]], { template: [0, 0.5, 1], preSec: 0.5, postSec: 0.55 });
    const at = (g: number) => m.data[Math.round(g * 20) + 10]!;
    expectAllClose([-0.5, 0, 0.25, 0.5, 0.75, 1, 1.5].map(at), [9.5, 10, 10.4, 10.8, 11.15, 11.5, 12], { rtol: 1e-12, source: 'SIGNALS.md 3.7 (inverse map)' });
    expectAllClose(m.stretch, [1.6, 1.4], { rtol: 1e-12, source: 'SIGNALS.md 3.7: 0.8/0.5 and 0.7/0.5' });
  });

  it('warpTrials builds the template from median intervals over usable trials', () => {
    const cue = [2, 6, 10, 14];
    const choice = [2.5, 6.7, 10.9, NaN];
    const outcome = [3.5, 7.2, 12.9, 15];
    const m = warpTrials(clock, [cue, choice, outcome], { preSec: 0.5, postSec: 0.5 });
    // Intervals: cue→choice 0.5, 0.7, 0.9 (median 0.7); choice→outcome 1.0, 0.5, 2.0 (median 1.0).
    expectAllClose(m.template, [0, 0.7, 1.7], { rtol: 1e-12, source: 'hand computation (medians)' });
    expect(Array.from(m.kept)).toEqual([0, 1, 2]);
    expect(m.excluded.reason).toEqual(['missing-landmark']);
    // Trial 2's second segment is stretched 2×: inside [0.5, 2], not flagged; limits [0.6, 1.8] flag it.
    expect(m.flagged.length).toBe(0);
    const f = warpTrials(clock, [cue, choice, outcome], { preSec: 0.5, postSec: 0.5, stretchLimits: [0.6, 1.8] });
    expect(Array.from(f.flagged)).toEqual([1, 2]);
  });

  it('warpTrials leaves out trials with non-increasing landmarks or windows outside the recording, keeping the reason', () => {
    const m = warpTrials(clock, [[0.2, 5, 8, 28.2], [0.9, 4.5, 8.7, 29.2]], { preSec: 1, postSec: 1 });
    expect(Array.from(m.kept)).toEqual([2]);
    expect(m.excluded.reason).toEqual(['outside-recording', 'landmarks-not-increasing', 'outside-recording']);
  });

  it('warpTrials is the identity when every trial already has the template durations (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 0.05, max: 2, noNaN: true }), { minLength: 1, maxLength: 3 }),
        fc.array(fc.double({ min: 2, max: 20, noNaN: true }), { minLength: 1, maxLength: 6 }),
        fc.constantFrom(20, 100, 1000),
        (durations, starts, rate) => {
          const n = 30 * rate;
          const x = Float64Array.from({ length: n }, (_, i) => Math.sin(i * 0.37) + 0.01 * i);
          const s = { values: x, sampleRate: rate, t0: 0 };
          const L: number[][] = [starts];
          let acc = 0;
          for (const d of durations) {
            acc += d;
            const a = acc;
            L.push(starts.map((t0) => t0 + a));
          }
          const w = warpTrials(s, L, { preSec: 0.5, postSec: 0.5 });
          const sorted = starts.map((v, i) => [v, i] as const).sort((p, q) => p[0] - q[0]);
          // Same grid as periEventMatrix aligned at the first landmark with postSec = R_last + 0.5.
          const total = w.template[w.template.length - 1]!;
          expectAllClose(w.template.subarray(1), Float64Array.from(durations.map((_, k) => durations.slice(0, k + 1).reduce((p, q) => p + q, 0))), { rtol: 1e-12, atol: 1e-12 });
          for (const [v, i] of sorted) {
            const pm = periEventMatrix(s, [v], { preSec: 0.5, postSec: total + 0.5 });
            const r = Array.from(w.kept).indexOf(i);
            expect(r).toBeGreaterThanOrEqual(0);
            expect(pm.cols).toBe(w.cols);
            // u⁻¹(g) = L0 + g up to float rounding of the segment arithmetic (~1e-14 s) × slope ≲ 1e3.
            expectAllClose(w.data.subarray(r * w.cols, (r + 1) * w.cols), pm.data, { rtol: 1e-9, atol: 1e-9 });
          }
        },
      ),
      { seed: 11, numRuns: 40 },
    );
  });

  it('warpTrials rejects fewer than 2 landmarks (TF_TOO_FEW_SAMPLES) and ragged landmark arrays (TF_SHAPE_MISMATCH)', () => {
    expect(() => warpTrials(clock, [[1, 2]])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => warpTrials(clock, [[1, 2], [1.5]])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose } from '@tuningfork/test-utils';
import { raisedCosineBasis } from '../src/index.js';

describe('raisedCosineBasis', () => {
  // Reference: INFERENCE.md §4.9 CHECK "Raised cosine" (numpy; N = 6, p1 = 0.05 s, pN = 1 s,
  // c = 0.1 s, dt = 0.01 s), the practical form of Pillow et al. (2008), Nature 454:995, Methods.
  const b = raisedCosineBasis({ sampleRate: 100, nBumps: 6, firstPeakSec: 0.05, lastPeakSec: 1, logOffsetSec: 0.1 });

  it('places the six peaks of the §4.9 example at 0.05, 0.123435, 0.232822, 0.395761, 0.638469 and 1.0 s', () => {
    // The doc prints 6 significant digits: 5e-7 absolute is half a unit of the last digit.
    expectAllClose(b.peaksSec, [0.05, 0.123435, 0.232822, 0.395761, 0.638469, 1.0], { atol: 5e-7, rtol: 0, source: 'INFERENCE.md §4.9' });
  });

  it('samples each bump with its maximum on the grid point nearest to its analytic peak', () => {
    const { data, rows, cols } = b.basis;
    for (let j = 0; j < cols; j++) {
      let best = 0;
      for (let i = 1; i < rows; i++) if (data[i * cols + j]! > data[best * cols + j]!) best = i;
      // Within one grid step (0.01 s) of the analytic peak: the bump is unimodal and sampled.
      expect(Math.abs(b.lagsSec[best]! - b.peaksSec[j]!)).toBeLessThanOrEqual(0.01);
    }
  });

  it('sums to exactly 2 between the second and the second-to-last peak (§4.9: interior sum of the bumps = 2)', () => {
    const { data, rows, cols } = b.basis;
    const inner: number[] = [];
    for (let i = 0; i < rows; i++) {
      const t = b.lagsSec[i]!;
      if (t < b.peaksSec[1]! || t > b.peaksSec[cols - 2]!) continue;
      let s = 0;
      for (let j = 0; j < cols; j++) s += data[i * cols + j]!;
      inner.push(s);
    }
    expect(inner.length).toBeGreaterThan(20);
    // cos² identities hold to rounding: 1e-12 absolute.
    expectAllClose(inner, new Array(inner.length).fill(2), { atol: 1e-12, rtol: 0, source: 'INFERENCE.md §4.1 (derived: ½Σ(1+cos(θ+kπ/2)) over 4 bumps = 2)' });
  });

  it('keeps the interior sum at 2 and every value in [0, 1] for any valid family (property)', () => {
    fc.assert(fc.property(
      fc.integer({ min: 4, max: 12 }), fc.double({ min: 0, max: 0.2, noNaN: true }), fc.double({ min: 1, max: 5, noNaN: true }),
      fc.double({ min: 0.02, max: 1, noNaN: true }),
      (nb, p1, post, c) => {
        const r = raisedCosineBasis({ sampleRate: 200, nBumps: nb, firstPeakSec: p1, postSec: post, logOffsetSec: c });
        const { data, rows, cols } = r.basis;
        for (let i = 0; i < rows; i++) {
          let s = 0;
          for (let j = 0; j < cols; j++) {
            const v = data[i * cols + j]!;
            if (v < 0 || v > 1) return false;
            s += v;
          }
          const t = r.lagsSec[i]!;
          if (t >= r.peaksSec[1]! && t <= r.peaksSec[cols - 2]! && Math.abs(s - 2) > 1e-12) return false;
        }
        // the derived last bump falls to 0 at postSec (within one 5 ms bin) and is positive before it
        const last = data[(rows - 1) * cols + cols - 1]!;
        const before = data[(rows - 21) * cols + cols - 1]!;
        return last < 1e-3 && before > 0;
      }), { seed: 42, numRuns: 60 });
  });

  it('adds linear-time pre-event bumps whose earliest one starts at −preSec', () => {
    const r = raisedCosineBasis({ sampleRate: 100, postSec: 2, nBumps: 5, preSec: 1, nPreBumps: 2 });
    // Δp = preSec/(nPre + 2) = 0.25 s: peaks at −0.5 and −0.25 s (derived from the definition).
    expectAllClose(r.peaksSec.subarray(0, 2), [-0.5, -0.25], { rtol: 1e-12, atol: 1e-15 });
    expect(r.lagStart).toBe(-100);
    expect(r.basis.data[0]).toBe(0); // the earliest bump is zero at −preSec
  });

  it('rejects a last peak before the first and supports shorter than two bins', () => {
    expect(() => raisedCosineBasis({ firstPeakSec: 0.5, lastPeakSec: 0.2 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => raisedCosineBasis({ sampleRate: 1, postSec: 0.5 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => raisedCosineBasis({ nBump: 3 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { blockedFolds, designMatrix, designToMatrix, shiftCrossProducts } from '../src/index.js';
import { buildShiftPlan, forEachShift } from '../src/null/shifted-sums.js';
import { circularCorrelation, paddedSize, realSpectrum } from '../src/internal/fft-correlate.js';
import { rng } from '@tuningfork/core';

const fx = loadFixture('fixtures/numpy/shift-cross-products.json', here(import.meta.url));

/** Naive reference: Σ_t x_j(t)·y((t − k) mod n). */
function naive(x: Float64Array, p: number, y: Float64Array, j: number, k: number): number {
  const n = y.length;
  let s = 0;
  for (let t = 0; t < n; t++) s += x[t * p + j]! * y[(((t - k) % n) + n) % n]!;
  return s;
}

describe('shiftCrossProducts', () => {
  it('equals numpy X[:, j] @ np.roll(y, k) for n = 1000 (not a power of two)', () => {
    const c = shiftCrossProducts({ data: fx.x, rows: fx.rows, cols: fx.cols }, fx.y, { shifts: fx.shifts });
    // FFT round-off on sums of 1000 O(1) terms: 1e-9 relative (the requirement), with an
    // absolute floor for entries that are close to 0.
    expectAllClose(c.data, fx.c, { rtol: 1e-9, atol: 1e-9, source: fx.source });
  });

  it('equals the naive cross-products for every shift of random series of any length (property)', () => {
    fc.assert(fc.property(fc.integer({ min: 2, max: 300 }), fc.integer({ min: 1, max: 4 }), fc.integer({ min: 0, max: 1e6 }), (n, p, seed) => {
      const r = rng(seed);
      const x = Float64Array.from({ length: n * p }, () => r.normal() + 1);
      const y = Float64Array.from({ length: n }, () => r.normal());
      const c = shiftCrossProducts({ data: x, rows: n, cols: p }, y);
      for (let j = 0; j < p; j++) for (let k = 0; k < n; k++) {
        const ref = naive(x, p, y, j, k);
        if (Math.abs(c.data[j * n + k]! - ref) > 1e-9 * (Math.abs(ref) + n)) return false;
      }
      return true;
    }), { seed: 5, numRuns: 40 });
  });

  it('fails when the conjugate is put on X instead of y, which reverses the shift direction (§4.9)', () => {
    const n = fx.rows;
    const N = paddedSize(n);
    const col = Float64Array.from({ length: n }, (_, t) => fx.x[t * fx.cols]!);
    const X = realSpectrum(col, N);
    const Y = realSpectrum(fx.y, N);
    const right = new Float64Array(n);
    const wrong = new Float64Array(n);
    circularCorrelation(X, null, Y, n, N, right, null); // X·conj(Y)
    circularCorrelation(Y, null, X, n, N, wrong, null); // Y·conj(X): conj on X
    const k = fx.shifts[3]!; // k = 7
    const ref = naive(fx.x, fx.cols, fx.y, 0, k);
    expectAllClose(right[k]!, ref, { rtol: 1e-9 });
    expect(Math.abs(wrong[k]! - ref)).toBeGreaterThan(1); // it is the k → −k value instead
    expectAllClose(wrong[k]!, naive(fx.x, fx.cols, fx.y, 0, n - k), { rtol: 1e-9 });
  });

  it('refuses non-finite input and mismatched lengths', () => {
    expect(() => shiftCrossProducts({ data: new Float64Array([1, NaN]), rows: 2, cols: 1 }, [1, 2])).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
    expect(() => shiftCrossProducts({ data: new Float64Array([1, 2]), rows: 2, cols: 1 }, [1])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('shifted fold sums (internal engine of shiftNull)', () => {
  it('gives the naive per-segment Xᵀ·Shift_k(y), Σ and Σ² for event kernels, modulators, pre-event support, out-of-grid events, lagged covariates and masked rows, by both routes', () => {
    const r = rng(3);
    const n = 700;
    const ev = Float64Array.from({ length: 25 }, () => r.uniformIn(-1, 71));
    const mod = Float64Array.from({ length: 25 }, () => r.normal());
    const cov = Float64Array.from({ length: n }, () => r.normal());
    cov[300] = NaN; // masked rows inside a test block
    cov[352] = NaN; // and inside the gap around the fold boundary at row 350
    const d = designMatrix([
      { name: 'a', group: 'A', times: ev, basis: { postSec: 2, nBumps: 4, preSec: 1, nPreBumps: 2 } },
      { name: 'am', group: 'A', times: ev, modulator: mod, basis: { postSec: 2, nBumps: 4, preSec: 1, nPreBumps: 2 } },
      { name: 'b', group: 'B', times: ev, modulator: mod, basis: { postSec: 1.5, nBumps: 3 } },
      { name: 'c', group: 'C', signal: { values: cov, sampleRate: 10, t0: 0 }, lagsSec: [-0.3, 0.5], nBumps: 3 },
    ], { startSec: 0, endSec: 70, binRate: 10 });
    const lay = blockedFolds(n, { nFolds: 4, gapBins: 31 });
    const X = designToMatrix(d);
    const y = Float64Array.from({ length: n }, () => r.normal());
    const shifts = Int32Array.from([0, 1, 17, 350, 699, 123, 690, 5]);
    for (const route of ['direct', 'fft'] as const) {
      const plan = buildShiftPlan(d, lay.cuts, shifts.length, route);
      forEachShift(plan, y, shifts, (si, s) => {
        const k = shifts[si]!;
        const got: number[] = [];
        const want: number[] = [];
        for (let seg = 0; seg < lay.cuts.length - 1; seg++) {
          const c = new Float64Array(d.nCols);
          let ys = 0;
          let yy = 0;
          for (let t = lay.cuts[seg]!; t < lay.cuts[seg + 1]!; t++) {
            if (!d.rowValid![t]) continue;
            const v = y[(((t - k) % n) + n) % n]!;
            ys += v;
            yy += v * v;
            for (let j = 0; j < d.nCols; j++) c[j] = c[j]! + X.data[t * d.nCols + j]! * v;
          }
          want.push(...c, ys, yy);
          got.push(...s.c.subarray(seg * d.nCols, (seg + 1) * d.nCols), s.ysum[seg]!, s.yy[seg]!);
        }
        // sums of ≤ 700 O(1) terms, different summation order (and FFT for route 'fft'): 1e-10 absolute
        expectAllClose(got, want, { rtol: 1e-10, atol: 1e-10, label: `${route} shift ${k}` });
      });
    }
  });
});

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import {
  bootstrapStatistic, bootstrapTimecourse, bootstrapTimecourseDifference, intervalFromReplicates,
} from '../src/index.js';
import type { MomentStatistic } from '../src/index.js';
import { matrixOf, meanOf, plugInVariance } from './helpers.js';

// Reference: scipy 1.17 BCa jackknife accelerations per column; see fixtures/scipy/gen_bootstrap.py.
const fx = loadFixture('fixtures/scipy/bootstrap.json', import.meta.dirname);
const MA = matrixOf(fx.matrices.a as Float64Array[]);
const MB = matrixOf(fx.matrices.b as Float64Array[]);

function column(m: { data: Float64Array; rows: number; cols: number }, j: number): Float64Array {
  return Float64Array.from({ length: m.rows }, (_, i) => m.data[i * m.cols + j]!);
}

/** n trials × T bins of N(mu_j, 1) noise with a known mean curve mu. */
function noisy(n: number, T: number, seed: number, shift = 0): { data: Float64Array; rows: number; cols: number } {
  const r = rng(seed);
  const d = new Float64Array(n * T);
  for (let i = 0; i < n; i++) for (let j = 0; j < T; j++) d[i * T + j] = Math.sin(j / 3) + r.normal() + shift;
  return { data: d, rows: n, cols: T };
}

describe('bootstrapTimecourse', () => {
  it('gives scipy\'s jackknife acceleration per time bin for the mean and the plug-in variance', () => {
    const mean = bootstrapTimecourse(MA, { method: 'bca', resamples: 200 });
    const vari = bootstrapTimecourse(MA, { method: 'bca', resamples: 200, statistic: 'variance' });
    // Deterministic closed-form jackknife (leave-one-out moments); 1e-12 covers summation order.
    expectAllClose(mean.acceleration!, fx.matrices.meanAcceleration, { rtol: 1e-12, source: fx.source });
    expectAllClose(vari.acceleration!, fx.matrices.varianceAcceleration, { rtol: 1e-12, source: fx.source });
  });

  it('resamples exactly like the one-sample bootstrap with the same seed (one column: same replicates and interval)', () => {
    // bootstrapStatistic draws the same n indices per resample from stream 0 of the seed, so the
    // replicate means agree up to summation order (table sums vs a loop).
    const m = noisy(23, 1, 3);
    for (const method of ['percentile', 'bca'] as const) {
      const a = bootstrapTimecourse(m, { method, resamples: 999, seed: 4, keepReplicates: true });
      const b = bootstrapStatistic(column(m, 0), meanOf, { method, resamples: 999, seed: 4 });
      expectAllClose(a.replicates!.data, b.replicates, { rtol: 1e-13, atol: 1e-15 });
      expectAllClose([a.low[0]!, a.high[0]!], [b.low, b.high], { rtol: 1e-12, atol: 1e-14 });
    }
    const v = bootstrapTimecourse(m, { statistic: 'variance', resamples: 999, seed: 4 });
    const w = bootstrapStatistic(column(m, 0), plugInVariance, { method: 'percentile', resamples: 999, seed: 4 });
    expectAllClose([v.low[0]!, v.high[0]!], [w.low, w.high], { rtol: 1e-11 });
  });

  it('BCa band of each bin equals intervalFromReplicates on that bin\'s replicates', () => {
    const m = noisy(30, 6, 8);
    const r = bootstrapTimecourse(m, { method: 'bca', resamples: 1500, seed: 2, keepReplicates: true });
    for (let j = 0; j < 6; j++) {
      const reps = Float64Array.from({ length: 1500 }, (_, b) => r.replicates!.data[b * 6 + j]!);
      const x = column(m, j);
      const jack = Float64Array.from(x, (_, i) => (meanOf(x, 30) * 30 - x[i]!) / 29); // E&T: θ_(i) = (nθ̂ − xᵢ)/(n − 1)
      const ref = intervalFromReplicates(reps, { method: 'bca', estimate: r.estimate[j]!, jackknife: jack });
      expectAllClose([r.low[j]!, r.high[j]!], [ref.low, ref.high], { rtol: 1e-12 });
    }
  });

  it('is reproducible bit for bit for a seed, differs for another seed, and reports the seed', () => {
    const m = noisy(40, 50, 1);
    const a = bootstrapTimecourse(m, { seed: 12, resamples: 300 });
    const b = bootstrapTimecourse(m, { seed: 12, resamples: 300 });
    const c = bootstrapTimecourse(m, { seed: 13, resamples: 300 });
    expect(Array.from(a.low)).toEqual(Array.from(b.low));
    expect(Array.from(a.high)).toEqual(Array.from(b.high));
    expect(Array.from(a.low)).not.toEqual(Array.from(c.low));
    expect(a.seed).toBe(12);
  });

  it('covers a known mean in about 95% of bins × data sets (30 trials, normal noise; small coverage study)', () => {
    // Full study: test/coverage-study.ts (≥ 1000 data sets). Here 120 data sets × 20 bins = 2400
    // intervals with independent noise: binomial SE of the coverage ≈ 0.45%, so [93%, 97%] is
    // ±4.5 SE around 95% (n = 30 percentile intervals run slightly narrow, ~94%).
    let hitP = 0, hitB = 0, total = 0;
    for (let k = 0; k < 120; k++) {
      const m = noisy(30, 20, 1000 + k);
      const p = bootstrapTimecourse(m, { resamples: 1000, seed: k });
      const b = bootstrapTimecourse(m, { resamples: 1000, seed: k, method: 'bca' });
      for (let j = 0; j < 20; j++) {
        const mu = Math.sin(j / 3);
        if (p.low[j]! <= mu && mu <= p.high[j]!) hitP++;
        if (b.low[j]! <= mu && mu <= b.high[j]!) hitB++;
        total++;
      }
    }
    expect(hitP / total).toBeGreaterThanOrEqual(0.93);
    expect(hitP / total).toBeLessThanOrEqual(0.97);
    expect(hitB / total).toBeGreaterThanOrEqual(0.93);
    expect(hitB / total).toBeLessThanOrEqual(0.97);
  });

  it('gives a zero-width percentile band for constant data (property) and NaN + degenerate-bca for BCa', () => {
    fc.assert(fc.property(fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.integer({ min: 2, max: 30 }), fc.integer({ min: 1, max: 9 }), (c, n, T) => {
      const m = { data: new Float64Array(n * T).fill(c), rows: n, cols: T };
      const r = bootstrapTimecourse(m, { resamples: 40 });
      for (let j = 0; j < T; j++) expect(r.high[j]! - r.low[j]!).toBe(0);
    }), { seed: 3, numRuns: 40 });
    const bca = bootstrapTimecourse({ data: new Float64Array(20).fill(2), rows: 10, cols: 2 }, { method: 'bca', resamples: 100 });
    expect(bca.low[0]).toBeNaN();
    expect(bca.warnings.map((w) => w.code)).toEqual(expect.arrayContaining(['degenerate-bca', 'zero-acceleration']));
  });

  it('shifts the band by c when the data are shifted by c (property)', () => {
    fc.assert(fc.property(fc.double({ min: -100, max: 100, noNaN: true }), fc.integer({ min: 0, max: 1000 }), (c, seed) => {
      const a = bootstrapTimecourse(noisy(12, 5, seed), { resamples: 200, seed: 1 });
      const b = bootstrapTimecourse(noisy(12, 5, seed, c), { resamples: 200, seed: 1 });
      // Same resamples; only rounding of the shifted sums differs (|c| ≤ 100, values ~1).
      for (let j = 0; j < 5; j++) {
        expectAllClose(b.low[j]! - c, a.low[j]!, { atol: 1e-11, rtol: 0 });
        expectAllClose(b.high[j]! - c, a.high[j]!, { atol: 1e-11, rtol: 0 });
      }
    }), { seed: 21, numRuns: 30 });
  });

  it('accepts a custom moment statistic (third central moment) and keeps PeriEventMatrix offsets', () => {
    const third: MomentStatistic = { name: 'third moment', order: 3, evaluate: (m) => m[2]! - 3 * m[1]! * m[0]! + 2 * m[0]! ** 3 };
    const m = { ...noisy(25, 3, 4), offsets: Float64Array.from([-0.1, 0, 0.1]), kept: new Uint32Array(25) };
    const r = bootstrapTimecourse(m, { statistic: third, resamples: 500, seed: 3, method: 'bca' });
    // Plug-in third central moment Σ(x − x̄)³/n of each column (definition).
    for (let j = 0; j < 3; j++) {
      const x = column(m, j);
      const mu = meanOf(x, 25);
      expectAllClose(r.estimate[j]!, x.reduce((s, v) => s + (v - mu) ** 3, 0) / 25, { rtol: 1e-12, atol: 1e-14 });
    }
    expect(Array.from(r.offsets!)).toEqual([-0.1, 0, 0.1]);
    expect(r.statistic).toBe('third moment');
  });

  it('handles non-finite cells: NaN + warning (propagate), per-bin omission (omit), TF_NON_FINITE (error)', () => {
    const m = noisy(10, 4, 6);
    m.data[2 * 4 + 1] = NaN; // row 2, bin 1
    for (let i = 0; i < 10; i++) m.data[i * 4 + 3] = NaN; // bin 3 all NaN
    const p = bootstrapTimecourse(m, { resamples: 200 });
    expect(p.estimate[1]).toBeNaN();
    expect(p.low[3]).toBeNaN();
    expect(p.warnings.map((w) => w.code)).toContain('non-finite-columns');
    expect(Number.isFinite(p.low[0]!)).toBe(true);
    const o = bootstrapTimecourse(m, { resamples: 200, nan: 'omit' });
    const x = column(m, 1).filter((v) => !Number.isNaN(v));
    expectAllClose(o.estimate[1]!, meanOf(x, x.length), { rtol: 1e-14 }); // mean of the 9 finite trials
    expect(Number.isFinite(o.low[1]!)).toBe(true);
    expect(o.estimate[3]).toBeNaN();
    expect(Array.from(o.trialsPerBin[0]!)).toEqual([10, 9, 10, 0]);
    expect(o.warnings.map((w) => w.code)).toContain('too-few-trials-in-column');
    expect(() => bootstrapTimecourse(m, { nan: 'error' })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
  });

  it('rejects fewer than 2 trials, a malformed matrix and bad options with codes', () => {
    expect(() => bootstrapTimecourse({ data: new Float64Array(5), rows: 1, cols: 5 })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => bootstrapTimecourse({ data: new Float64Array(5), rows: 2, cols: 5 })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => bootstrapTimecourse(noisy(3, 2, 1), { method: 'bac' as 'bca' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => bootstrapTimecourse(noisy(3, 2, 1), { resampels: 5 } as object)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
    expect(() => bootstrapTimecourse(noisy(3, 2, 1), { statistic: 'median' as 'mean' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => bootstrapTimecourse(noisy(3, 2, 1), { threads: -1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => bootstrapTimecourse(noisy(3, 2, 1), { threads: 1.5 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('bootstrapTimecourseDifference', () => {
  it('gives scipy\'s two-sample jackknife acceleration per bin for a difference of means', () => {
    const r = bootstrapTimecourseDifference(MA, MB, { method: 'bca', resamples: 200 });
    expectAllClose(r.acceleration!, fx.matrices.differenceAcceleration, { rtol: 1e-12, source: fx.source });
    for (let j = 0; j < 5; j++) expectAllClose(r.estimate[j]!, meanOf(column(MA, j), 12) - meanOf(column(MB, j), 9), { rtol: 1e-13, atol: 1e-15 });
    expect(r.trials).toEqual([12, 9]);
  });
  it('has the standard error √(s²_a/n_a + s²_b/n_b) of independent means (plug-in variances, ±4% Monte Carlo)', () => {
    const a = noisy(30, 3, 1);
    const b = noisy(20, 3, 2);
    const r = bootstrapTimecourseDifference(a, b, { resamples: 8000, seed: 5 });
    for (let j = 0; j < 3; j++) {
      // Bootstrap variance of a mean = plug-in variance / n (E&T 1993, eq. 5.8 ideal bootstrap).
      const se = Math.sqrt(plugInVariance(column(a, j), 30) / 30 + plugInVariance(column(b, j), 20) / 20);
      expectAllClose(r.standardError[j]!, se, { rtol: 0.04 }); // SE of an SE at B = 8000 ≈ 0.8%
    }
  });
  it('rejects matrices with different numbers of bins (TF_SHAPE_MISMATCH)', () => {
    expect(() => bootstrapTimecourseDifference(noisy(5, 3, 1), noisy(5, 4, 1))).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('bootstrapTimecourse with too few resamples for the level', () => {
  it('warns (resamples-too-few-for-level) below B = 39 at 95 %, not at B = 39 (rule in bootstrap-statistic.test.ts)', () => {
    const r = rng(5);
    const m = matrixOf(Array.from({ length: 12 }, () => Array.from({ length: 4 }, () => r.normal())));
    const codes = (B: number) => bootstrapTimecourse(m, { resamples: B, seed: 1 }).warnings.map((w) => w.code);
    expect(codes(38)).toContain('resamples-too-few-for-level');
    expect(codes(39)).not.toContain('resamples-too-few-for-level');
  });
});

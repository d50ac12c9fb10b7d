import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { bootstrapStatistic, intervalFromReplicates, jackknife } from '../src/index.js';
import { correlation2, meanOf, plugInVariance } from './helpers.js';

// Reference: scipy 1.17 stats.bootstrap and its BCa routine; data of Efron & Tibshirani (1993)
// Tables 14.1 (spatial test A) and 3.1 (law school). See fixtures/scipy/gen_bootstrap.py.
const fx = loadFixture('fixtures/scipy/bootstrap.json', import.meta.dirname);
const A = fx.spatial.A as Float64Array;
const law = new Float64Array(30);
(fx.law.lsat as Float64Array).forEach((v, i) => { law[2 * i] = v; law[2 * i + 1] = (fx.law.gpa as Float64Array)[i]!; });
const LAW = { data: law, rows: 15, cols: 2 };

describe('jackknife', () => {
  it('gives the spatial-data acceleration a = 0.0612401198123 of the plug-in variance (INFERENCE.md §1.5; scipy)', () => {
    const j = jackknife(A, plugInVariance);
    // Deterministic: closed-form sums of 26 values; INFERENCE.md §1.5 prints 13 digits, the
    // scipy fixture full precision. 1e-12 covers summation order.
    expectAllClose(j.acceleration, fx.spatial.acceleration, { rtol: 1e-12, source: fx.source });
    expectAllClose(j.acceleration, 0.0612401198123, { rtol: 1e-11 }); // INFERENCE.md §1.5 (13 digits)
  });
  it('gives the law-school acceleration −0.075672 of the correlation of (LSAT, GPA) rows (INFERENCE.md §1.5; scipy)', () => {
    const j = jackknife(LAW, correlation2);
    expectAllClose(j.acceleration, fx.law.acceleration, { rtol: 1e-12, source: fx.source });
    expectAllClose(j.acceleration, -0.075672, { atol: 5e-7, rtol: 0 }); // INFERENCE.md §1.5, 6 digits
  });
  it('jackknife standard error of the mean equals s/√n (E&T 1993 §11.2, closed form)', () => {
    const j = jackknife(A, meanOf);
    const n = A.length;
    const m = meanOf(A, n);
    let ss = 0;
    for (const v of A) ss += (v - m) ** 2;
    expectAllClose(j.standardError, Math.sqrt(ss / (n - 1)) / Math.sqrt(n), { rtol: 1e-12 });
  });
  it('reports a zero spread (a = 0) for a constant statistic and throws TF_TOO_FEW_SAMPLES for one value', () => {
    const j = jackknife([1, 2, 3, 4], () => 5);
    expect(j.zeroSpread).toBe(true);
    expect(j.acceleration).toBe(0);
    expect(() => jackknife([1], meanOf)).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
  });
});

describe('intervalFromReplicates', () => {
  for (const [name, stat, data] of [['spatial (plug-in variance)', plugInVariance, A], ['law school (correlation)', correlation2, LAW]] as const) {
    it(`reproduces scipy's percentile and BCa 90% intervals from the same ${name} replicates`, () => {
      const f = name.startsWith('spatial') ? fx.spatial : fx.law;
      const j = jackknife(data, stat);
      const pct = intervalFromReplicates(f.replicates, { method: 'percentile', confidenceLevel: 0.9 });
      const bca = intervalFromReplicates(f.replicates, { method: 'bca', confidenceLevel: 0.9, estimate: f.estimate, jackknife: j.values });
      // Same replicates, same arithmetic (type-7 quantiles, z0 with ties as one half, AS 241):
      // only last-bit rounding of Φ⁻¹/Φ and the acceleration differ.
      expectAllClose([pct.low, pct.high], f.percentile, { rtol: 1e-13, source: fx.source });
      expectAllClose([bca.low, bca.high], f.bca, { rtol: 1e-12, source: fx.source });
    });
  }
  it('returns NaN with a degenerate-bca warning when all replicates are equal, and never switches method', () => {
    const r = intervalFromReplicates(new Float64Array(100).fill(3), { method: 'bca', estimate: 3, acceleration: 0.1 });
    expect(r.low).toBeNaN();
    expect(r.high).toBeNaN();
    expect(r.warnings.map((w) => w.code)).toContain('degenerate-bca');
  });
  it('returns NaN with a degenerate-bca warning when the estimate lies outside the replicates (z0 = ±∞)', () => {
    const r = intervalFromReplicates([1, 2, 3, 4], { method: 'bca', estimate: 10, acceleration: 0 });
    expect(r.z0).toBe(Infinity);
    expect(r.low).toBeNaN();
    expect(r.warnings.map((w) => w.code)).toContain('degenerate-bca');
  });
  it('sets a = 0 with a zero-acceleration warning when the jackknife values are all equal (INFERENCE.md §1.1)', () => {
    const r = intervalFromReplicates([1, 2, 3, 4, 5], { method: 'bca', estimate: 3, jackknife: [2, 2, 2] });
    expect(r.acceleration).toBe(0);
    expect(r.warnings.map((w) => w.code)).toContain('zero-acceleration');
    // With a = 0 and z0 = 0 (3 sits at the median: (2 + 3)/10 = ½) BCa equals the percentile interval.
    const p = intervalFromReplicates([1, 2, 3, 4, 5], { method: 'percentile' });
    expectAllClose([r.low, r.high], [p.low, p.high], { rtol: 1e-15 });
  });
  it('intervalFromReplicates(reps, { method: \'bca\', jackknife }) rejects a NaN or ±∞ jackknife value with its index', () => {
    // Before: the NaN made Σd² NaN, a became 0 and a BC interval (a number) came back under a
    // 'degenerate-bca' warning that said the interval was NaN.
    for (const [bad, index] of [[NaN, 2], [Infinity, 0], [-Infinity, 3]] as const) {
      const jack = [1, 2, 3, 4];
      jack[index] = bad;
      expect(() => intervalFromReplicates([1, 2, 3, 4, 5], { method: 'bca', estimate: 3, jackknife: jack }))
        .toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ option: 'jackknife', index }) }));
    }
  });
  it('flags 1 − a(z0 + z) ≤ 0 (bca-level-unstable) instead of returning a wrong bound', () => {
    const r = intervalFromReplicates([1, 2, 3, 4, 5, 6], { method: 'bca', estimate: 3.5, acceleration: 0.9 });
    expect(r.high).toBeNaN();
    expect(r.warnings.map((w) => w.code)).toContain('bca-level-unstable');
  });
  it('gives numpy type-7 quantiles for the percentile interval, to the last bit', () => {
    // numpy 2.4.6: np.quantile([5, 1, 4, 2, 3, 10, 7.], [q, 1 - q]).tolist() with q = (1 - 0.95)/2
    // = [1.1500000000000001, 9.549999999999999] (linear method, numpy's monotone _lerp).
    const r = intervalFromReplicates([5, 1, 4, 2, 3, 10, 7]);
    expectAllClose([r.low, r.high], [1.1500000000000001, 9.549999999999999], { rtol: 0 });
  });
});

describe('bootstrapStatistic', () => {
  it('spatial plug-in variance: 90% percentile and BCa within ±3% of the ideal (B → ∞) values and ±4% of E&T Table 14.2', () => {
    const pct = bootstrapStatistic(A, plugInVariance, { method: 'percentile', confidenceLevel: 0.9, resamples: 20000, seed: 11 });
    const bca = bootstrapStatistic(A, plugInVariance, { method: 'bca', confidenceLevel: 0.9, resamples: 20000, seed: 11 });
    // INFERENCE.md §1.5: ideal (numpy, B = 400,000) percentile (97.9, 235.7), BCa (115.9, 261.6), ±3%;
    // E&T Table 14.2 (B = 2000): percentile (100.8, 233.9), BCa (115.8, 259.6), ±4%.
    expectAllClose([pct.low, pct.high], [97.9, 235.7], { rtol: 0.03 });
    expectAllClose([bca.low, bca.high], [115.9, 261.6], { rtol: 0.03 });
    expectAllClose([pct.low, pct.high], [100.8, 233.9], { rtol: 0.04 });
    expectAllClose([bca.low, bca.high], [115.8, 259.6], { rtol: 0.04 });
    expectAllClose(bca.estimate, 171.534023668639, { rtol: 1e-13 }); // INFERENCE.md §1.5, deterministic
    expectAllClose(bca.acceleration, 0.0612401198123, { rtol: 1e-11 });
    // Ideal z0 ≈ 0.179 and SE ≈ 41.8: Monte Carlo error at B = 20000 is ~0.01 and ~0.2.
    expectAllClose(bca.z0, 0.179, { atol: 0.03, rtol: 0 });
    expectAllClose(bca.standardError, 41.8, { rtol: 0.02 });
  });
  it('law-school correlation: percentile and BCa at 90% and 95% within ±0.02 of the ideal values (paired rows)', () => {
    const ideal = { pct90: [0.524, 0.948], pct95: [0.460, 0.962], bca90: [0.429, 0.927], bca95: [0.334, 0.941] };
    for (const [lvl, key] of [[0.9, '90'], [0.95, '95']] as const) {
      // B = 40000: the BCa lower level at 95% is ~0.5%, whose quantile needs many replicates.
      const p = bootstrapStatistic(LAW, correlation2, { method: 'percentile', confidenceLevel: lvl, resamples: 40000, seed: 5 });
      const b = bootstrapStatistic(LAW, correlation2, { method: 'bca', confidenceLevel: lvl, resamples: 40000, seed: 5 });
      // INFERENCE.md §1.5 (numpy, B = 400,000), tolerance ±0.02.
      expectAllClose([p.low, p.high], ideal[`pct${key}`], { atol: 0.02, rtol: 0 });
      expectAllClose([b.low, b.high], ideal[`bca${key}`], { atol: 0.02, rtol: 0 });
      expectAllClose(b.standardError, 0.1334, { atol: 0.006, rtol: 0 }); // ideal SE 0.1334
    }
    expectAllClose(bootstrapStatistic(LAW, correlation2, { resamples: 10 }).estimate, 0.776374491289, { rtol: 1e-11 }); // r, INFERENCE.md §1.5
  });
  it('drops and counts non-finite replicates (a correlation of a resample repeating one pair is NaN)', () => {
    // Three pairs: a resample repeats one pair with probability 3·(1/3)³ = 1/9 (closed form).
    const small = { data: Float64Array.from([1, 2, 2, 3, 3, 7]), rows: 3, cols: 2 };
    const r = bootstrapStatistic(small, correlation2, { method: 'percentile', resamples: 9000, seed: 2 });
    expect(r.nonFinite + r.replicates.length).toBe(9000);
    expectAllClose(r.nonFinite / 9000, 1 / 9, { atol: 0.012, rtol: 0 }); // ±3.6 binomial SE
    expect(r.warnings.map((w) => w.code)).toContain('replicates-dropped');
  });
  it('is reproducible bit for bit for a seed and changes with the seed', () => {
    const a = bootstrapStatistic(A, plugInVariance, { resamples: 500, seed: 9 });
    const b = bootstrapStatistic(A, plugInVariance, { resamples: 500, seed: 9 });
    const c = bootstrapStatistic(A, plugInVariance, { resamples: 500, seed: 10 });
    expect(Array.from(a.replicates)).toEqual(Array.from(b.replicates));
    expect([a.low, a.high]).toEqual([b.low, b.high]);
    expect(Array.from(a.replicates)).not.toEqual(Array.from(c.replicates));
    expect(a.seed).toBe(9);
  });
  it('rejects fewer than 2 observations, a non-finite estimate and unknown options with codes', () => {
    expect(() => bootstrapStatistic([3], meanOf)).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => bootstrapStatistic([1, NaN, 2], meanOf)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
    expect(() => bootstrapStatistic([1, 2], meanOf, { resample: 10 } as object)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
    expect(() => bootstrapStatistic([1, 2], meanOf, { confidenceLevel: 1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
  it('gives a zero-width percentile interval for constant data (property)', () => {
    fc.assert(fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.integer({ min: 2, max: 40 }), (c, n) => {
      const r = bootstrapStatistic(new Float64Array(n).fill(c), meanOf, { method: 'percentile', resamples: 50 });
      expect(r.low).toBe(r.high);
    }), { seed: 17, numRuns: 40 });
  });
});

describe('resamples too few for the confidence level', () => {
  // Rule (common practice; from memory of Davison & Hinkley 1997 §4.2): a two-sided interval at
  // level 1 − α needs (B + 1)·α/2 ≥ 1 replicate in each tail, i.e. B ≥ 39 at 95 % and B ≥ 199 at 99 %.
  const codes = (w: readonly { code: string }[]) => w.map((x) => x.code);
  it('warns below B = 39 at 95 % and below B = 199 at 99 %, never at or above', () => {
    const reps = (B: number) => Float64Array.from({ length: B }, (_, i) => i);
    expect(codes(intervalFromReplicates(reps(38), { estimate: 19 }).warnings)).toContain('resamples-too-few-for-level');
    expect(codes(intervalFromReplicates(reps(39), { estimate: 19 }).warnings)).not.toContain('resamples-too-few-for-level');
    expect(codes(intervalFromReplicates(reps(198), { estimate: 99, confidenceLevel: 0.99 }).warnings)).toContain('resamples-too-few-for-level');
    expect(codes(intervalFromReplicates(reps(199), { estimate: 99, confidenceLevel: 0.99 }).warnings)).not.toContain('resamples-too-few-for-level');
    const w = intervalFromReplicates(reps(20), { estimate: 10 }).warnings.find((x) => x.code === 'resamples-too-few-for-level');
    expect(w?.details).toMatchObject({ resamples: 20, minimum: 39 });
  });
  it('bootstrapStatistic reports it for its own resamples', () => {
    const x = Float64Array.from({ length: 30 }, (_, i) => Math.sin(i));
    expect(codes(bootstrapStatistic(x, meanOf, { resamples: 20, seed: 1 }).warnings)).toContain('resamples-too-few-for-level');
    expect(codes(bootstrapStatistic(x, meanOf, { resamples: 2000, seed: 1 }).warnings)).not.toContain('resamples-too-few-for-level');
  });
});

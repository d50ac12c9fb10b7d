import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { monteCarloPValue, permutationTimecourse } from '../src/index.js';
import { matrixOf } from './helpers.js';

// Reference: scipy 1.17 stats.permutation_test with n_resamples=np.inf (exact); see fixtures/scipy/gen_permutation.py.
const fx = loadFixture('fixtures/scipy/permutation.json', import.meta.dirname);
// Reference: scipy 1.17 binomtest (sign test) and fisher_exact; see fixtures/scipy/gen_degenerate_permutation.py.
const dg = loadFixture('fixtures/scipy/degenerate_permutation.json', import.meta.dirname);

describe('permutationTimecourse', () => {
  it('exact sign flip of x = [1.2, 0.8, 2.1, −0.3, 1.5]: one-sided p 0.0625, two-sided 0.125 (INFERENCE.md §2.5; scipy)', () => {
    const x = { data: fx.signFlip.x as Float64Array, rows: 5, cols: 1 };
    const g = permutationTimecourse(x, null, { alternative: 'greater' });
    const t = permutationTimecourse(x, null, { alternative: 'two-sided' });
    const l = permutationTimecourse(x, null, { alternative: 'less' });
    // Exact enumeration (2⁵ = 32 sign vectors): p is k/32, compared exactly.
    expect(g.exact).toBe(true);
    expect(g.permutations).toBe(32);
    expect([g.pValue[0], t.pValue[0], l.pValue[0]]).toEqual([fx.signFlip.greater, fx.signFlip.twoSided, fx.signFlip.less]);
    expect([g.pValue[0], t.pValue[0]]).toEqual([0.0625, 0.125]); // INFERENCE.md §2.5
  });
  it('paired design equals scipy\'s exact permutation test of the paired t (permutation_type="samples")', () => {
    const a = matrixOf(fx.paired.a as Float64Array[]);
    const b = matrixOf(fx.paired.b as Float64Array[]);
    const g = permutationTimecourse(a, b, { design: 'paired', alternative: 'greater' });
    const l = permutationTimecourse(a, b, { design: 'paired', alternative: 'less' });
    expect(g.exact).toBe(true); // 2⁷ = 128 ≤ 5000
    expectAllClose(g.pValue, fx.paired.greater, { rtol: 1e-15, source: fx.source });
    expectAllClose(l.pValue, fx.paired.less, { rtol: 1e-15, source: fx.source });
  });
  it('independent design enumerates all C(9, 4) = 126 labellings like scipy (pooled-variance t)', () => {
    const a = matrixOf(fx.independent.a as Float64Array[]);
    const b = matrixOf(fx.independent.b as Float64Array[]);
    const g = permutationTimecourse(a, b, { alternative: 'greater' });
    const l = permutationTimecourse(a, b, { alternative: 'less' });
    expect(g.permutations).toBe(126);
    expectAllClose(g.t, fx.independent.t, { rtol: 1e-12, source: fx.source }); // scipy ttest_ind(equal_var=True)
    expectAllClose(g.pValue, fx.independent.greater, { rtol: 1e-15, source: fx.source });
    expectAllClose(l.pValue, fx.independent.less, { rtol: 1e-15, source: fx.source });
    expect(g.df).toBe(7);
  });
  it('uses (b + 1)/(m + 1) with random labellings, so p is never 0 (Phipson & Smyth 2010)', () => {
    const n = 40;
    const data = new Float64Array(n * 2);
    for (let i = 0; i < n; i++) { data[2 * i] = 5 + Math.sin(i); data[2 * i + 1] = Math.sin(3 * i); }
    const r = permutationTimecourse({ data, rows: n, cols: 2 }, null, { permutations: 999, seed: 2 });
    expect(r.exact).toBe(false);
    expect(r.permutations).toBe(999);
    expect(r.pValue[0]).toBe(1 / 1000); // no sign flip reaches |t| of a mean of 5 with sd 0.7
    expect(r.pValue[1]!).toBeGreaterThan(0.05);
    const again = permutationTimecourse({ data, rows: n, cols: 2 }, null, { permutations: 999, seed: 2 });
    expect(Array.from(again.pValue)).toEqual(Array.from(r.pValue));
  });
  it('permutationTimecourse(a) of bins whose trials all hold one non-zero value gives the sign-test p, never 0 or NaN', () => {
    // 5 trials; every column constant. Rounding makes the spread of such columns exactly 0, a tiny
    // positive or a tiny negative number depending on the value, so each value below takes one path
    // (t = ±∞, t ≈ 1e8, variance < 0): 5, 2.3, 0.1, −0.7.
    const values = [5, 2.3, 0.1, -0.7];
    const n = dg.signFlip.n as number;
    const m = { data: Float64Array.from({ length: n * values.length }, (_, k) => values[k % values.length]!), rows: n, cols: values.length };
    const two = permutationTimecourse(m, null, { alternative: 'two-sided' });
    const g = permutationTimecourse(m, null, { alternative: 'greater' });
    const l = permutationTimecourse(m, null, { alternative: 'less' });
    expect(two.exact).toBe(true);
    // Exact enumeration of 2⁵ sign vectors: only the identity and the full flip have zero spread, so the
    // p-values are k/32 exactly (sign test, scipy binomtest): compared to 1e-15 relative.
    const tol = { rtol: 1e-15, atol: 0, source: dg.source };
    expectAllClose(two.pValue, values.map(() => dg.signFlip.twoSided as number), tol);
    expectAllClose(g.pValue, values.map((v) => (v > 0 ? dg.signFlip.greater : dg.signFlip.less) as number), tol);
    expectAllClose(l.pValue, values.map((v) => (v > 0 ? dg.signFlip.less : dg.signFlip.greater) as number), tol);
    expect(Array.from(two.t)).toEqual(values.map((v) => (v > 0 ? Infinity : -Infinity))); // mean / 0
    expect(two.warnings).toEqual([]);
    // Paired: a − b is the same 0.3 in every trial (in floating point, not exactly).
    const b = matrixOf([[1.2], [3.4], [0.5], [2.2], [7.1]]);
    const a = matrixOf([[1.5], [3.7], [0.8], [2.5], [7.4]]);
    expectAllClose(permutationTimecourse(a, b, { design: 'paired' }).pValue, [dg.signFlip.twoSided as number], tol);
  });
  it('permutationTimecourse(a, b) of groups that each hold one repeated value gives Fisher\'s exact p, never 0 or NaN', () => {
    // [1, 1, 1] vs [0, 0, 0] (t = +∞ before rounding) and [0.2 ×3] vs [0.6 ×3] (rounding gave NaN).
    const a = matrixOf([[1, 0.2], [1, 0.2], [1, 0.2]]);
    const b = matrixOf([[0, 0.6], [0, 0.6], [0, 0.6]]);
    const two = permutationTimecourse(a, b, { design: 'independent' });
    const g = permutationTimecourse(a, b, { design: 'independent', alternative: 'greater' });
    expect(two.permutations).toBe(20); // C(6, 3)
    // k/20 exactly; Fisher's exact test of the 2 × 2 table (scipy fisher_exact).
    const tol = { rtol: 1e-15, atol: 0, source: dg.source };
    expectAllClose(two.pValue, [dg.independent.twoSided as number, dg.independent.twoSided as number], tol);
    expectAllClose(g.pValue[0]!, dg.independent.greater as number, tol);
    expect(Array.from(two.t)).toEqual([Infinity, -Infinity]);
    expect(two.warnings).toEqual([]);
    // A bin constant over both groups still has an undefined t.
    const flat = permutationTimecourse(matrixOf([[0.7], [0.7], [0.7]]), matrixOf([[0.7], [0.7], [0.7], [0.7]]));
    expect(flat.pValue[0]).toBeNaN();
    expect(flat.warnings.map((w) => w.code)).toEqual(['zero-variance-columns']);
  });
  it('marks non-finite bins NaN with a warning and rejects mismatched paired rows', () => {
    const m = { data: Float64Array.from([1, NaN, 2, 3, 0.5, 1, 2, 2]), rows: 4, cols: 2 };
    const r = permutationTimecourse(m);
    expect(r.pValue[1]).toBeNaN();
    expect(r.warnings.map((w) => w.code)).toContain('non-finite-columns');
    const flat = permutationTimecourse({ data: Float64Array.from([0, 1, 0, 2, 0, 3]), rows: 3, cols: 2 });
    expect(flat.pValue[0]).toBeNaN(); // bin 0 is all zeros: t = 0/0
    expect(flat.warnings.map((w) => w.code)).toContain('zero-variance-columns');
    expect(() => permutationTimecourse(m, { data: new Float64Array(6), rows: 3, cols: 2 }, { design: 'paired' }))
      .toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => permutationTimecourse(m, { data: new Float64Array(6), rows: 2, cols: 3 }))
      .toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('monteCarloPValue', () => {
  it('is (b + 1)/(m + 1) and rejects b > m', () => {
    expect(monteCarloPValue(0, 999)).toBe(0.001); // Phipson & Smyth (2010)
    expect(monteCarloPValue(49, 999)).toBe(0.05);
    expect(() => monteCarloPValue(5, 4)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

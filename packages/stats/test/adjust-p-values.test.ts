import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { adjustPValues, rejectHypotheses } from '../src/index.js';

// Reference: scipy 1.17 stats.false_discovery_control (BH, BY) and Holm (1979) in numpy;
// see fixtures/scipy/gen_adjust_p_values.py.
const fx = loadFixture('fixtures/scipy/adjust_p_values.json', import.meta.dirname);
const cases = fx.cases as { name: string; p: Float64Array; bh: Float64Array; by: Float64Array; holm: Float64Array }[];
const BH1995 = cases.find((c) => c.name === 'bh1995')!.p;

describe('adjustPValues', () => {
  for (const method of ['bh', 'by', 'holm'] as const) {
    it(`matches the reference ${method.toUpperCase()} values exactly (BH 1995 example, docstring, random with ties, m up to 300)`, () => {
      // Same arithmetic in the same order (p·(m/i), numpy pairwise Σ1/i for BY), so bit-identical.
      for (const c of cases) expectAllClose(adjustPValues(c.p, { method }), c[method], { rtol: 0, atol: 0, label: c.name, source: fx.source });
    });
  }
  it('gives the INFERENCE.md §2.5 Holm values for the BH (1995) example', () => {
    // INFERENCE.md §2.5 (numpy): 0.0015 0.0056 0.0247 0.114 0.2211 0.278 0.278 0.278 0.3213 1 …
    expectAllClose(adjustPValues(BH1995, { method: 'holm' }).slice(0, 10), [0.0015, 0.0056, 0.0247, 0.114, 0.2211, 0.278, 0.278, 0.278, 0.3213, 1], { rtol: 1e-12 });
  });
  it('reproduces its @example: adjustPValues([0.01, 0.04, 0.03]) = [0.03, 0.04, 0.04]', () => {
    // By hand (BH 1995 step-up): sorted 0.01·3/1 = 0.03, 0.03·3/2 = 0.045 → min with 0.04·3/3 = 0.04.
    expectAllClose(adjustPValues([0.01, 0.04, 0.03], { method: 'bh' }), [0.03, 0.04, 0.04], { rtol: 1e-15 });
  });
  it('excludes NaN from m and keeps input order', () => {
    const p = [0.04, NaN, 0.01, 0.03, NaN];
    const got = adjustPValues(p, { method: 'bh' });
    expect(got[1]).toBeNaN();
    expect(got[4]).toBeNaN();
    const ref = adjustPValues([0.04, 0.01, 0.03], { method: 'bh' }); // m = 3
    expectAllClose([got[0]!, got[2]!, got[3]!], ref, { rtol: 0 });
    expectAllClose(ref, [0.04, 0.03, 0.04], { rtol: 1e-15 }); // by hand: min(0.04·3/3, ·), 0.01·3/1, 0.03·3/2
  });
  it('is ≥ the raw p and monotone in the raw order for BH, BY and Holm (property)', () => {
    fc.assert(fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 60 }), fc.constantFrom('bh', 'by', 'holm'), (p, method) => {
      const q = adjustPValues(p, { method: method as 'bh' });
      const order = p.map((_, i) => i).sort((a, b) => p[a]! - p[b]!);
      for (let k = 0; k < p.length; k++) {
        expect(q[order[k]!]!).toBeGreaterThanOrEqual(p[order[k]!]!);
        expect(q[order[k]!]!).toBeLessThanOrEqual(1);
        if (k > 0) expect(q[order[k]!]!).toBeGreaterThanOrEqual(q[order[k - 1]!]!);
      }
    }), { seed: 42, numRuns: 200 });
  });
  it('rejects p outside [0, 1] with TF_BAD_VALUE naming the index', () => {
    expect(() => adjustPValues([0.1, 1.2])).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE', details: expect.objectContaining({ index: 1 }) }));
    expect(() => adjustPValues([0.1], { method: 'bonferroni' as 'bh' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('rejectHypotheses', () => {
  it('BH rejects 4 of the 15 BH (1995) p-values at q = 0.05 (cutoff p = 0.0095); Holm rejects 3', () => {
    const bh = rejectHypotheses(BH1995, { method: 'bh', level: 0.05 });
    expect(bh.count).toBe(4); // Benjamini & Hochberg (1995) worked example
    expect(Array.from(bh.rejected.slice(0, 5))).toEqual([1, 1, 1, 1, 0]);
    expect(rejectHypotheses(BH1995, { method: 'holm', level: 0.05 }).count).toBe(3); // INFERENCE.md §2.5
    expect(bh.tests).toBe(15);
  });
});

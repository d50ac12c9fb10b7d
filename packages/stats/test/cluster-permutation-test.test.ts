import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { clusterPermutationTest } from '../src/index.js';
import { matrixOf } from './helpers.js';

// Reference: exhaustive cluster-mass nulls written in numpy/scipy; see fixtures/scipy/gen_cluster.py.
const fx = loadFixture('fixtures/scipy/cluster.json', import.meta.dirname);
// Reference: scipy 1.17 binomtest (sign test); see fixtures/scipy/gen_degenerate_permutation.py.
const dg = loadFixture('fixtures/scipy/degenerate_permutation.json', import.meta.dirname);

describe('clusterPermutationTest', () => {
  it('INFERENCE.md §2.5 fixture: one cluster (samples 4–8) of mass 24.2564039996, exhaustive p = 2/64', () => {
    const f = fx.inference;
    const r = clusterPermutationTest(matrixOf(f.d as Float64Array[]));
    expectAllClose(r.t, f.t, { rtol: 1e-12, source: fx.source }); // scipy ttest_1samp
    expectAllClose(r.threshold, 2.5705818356363146, { rtol: 1e-13 }); // t_{0.975, 5}, INFERENCE.md §2.5 / §5.3
    expect(r.exact).toBe(true);
    expect(r.permutations).toBe(64);
    expect(r.clusters.length).toBe(1);
    const c = r.clusters[0]!;
    expect([c.start, c.end, c.sign]).toEqual([4, 8, 1]);
    expectAllClose(c.mass, 24.2564039996, { rtol: 1e-11 }); // INFERENCE.md §2.5 (10 decimals)
    expect(c.pValue).toBe(0.03125); // 2/64: the identity and the full flip
  });
  it('matches the exhaustive numpy null for positive and negative clusters (7 subjects, 128 sign vectors)', () => {
    const f = fx.twoSigns;
    const r = clusterPermutationTest(matrixOf(f.d as Float64Array[]));
    const want = f.clusters as { start: number; end: number; sign: number; mass: number; p: number }[];
    expect(r.clusters.map((c) => [c.start, c.end, c.sign])).toEqual(want.map((c) => [c.start, c.end, c.sign]));
    expectAllClose(r.clusters.map((c) => c.mass), want.map((c) => c.mass), { rtol: 1e-12, source: fx.source });
    expect(r.clusters.map((c) => c.pValue)).toEqual(want.map((c) => c.p));
  });
  it('matches the exhaustive numpy null of an independent 5 vs 5 design (252 labellings)', () => {
    const f = fx.independent;
    const r = clusterPermutationTest(matrixOf(f.a as Float64Array[]), matrixOf(f.b as Float64Array[]), { design: 'independent' });
    const want = f.clusters as { start: number; end: number; sign: number; mass: number; p: number }[];
    expect(r.permutations).toBe(252);
    expectAllClose(r.threshold, f.threshold, { rtol: 1e-13, source: fx.source });
    expect(r.clusters.map((c) => [c.start, c.end, c.sign])).toEqual(want.map((c) => [c.start, c.end, c.sign]));
    expectAllClose(r.clusters.map((c) => c.mass), want.map((c) => c.mass), { rtol: 1e-11, source: fx.source });
    expectAllClose(r.clusters.map((c) => c.pValue), want.map((c) => c.p), { rtol: 1e-14, source: fx.source });
  });
  it('Monte Carlo mode: p ≥ 1/(N + 1), null holds N maxima, reproducible, times from offsets', () => {
    const r0 = rng(8);
    const n = 20, T = 40;
    const a = new Float64Array(n * T), b = new Float64Array(n * T);
    for (let i = 0; i < n; i++) for (let j = 0; j < T; j++) {
      a[i * T + j] = (j >= 10 && j < 20 ? 1.5 : 0) + r0.normal();
      b[i * T + j] = r0.normal();
    }
    const offsets = Float64Array.from({ length: T }, (_, j) => -0.1 + j * 0.01);
    const A = { data: a, rows: n, cols: T, offsets, kept: new Uint32Array(n) };
    const r = clusterPermutationTest(A, { data: b, rows: n, cols: T }, { permutations: 499, seed: 3 });
    expect(r.exact).toBe(false);
    expect(r.nullDistribution.length).toBe(499);
    const main = r.clusters.find((c) => c.start <= 12 && c.end >= 17)!;
    expect(main.pValue).toBe(1 / 500);
    expectAllClose([main.startSec, main.endSec], [offsets[main.start]!, offsets[main.end]!], { rtol: 0 });
    const again = clusterPermutationTest(A, { data: b, rows: n, cols: T }, { permutations: 499, seed: 3 });
    expect(Array.from(again.nullDistribution)).toEqual(Array.from(r.nullDistribution));
  });
  it('a cluster of bins whose trials all hold one non-zero value (t = +∞, mass +∞) gets the sign-test p, not 0', () => {
    // 5 trials × 4 bins; bins 1–2 are 5 in every trial. Only the identity and the full flip give an
    // infinite cluster mass, so the exhaustive p is 2/32 (sign test, scipy binomtest), exact.
    const d = matrixOf([[0.3, 5, 5, -0.2], [-0.1, 5, 5, 0.4], [0.2, 5, 5, 0.1], [0.5, 5, 5, -0.3], [-0.4, 5, 5, 0.2]]);
    const r = clusterPermutationTest(d);
    expect(r.exact).toBe(true);
    expect(r.clusters.map((c) => [c.start, c.end, c.sign, c.mass])).toEqual([[1, 2, 1, Infinity]]);
    expectAllClose(r.clusters[0]!.pValue, dg.signFlip.twoSided as number, { rtol: 1e-15, atol: 0, source: dg.source });
  });
  it('one-sided alternatives keep only clusters of that sign; an explicit threshold overrides clusterAlpha', () => {
    const f = fx.twoSigns;
    const m = matrixOf(f.d as Float64Array[]);
    expect(clusterPermutationTest(m, null, { alternative: 'greater' }).clusters.every((c) => c.sign === 1)).toBe(true);
    expect(clusterPermutationTest(m, null, { alternative: 'less' }).clusters.every((c) => c.sign === -1)).toBe(true);
    expect(clusterPermutationTest(m, null, { threshold: 1e9 }).clusters.length).toBe(0);
    expect(() => clusterPermutationTest(m, null, { threshold: -1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

// Internal kernels of the Poisson GLM: the WebAssembly weighted Gram against the JavaScript loop
// and against the definition Σ_t w_t·x_t·x_tᵀ; the convolution structure (event terms, dense
// covariate columns, row-range restriction) against the sparse-row products.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { designMatrix } from '../src/index.js';
import type { EncodingDesign } from '../src/index.js';
import { gramWasm } from '../src/glm/gram-kernel.js';
import { predictEta, scoreOn, weightedGramJs } from '../src/glm/poisson-irls.js';
import type { PoissonProblem } from '../src/glm/poisson-irls.js';
import { convStructure } from '../src/glm/conv-structure.js';

function sameBits(a: Float64Array, b: Float64Array): boolean {
  return a.length === b.length && a.every((v, i) => Object.is(v, b[i]));
}

/** A random CSR design (ascending columns per row), its dense copy, weights and a row mask. */
function randomProblem(seed: number, n: number, p: number, density: number): { prob: PoissonProblem; dense: Float64Array; mu: Float64Array } {
  const r = rng(seed);
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [];
  const vals: number[] = [];
  const dense = new Float64Array(n * p);
  for (let t = 0; t < n; t++) {
    for (let j = 0; j < p; j++) {
      if (r.uniform() < density) {
        const v = r.normal();
        cols.push(j);
        vals.push(v);
        dense[t * p + j] = v;
      }
    }
    rowPtr[t + 1] = cols.length;
  }
  const mu = Float64Array.from({ length: n }, () => Math.exp(r.normal()));
  const rowValid = Uint8Array.from({ length: n }, () => (r.uniform() < 0.9 ? 1 : 0));
  const prob: PoissonProblem = { n, p, rowPtr, colIdx: Int32Array.from(cols), values: Float64Array.from(vals), y: mu, offset: 0, rowValid };
  return { prob, dense, mu };
}

describe('weighted Gram (WebAssembly kernel)', () => {
  it('gives the bits of the JavaScript loop for any rows, stride and mask', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 1000 }), fc.integer({ min: 1, max: 60 }), fc.integer({ min: 1, max: 12 }), fc.integer({ min: 1, max: 4 }), (seed, n, p, stride) => {
      const { prob, mu } = randomProblem(seed, n, p, 0.4);
      const cut = Math.floor(n / 3);
      const ranges = Int32Array.from([0, cut, Math.min(n, cut + 2), n]);
      const q1 = p + 1;
      const h1 = new Float64Array(q1 * q1).fill(0.25);
      const h2 = Float64Array.from(h1);
      weightedGramJs(prob, ranges, mu, h1, stride);
      expect(gramWasm(prob, ranges, mu, prob.rowValid, h2, stride)).toBe(true);
      return sameBits(h1, h2);
    }), { seed: 7, numRuns: 60 });
  });

  it('equals Σ w_t x_t x_tᵀ over the unmasked rows (definition)', () => {
    const { prob, dense, mu } = randomProblem(3, 200, 7, 0.5);
    const q1 = 8;
    const h = new Float64Array(q1 * q1);
    expect(gramWasm(prob, Int32Array.from([0, 200]), mu, prob.rowValid, h, 1)).toBe(true);
    const ref = new Float64Array(q1 * q1);
    for (let t = 0; t < 200; t++) {
      if (!prob.rowValid![t]) continue;
      const x = [1, ...dense.subarray(t * 7, t * 7 + 7)];
      for (let a = 0; a < q1; a++) for (let b = a; b < q1; b++) ref[a * q1 + b] = ref[a * q1 + b]! + mu[t]! * x[a]! * x[b]!;
    }
    // Upper triangle and row 0 are written; the definition sums in another order: rounding only.
    const upper = (m: Float64Array) => Array.from({ length: q1 * q1 }, (_, k) => (Math.floor(k / q1) <= k % q1 ? m[k]! : 0));
    expectAllClose(upper(h), upper(ref), { rtol: 1e-12, atol: 1e-12, source: 'definition of XᵀWX (common practice)' });
  });
});

describe('convolution structure of a design', () => {
  // Event kernels (dense enough to be convolved) and a lagged covariate (stored densely).
  const r = rng(11);
  const binRate = 50;
  const endSec = 120;
  const times = (k: number) => Float64Array.from({ length: k }, () => 1 + r.uniform() * (endSec - 3)).sort();
  const cov = Float64Array.from({ length: endSec * binRate }, () => r.normal());
  const design: EncodingDesign = designMatrix([
    { name: 'a', group: 'a', times: times(40) },
    { name: 'b', group: 'b', times: times(60), basis: { preSec: 0.5, nPreBumps: 1 } },
    { name: 'c', group: 'c', signal: { values: cov, sampleRate: binRate, t0: 0 }, lagsSec: [-0.1, 0.3], nBumps: 3 },
  ], { startSec: 0, endSec, binRate });
  const n = design.nRows;
  const s = convStructure(design, null, design);
  const y = Float64Array.from({ length: n }, () => (r.uniform() < 0.1 ? 1 : 0));
  const withS: PoissonProblem = { n, p: design.nCols, rowPtr: design.rowPtr, colIdx: design.colIdx, values: design.values, y, offset: -3, rowValid: null, structure: s };
  const plain: PoissonProblem = { ...withS, structure: null };
  const beta = Float64Array.from({ length: design.nCols + 1 }, (_, j) => (j === 0 ? -1 : 0.2 * Math.sin(j)));

  it('is used (event terms convolved, the covariate dense)', () => {
    expect(s).not.toBeNull();
    expect(s!.terms.length).toBeGreaterThan(0);
    expect(s!.dense?.cols.length).toBe(3);
  });

  it('gives the sparse-row η and score on any row range', () => {
    for (const [a, b] of [[0, n], [0, 700], [1234, 2500], [n - 300, n]] as const) {
      const ranges = Int32Array.from([a, b]);
      const e1 = new Float64Array(n);
      const m1 = new Float64Array(n);
      const e2 = new Float64Array(n);
      const m2 = new Float64Array(n);
      predictEta(withS, ranges, beta, e1, m1);
      predictEta(plain, ranges, beta, e2, m2);
      // Same sums in another order: rounding only (common practice).
      expectAllClose(e1.subarray(a, b), e2.subarray(a, b), { rtol: 1e-12, atol: 1e-12, source: 'sparse-row product' });
      const g1 = scoreOn(withS, ranges, m2).g;
      const g2 = scoreOn(plain, ranges, m2).g;
      expectAllClose(g1, g2, { rtol: 1e-10, atol: 1e-10, source: 'sparse-row product' });
    }
  });
});

describe('fixed-penalty scorer (WebAssembly SIMD kernel)', () => {
  it('gives the bits of the JavaScript loops', async () => {
    const { fitRidgeCV } = await import('../src/index.js');
    const { PREPARED } = await import('../src/ridge/fit-ridge-cv.js');
    const { FixedPenaltyScorer } = await import('../src/null/fixed-penalty-scorer.js');
    const r = rng(5);
    const times = (k: number) => Float64Array.from({ length: k }, () => 1 + r.uniform() * 290).sort();
    const design = designMatrix([
      { name: 'a', group: 'A', times: times(50) },
      { name: 'b', group: 'B', times: times(50) },
    ], { startSec: 0, endSec: 300, binRate: 20 });
    const y = Float64Array.from({ length: design.nRows }, () => r.normal());
    const fit = fitRidgeCV(design, [{ name: 'c', values: y }], { penalties: [0.1, 1], jackknifeBlocks: 0 });
    const prep = PREPARED.get(fit)!;
    const plan = prep.patterns[0]!.plan;
    const models = [0, 1, 2, 4];
    const rho = [0.1, 1, 0.1, 1];
    const simd = new FixedPenaltyScorer(plan, models, rho);
    const js = new FixedPenaltyScorer(plan, models, rho, false);
    const nSeg = prep.layout.cuts.length - 1;
    for (const count of [4, 3, 1]) {
      const cells = Array.from({ length: 4 }, () => ({
        c: Float64Array.from({ length: nSeg * design.nCols }, () => r.normal()),
        ysum: Float64Array.from({ length: nSeg }, () => r.normal()),
        yy: Float64Array.from({ length: nSeg }, () => 50 + r.uniform()),
      }));
      const o1 = Array.from({ length: 4 }, () => new Float64Array(models.length));
      const o2 = Array.from({ length: 4 }, () => new Float64Array(models.length));
      const s1 = new Float64Array(4);
      const s2 = new Float64Array(4);
      simd.scoreBatch(cells, count, o1, s1);
      js.scoreBatch(cells, count, o2, s2);
      for (let b = 0; b < count; b++) expect(sameBits(o1[b]!, o2[b]!)).toBe(true);
    }
  });
});

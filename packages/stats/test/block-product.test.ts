import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { bootstrapTimecourse } from '../src/index.js';
import { BLOCK, CountPlan } from '../src/internal/count-plan.js';
import { makeBlockSource } from '../src/internal/block-source.js';
import type { KernelChoice } from '../src/internal/block-source.js';
import { wasmModule } from '../src/internal/simd-kernel.js';
import { MEAN_SPEC, prepareCondition, runTimecourse } from '../src/internal/timecourse-engine.js';
import { multinomialPlan } from '../src/internal/count-plan.js';

// Reference: numpy 2.4 `W @ Y`; see fixtures/numpy/gen_block_product.py.
const fx = loadFixture('fixtures/numpy/block_product.json', import.meta.dirname);

interface Case { counts: Float64Array; y: Float64Array; rows: number; cols: number; resamples: number; product: Float64Array }

function planOf(counts: ArrayLike<number>, R: number, n: number): CountPlan {
  const plan = new CountPlan(R, n);
  const row = new Int32Array(n);
  for (let b = 0; b < R; b++) {
    for (let i = 0; i < n; i++) row[i] = counts[b * n + i]!;
    plan.set(b, row);
  }
  return plan;
}

/** The whole product R × cols (row-major) from a block source, block by block. */
function product(plan: CountPlan, y: Float64Array, cols: number, kernel: KernelChoice, threads: number): Float64Array {
  const R = plan.resamples;
  const out = new Float64Array(BLOCK * R);
  const src = makeBlockSource('test', [{ plan, y, out }], cols, kernel, threads);
  const w = new Float64Array(R * cols);
  for (let c0 = 0; c0 < cols; c0 += BLOCK) {
    const width = Math.min(BLOCK, cols - c0);
    src.fill(c0, width);
    for (let jj = 0; jj < width; jj++) for (let b = 0; b < R; b++) w[b * cols + c0 + jj] = out[jj * R + b]!;
  }
  src.close();
  return w;
}

/** Σ_i W[b, i]·Y[i, j] by the definition, in row order. */
function definition(counts: ArrayLike<number>, y: Float64Array, R: number, n: number, cols: number): Float64Array {
  const w = new Float64Array(R * cols);
  for (let b = 0; b < R; b++) for (let j = 0; j < cols; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += counts[b * n + i]! * y[i * cols + j]!;
    w[b * cols + j] = s;
  }
  return w;
}

function sameBits(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('resample product kernels (JS, WebAssembly SIMD, worker threads)', () => {
  it('compiles the WebAssembly SIMD kernel on Node 20 (else the SIMD checks below would test the JS path twice)', () => {
    expect(wasmModule()).not.toBeNull();
  });

  it('matches numpy W @ Y on multinomial and 0/1 count matrices, bit-identical across kernels and threads', () => {
    for (const name of ['multinomial', 'binary']) {
      const c = (fx.cases as Record<string, Case>)[name]!;
      const plan = planOf(c.counts, c.resamples, c.rows);
      const js = product(plan, c.y, c.cols, 'js', 1);
      // numpy's BLAS sums in another order; 37 terms of magnitude ≤ ~40 with integer weights: 1e-12 relative.
      expectAllClose(js, c.product, { rtol: 1e-12, atol: 1e-12, source: fx.source });
      expect(sameBits(product(plan, c.y, c.cols, 'simd', 1), js)).toBe(true);
      expect(sameBits(product(plan, c.y, c.cols, 'simd', 2), js)).toBe(true);
    }
  });

  it('gives the same bits in WebAssembly as in JS for random shapes and counts, within 1e-12 of the definition', () => {
    // Property: kernels agree exactly (same additions in the same order per column); both equal
    // Σ_i W[b,i]·Y[i,j] up to summation order (counts ≤ 9, ≤ 70 standard-normal terms).
    fc.assert(fc.property(
      fc.integer({ min: 1, max: 70 }), fc.integer({ min: 1, max: 23 }), fc.integer({ min: 1, max: 40 }),
      fc.integer({ min: 0, max: 2 ** 31 - 1 }), fc.boolean(),
      (n, cols, R, seed, binary) => {
        const r = rng(seed);
        const counts = new Int32Array(R * n);
        for (let k = 0; k < counts.length; k++) counts[k] = binary ? r.int(2) : r.uniform() < 0.1 ? 4 + r.int(6) : r.int(4);
        const y = new Float64Array(n * cols);
        r.fillNormal(y);
        const plan = planOf(counts, R, n);
        const js = product(plan, y, cols, 'js', 1);
        const simd = product(plan, y, cols, 'simd', 1);
        if (!sameBits(js, simd)) return false;
        const ref = definition(counts, y, R, n, cols);
        for (let k = 0; k < ref.length; k++) if (Math.abs(js[k]! - ref[k]!) > 1e-12 * (1 + Math.abs(ref[k]!)) * n) return false;
        return true;
      },
    ), { seed: 4242, numRuns: 40 });
  });

  it('gives the same bits when worker threads compute part of the blocks', async () => {
    const n = 150, cols = 1203, R = 400;
    const y = new Float64Array(n * cols);
    rng(3).fillNormal(y);
    const plan = multinomialPlan(rng(3).stream(0), R, n);
    const js = product(plan, y, cols, 'js', 1);
    product(plan, y, cols, 'simd', 2); // starts the worker
    await pause(300); // let it boot, so that it takes blocks in the next call
    expect(sameBits(product(plan, y, cols, 'simd', 2), js)).toBe(true);
  });
});

describe('bootstrapTimecourse (compute paths)', () => {
  it('returns identical bands with the JS kernel, the SIMD kernel and two threads', () => {
    const n = 41, cols = 403, R = 2000;
    const data = new Float64Array(n * cols);
    rng(11).fillNormal(data);
    const m = { data, rows: n, cols };
    const run = (kernel: KernelChoice, threads: number) => {
      const c = prepareCondition('t', 'matrix', m, MEAN_SPEC, 'propagate', multinomialPlan(rng(5).stream(0), R, n));
      return runTimecourse([c], { fn: 't', spec: MEAN_SPEC, bca: true, alpha: (1 - 0.95) / 2, keepReplicates: false, offsets: undefined, nan: 'propagate', kernel, threads });
    };
    const js = run('js', 1);
    for (const [kernel, threads] of [['simd', 1], ['simd', 2]] as const) {
      const r = run(kernel, threads);
      for (const k of ['estimate', 'low', 'high', 'standardError'] as const) expect(sameBits(r[k], js[k])).toBe(true);
    }
    // The public entry (default threads) draws the same plan from stream 0 of the seed.
    const pub = bootstrapTimecourse(m, { method: 'bca', resamples: R, seed: 5 });
    expect(sameBits(pub.low, js.low) && sameBits(pub.high, js.high)).toBe(true);
  });
});

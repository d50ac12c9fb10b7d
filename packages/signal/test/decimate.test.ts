import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { decimate } from '../src/index.js';

// Reference: scipy.signal.decimate (IIR, n = 8, zero phase), see fixtures/scipy/gen_decimate.py.
const fx = loadFixture('fixtures/scipy/decimate.json', here(import.meta.url));
const maxAbs = (a: ArrayLike<number>): number => Array.from(a).reduce((m, v) => Math.max(m, Math.abs(v)), 0);

describe('decimate', () => {
  it('matches scipy decimate for factors 2–13, zero-phase and causal', () => {
    for (const c of fx.cases) {
      const x = fx[c.input] as Float64Array;
      const y = decimate({ values: x, sampleRate: fx.fs, t0: 0 }, c.q, { zeroPhase: c.zeroPhase });
      // Order-8 Chebyshev sections, forward and backward: observed ≤ 3e-13; 1e-9 is the bound.
      expectAllClose(y.values, c.y, { rtol: 1e-9, atol: 1e-12 * maxAbs(c.y), label: `q=${c.q} ${c.input}`, source: fx.source });
      expect(y.sampleRate).toBe(fx.fs / c.q);
    }
  });

  it('reproduces the SIGNALS.md §1.4 check values', () => {
    const x = fx.check as Float64Array; // sin 2π3t + .2 sin 2π200t, fs = 1000, N = 2000
    const y = decimate({ values: x, sampleRate: 1000, t0: 0 }, 10).values;
    expect(y.length).toBe(200);
    // SIGNALS.md §1.4 [scipy], 10 decimals: atol 1e-10.
    expectAllClose([y[8]!, y[108]!, y[191]!], [0.9911754232, 0.9901887986, -0.982601354], { atol: 1e-10 });
  });

  it('splits factors above 13 into stages (100 = 10 × 10) and keeps t0', () => {
    const n = 20000;
    const x = Float64Array.from({ length: n }, (_, i) => Math.sin((2 * Math.PI * 0.5 * i) / 1000));
    const once = decimate(decimate({ values: x, sampleRate: 1000, t0: 3 }, 10), 10);
    const staged = decimate({ values: x, sampleRate: 1000, t0: 3 }, 100);
    expect(Array.from(staged.values)).toEqual(Array.from(once.values));
    expect(staged.sampleRate).toBe(10);
    expect(staged.t0).toBe(3);
  });

  it('rejects factors with a prime factor above 13 unless stages is single, and NaN input', () => {
    const x = new Float64Array(5000).fill(1);
    expect(() => decimate({ values: x, sampleRate: 1000, t0: 0 }, 17)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(decimate({ values: x, sampleRate: 1000, t0: 0 }, 17, { stages: 'single' }).values.length).toBe(295);
    x[10] = NaN;
    expect(() => decimate({ values: x, sampleRate: 1000, t0: 0 }, 2)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 10 }) }));
  });
});

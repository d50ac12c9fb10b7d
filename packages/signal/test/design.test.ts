import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { butterworth, chebyshev1 } from '../src/index.js';

const dir = here(import.meta.url);
// Reference: scipy.signal.butter, see fixtures/scipy/gen_butter.py (the JSON records the versions).
const fx = loadFixture('fixtures/scipy/butter.json', dir);

/** numpy allclose with rtol 1e-12 and atol 1e-15·max|expected|: both sides do the same double
 * arithmetic (observed worst 1e-14 relative); coefficients that are 0 in exact arithmetic come
 * out as ±1e-17 rounding residue on either side, hence the small absolute term. */
function closeCoefficients(actual: Float64Array, expected: Float64Array, label: string): void {
  let scale = 0;
  for (const v of expected) scale = Math.max(scale, Math.abs(v));
  expectAllClose(actual, expected, { rtol: 1e-12, atol: 1e-15 * scale, label, source: fx.source });
}

describe('butterworth', () => {
  it('matches scipy butter(..., output="sos") and output="ba" for orders 1–8, low/high/band-pass', () => {
    expect(fx.cases.length).toBe(8 * 14);
    for (const c of fx.cases) {
      const wn = Array.from(c.wn as Float64Array);
      const f = butterworth({ order: c.order, type: c.type, cutoffHz: c.type === 'bandpass' ? (wn as [number, number]) : wn[0]!, sampleRate: 2 });
      const label = `order ${c.order} ${c.type} Wn ${wn.join(',')}`;
      expect(f.sos.length).toBe(c.sos.length);
      closeCoefficients(f.sos, c.sos, `${label} sos`);
      closeCoefficients(f.b, c.b, `${label} b`);
      closeCoefficients(f.a, c.a, `${label} a`);
    }
  });

  it('takes cutoffs in Hz with a sample rate, as scipy butter(..., fs=fs)', () => {
    for (const c of fx.hz) {
      const hz = Array.from(c.cutoffHz as Float64Array);
      const f = butterworth({ order: c.order, type: c.type, cutoffHz: c.type === 'bandpass' ? (hz as [number, number]) : hz[0]!, sampleRate: c.fs });
      closeCoefficients(f.sos, c.sos, `${c.order} ${c.type} ${hz.join(',')} Hz sos`);
      closeCoefficients(f.b, c.b, `${c.order} ${c.type} b`);
      closeCoefficients(f.a, c.a, `${c.order} ${c.type} a`);
    }
  });

  it('reproduces the SIGNALS.md §1.3 check coefficients', () => {
    // SIGNALS.md §1.3 [scipy]: butter(2, .2) b and a (10 digits given, so rtol 1e-9).
    const f = butterworth({ order: 2, cutoffHz: 0.2, sampleRate: 2 });
    expectAllClose(f.b, [0.0674552739, 0.1349105478, 0.0674552739], { rtol: 1e-9 });
    expectAllClose(f.a, [1, -1.1429805025, 0.4128015981], { rtol: 1e-9 });
    // butter(4, 10, fs=1000, output='sos')[1] = [1, 2, 1, 1, −1.9492159580, .9530698953].
    const g = butterworth({ order: 4, cutoffHz: 10, sampleRate: 1000 });
    expectAllClose(g.sos.subarray(6, 12), [1, 2, 1, 1, -1.949215958, 0.9530698953], { rtol: 1e-9 });
  });

  it('reports scipy default pad lengths 9/12/15 for orders 2/3/4 (SIGNALS.md §1.3)', () => {
    expect([2, 3, 4].map((order) => butterworth({ order, cutoffHz: 20, sampleRate: 1000 }).padLen)).toEqual([9, 12, 15]);
  });

  it('rejects orders outside 1–8, cutoffs outside (0, Nyquist) and missing settings with codes', () => {
    expect(() => butterworth({ order: 9, cutoffHz: 10, sampleRate: 1000 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => butterworth({ order: 0, cutoffHz: 10, sampleRate: 1000 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => butterworth({ order: 2, cutoffHz: 500, sampleRate: 1000 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => butterworth({ order: 2, type: 'bandpass', cutoffHz: [30, 20], sampleRate: 1000 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => butterworth({ order: 2, cutoffHz: 10 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => butterworth({ order: 2, cutoffHz: 10, sampleRate: 1000, cutofHz: 3 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });
});

describe('chebyshev1', () => {
  // Reference: scipy.signal.cheby1, see fixtures/scipy/gen_decimate.py.
  const dx = loadFixture('fixtures/scipy/decimate.json', dir);
  it('matches scipy cheby1(8, 0.05, 0.8/q) used by decimate and other Chebyshev I designs', () => {
    for (const d of dx.designs) {
      const f = d.q !== undefined
        ? chebyshev1({ order: 8, rippleDb: 0.05, cutoffHz: 0.8 / d.q, sampleRate: 2 })
        : chebyshev1({ order: d.order, rippleDb: d.rippleDb, type: d.type, cutoffHz: d.type === 'bandpass' ? (Array.from(d.wn as Float64Array) as [number, number]) : d.wn[0], sampleRate: 2 });
      let scale = 0;
      for (const v of d.sos as Float64Array) scale = Math.max(scale, Math.abs(v));
      // Same arithmetic on both sides: rtol 1e-12; atol for exact zeros (see butterworth).
      expectAllClose(f.sos, d.sos, { rtol: 1e-12, atol: 1e-15 * scale, label: `cheby1 ${d.q ?? d.order}`, source: dx.source });
    }
  });
});

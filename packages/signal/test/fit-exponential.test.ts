import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { estimateBleaching, evaluateExponential, fitExponentialDecay } from '../src/index.js';
import { bleachedFraction } from '../src/bleaching/estimate-bleaching.js';

/** SIGNALS.md §1.5 check: t = arange(0, 1800, .1), F = .5 + .3e^(−t/100) + .2e^(−t/1000). */
function checkData(): { t: Float64Array; y: Float64Array } {
  const t = Float64Array.from({ length: 18000 }, (_, i) => i * 0.1);
  const y = Float64Array.from(t, (v) => 0.5 + 0.3 * Math.exp(-v / 100) + 0.2 * Math.exp(-v / 1000));
  return { t, y };
}

describe('fitExponentialDecay', () => {
  it('recovers (.3, 100, .2, 1000, .5) and the bleaching fraction of the SIGNALS.md §1.5 check', () => {
    const { t, y } = checkData();
    const f = fitExponentialDecay(t, y);
    // SIGNALS.md §1.5 [scipy curve_fit]: exact parameters (noise-free data), fraction .4669369116.
    // Noise-free data: the fit is exact to ~1e-12; 1e-8 relative leaves room for other platforms.
    expectAllClose([f.a, f.tau1, f.b, f.tau2, f.c], [0.3, 100, 0.2, 1000, 0.5], { rtol: 1e-8 });
    expectAllClose(f.fractionBleached, 0.4669369116, { atol: 1e-10 });
    expect(f.converged).toBe(true);
    expect(f.tauAtBound).toBe(false);
  });

  it('starts robustly: recovers a noisy double exponential whatever the scale of the data', () => {
    const g = rng(42);
    for (const scale of [1e-3, 1, 1e4]) {
      const t = Float64Array.from({ length: 3000 }, (_, i) => i * 0.5);
      const y = Float64Array.from(t, (v) => scale * (2 + 0.6 * Math.exp(-v / 40) + 0.4 * Math.exp(-v / 600) + 0.002 * g.normal()));
      const f = fitExponentialDecay(t, y);
      // Noise sd 0.1 % of F over 3000 points: time constants to a few percent (Monte-Carlo scale).
      expectAllClose([f.tau1, f.tau2], [40, 600], { rtol: 0.05 });
      expectAllClose([f.a / scale, f.b / scale, f.c / scale], [0.6, 0.4, 2], { rtol: 0.05 });
      expect(f.converged).toBe(true);
    }
  });

  it('flags a time constant at its bound instead of hiding it', () => {
    // A nearly linear decay over the span: the slow constant runs to the upper bound.
    const t = Float64Array.from({ length: 600 }, (_, i) => i);
    const y = Float64Array.from(t, (v) => 1 - 1e-4 * v + 0.2 * Math.exp(-v / 30));
    const f = fitExponentialDecay(t, y, { tauMaxSec: 2000 });
    expect(f.tauAtBound).toBe(true);
    expect(f.warnings.map((w) => w.code)).toContain('TAU_AT_BOUND');
  });

  it('fits a single exponential', () => {
    const t = Float64Array.from({ length: 500 }, (_, i) => i);
    const y = Float64Array.from(t, (v) => 3 + 2 * Math.exp(-v / 75));
    const f = fitExponentialDecay(t, y, { model: 'single' });
    expectAllClose([f.a, f.tau1, f.c], [2, 75, 3], { rtol: 1e-8 }); // noise-free: exact
    expect(f.b).toBe(0);
  });

  it('rejects too few or non-increasing times and NaN values', () => {
    expect(() => fitExponentialDecay([0, 1, 2], [1, 2, 3])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => fitExponentialDecay([0, 1, 1, 2, 3, 4], [1, 1, 1, 1, 1, 1])).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING' }));
    expect(() => fitExponentialDecay([0, 1, 2, 3, 4, 5], [1, 1, NaN, 1, 1, 1])).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
  });
});

describe('evaluateExponential', () => {
  it('evaluates the model relative to its origin', () => {
    const f = { model: 'double' as const, a: 1, tau1: 10, b: 2, tau2: 100, c: 3, originSec: 5 };
    expectAllClose(evaluateExponential(f, 15), 1 * Math.exp(-1) + 2 * Math.exp(-0.1) + 3, { rtol: 1e-15 });
  });
});

describe('estimateBleaching', () => {
  // 20 min at 100 Hz with a known double-exponential decay plus noise and a few transients.
  const fs = 100;
  const n = 120000;
  const g = rng(7);
  const truth = (t: number): number => 1.5 + 0.4 * Math.exp(-t / 90) + 0.3 * Math.exp(-t / 700);
  const x = Float64Array.from({ length: n }, (_, i) => {
    const t = i / fs;
    const bump = (i % 6000) < 100 ? 0.02 * Math.sin((Math.PI * (i % 6000)) / 100) : 0;
    return truth(t) * (1 + bump) + 0.01 * g.normal();
  });

  it('fits the low-passed, block-averaged copy and evaluates the baseline on the full grid', () => {
    const r = estimateBleaching({ values: x, sampleRate: fs, t0: 0 });
    // The baseline tracks the true decay to < 0.2 % everywhere (noise 0.7 %, averaged over blocks).
    let worst = 0;
    for (let i = 0; i < n; i += 97) worst = Math.max(worst, Math.abs(r.baseline.values[i]! / truth(i / fs) - 1));
    expect(worst).toBeLessThan(2e-3);
    // Fraction bleached: analytic 1 − truth(end)/truth(0) within 0.2 % of F.
    expectAllClose(r.fractionBleached, 1 - truth((n - 1) / fs) / truth(0), { atol: 2e-3 });
    expect(r.fit?.converged).toBe(true);
    expectAllClose(r.detrended.values[500]!, x[500]! - r.baseline.values[500]!, { rtol: 1e-15 });
  });

  it('gives the same fraction bleached without the full-grid baseline (the path siteQuality uses)', () => {
    for (const method of ['double-exponential', 'single-exponential'] as const) {
      const full = estimateBleaching({ values: x, sampleRate: fs, t0: 3.5 }, { method });
      const only = bleachedFraction({ values: x, sampleRate: fs, t0: 3.5 }, { method });
      expect(Object.is(only.fractionBleached, full.fractionBleached)).toBe(true);
    }
  });

  it("offers a high-pass alternative whose baseline also follows the decay", () => {
    const r = estimateBleaching({ values: x, sampleRate: fs, t0: 0 }, { method: 'highpass', cutoffHz: 0.005 });
    expect(r.fit).toBeNull();
    // A 0.005 Hz low-pass cannot follow the 90 s component exactly: within 2 % of F after the first 5 min.
    let worst = 0;
    for (let i = 30000; i < n - 30000; i += 101) worst = Math.max(worst, Math.abs(r.baseline.values[i]! / truth(i / fs) - 1));
    expect(worst).toBeLessThan(0.02);
  });

  it('offers an airPLS lower-envelope baseline that ignores the positive transients', () => {
    const r = estimateBleaching({ values: x, sampleRate: fs, t0: 0 }, { method: 'airpls', cutoffHz: 0.005 });
    // λ for a 0.005 Hz half-gain point cannot follow the 90 s decay at the very start: within 1 % of F after 2 min.
    let worst = 0;
    for (let i = 12000; i < n - 6000; i += 101) worst = Math.max(worst, Math.abs(r.baseline.values[i]! / truth(i / fs) - 1));
    expect(worst).toBeLessThan(0.01);
  });

  it('refuses NaN with the first index and time', () => {
    const bad = Float64Array.from(x);
    bad[12345] = NaN;
    expect(() => estimateBleaching({ values: bad, sampleRate: fs, t0: 0 })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 12345 }) }));
  });
});

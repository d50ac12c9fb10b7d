import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { deltaFOverF, fitControl } from '../src/index.js';

// Reference: the SIGNALS.md §1.6 IRLS specification implemented in numpy, see
// fixtures/numpy/gen_irls.py (np-spec), plus the check numbers printed in SIGNALS.md §1.6.
const fx = loadFixture('fixtures/numpy/irls.json', here(import.meta.url));
const { x, y } = fx.check as { x: Float64Array; y: Float64Array };

describe('fitControl', () => {
  it('OLS gives slope 2.04553442 and intercept 1.36726769 (SIGNALS.md §1.6, np.polyfit)', () => {
    const f = fitControl(y, x, { method: 'ols' });
    expectAllClose([f.slope, f.intercept], [2.04553442, 1.36726769], { atol: 5e-9 }); // 8 decimals given
    expectAllClose([f.slope, f.intercept], [fx.check.ols.slope, fx.check.ols.intercept], { rtol: 1e-12 });
    expect(f.iterations).toBe(0);
  });

  it('bisquare 4.685 gives (1.00506744, 1.99909406) in 8 iterations (SIGNALS.md §1.6)', () => {
    const f = fitControl(y, x, { method: 'bisquare' });
    expectAllClose([f.intercept, f.slope], [1.00506744, 1.99909406], { atol: 5e-9 });
    expect(f.iterations).toBe(8);
    expect(f.converged).toBe(true);
    expect(f.tuning).toBe(4.685);
  });

  it('Huber 1.345 gives (1.00918770, 1.99913751) in 9 iterations (SIGNALS.md §1.6)', () => {
    const f = fitControl(y, x, { method: 'huber' });
    expectAllClose([f.intercept, f.slope], [1.0091877, 1.99913751], { atol: 5e-9 });
    expect(f.iterations).toBe(9);
  });

  it('bisquare 1.4 needs 62 iterations; a cap of 20 reports non-convergence (SIGNALS.md §1.6)', () => {
    const f = fitControl(y, x, { method: 'bisquare', tuning: 1.4 });
    expectAllClose([f.intercept, f.slope], [1.0383049, 1.99797206], { atol: 5e-9 });
    expect(f.iterations).toBe(62);
    const g = fitControl(y, x, { method: 'bisquare', tuning: 1.4, maxIterations: 20 });
    expect(g.converged).toBe(false);
    expect(g.iterations).toBe(20);
  });

  it('matches the numpy specification to full precision on the check data and a 4001-sample trace', () => {
    for (const [data, fits] of [[fx.check, fx.check.fits], [fx.large, fx.large.fits]] as const) {
      for (const e of fits) {
        const f = fitControl(data.y, data.x, { method: e.method, tuning: e.tuning, maxIterations: e.maxIterations });
        // Same algorithm, different summation order (centred sums vs lstsq): rounding only.
        expectAllClose([f.intercept, f.slope], [e.intercept, e.slope], { rtol: 1e-11, label: `${e.method} ${e.tuning}`, source: fx.source });
        expect(f.iterations).toBe(e.iterations);
        expect(f.converged).toBe(e.converged);
      }
    }
  });

  it('fits data scaled by 2^200 or 2^−300 (squares overflow or underflow) as the numpy specification scaled alike', () => {
    // Scaling by a power of two is exact, so the reference is the fixture's line scaled exactly:
    // intercept·2^ky and slope·2^(ky − kx). Before: NaN intercept and slope at 2^200, TF_FIT_FAILED
    // ("all weights vanished") or TF_DEGENERATE_SIGNAL at 2^−300.
    const e = fx.check.fits.find((f: { method: string; tuning: number }) => f.method === 'bisquare' && f.tuning === 4.685);
    for (const [kx, ky] of [[200, 200], [-300, -300], [-300, 200]] as const) {
      const xs = Float64Array.from(x, (v) => v * 2 ** kx);
      const ys = Float64Array.from(y, (v) => v * 2 ** ky);
      for (const method of ['bisquare', 'ols'] as const) {
        const f = fitControl(ys, xs, { method });
        const ref = method === 'ols' ? fx.check.ols : e;
        // The stopping rule max|Δβ| < 1e-10·max(1, |β|) is not scale-invariant (the intercept
        // carries y's units), so on rescaled data IRLS may stop one iteration apart: agreement to
        // the rule's 1e-10, with headroom for the linear convergence of IRLS (OLS: rounding only).
        expectAllClose([f.intercept, f.slope], [ref.intercept * 2 ** ky, ref.slope * 2 ** (ky - kx)], { rtol: method === 'ols' ? 1e-11 : 1e-9, label: `${method} 2^${kx}, 2^${ky}`, source: fx.source });
        expect(f.scale).toBeGreaterThan(0);
        expect(Number.isFinite(f.olsRSquared)).toBe(true);
      }
    }
  });

  it('matches the numpy specification on a 200,001-sample trace, where the median and the sums share one pass', () => {
    // The input of gen_irls.py's `long` case, rebuilt with the same exactly rounded operations.
    const n = fx.long.n as number;
    const ctl = new Float64Array(n);
    const sig = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      ctl[i] = 1.0 + 0.05 * ((i % 17000) / 17000) + 0.01 * (((i * 7919) % 1000) / 1000 - 0.5);
      const j = i % 4000;
      sig[i] = 0.8 + 1.7 * ctl[i]! + 0.004 * (((i * 104729) % 997) / 997 - 0.5) + (j < 600 ? 0.05 * (1 - j / 600) : 0.0);
    }
    for (const e of fx.long.fits as { method: 'huber' | 'bisquare'; tuning: number; intercept: number; slope: number; iterations: number; downweighted: number }[]) {
      const f = fitControl(sig, ctl, { method: e.method, tuning: e.tuning });
      expectAllClose([f.intercept, f.slope], [e.intercept, e.slope], { rtol: 1e-11, label: `${e.method} ${e.tuning}`, source: fx.source });
      expect(f.iterations).toBe(e.iterations);
      // The fraction of weights below 0.5 in the last iteration, a count: exact.
      expect(f.downweighted).toBe(e.downweighted);
      // Every-other-sample fits take the same route on the strided samples.
      const g = fitControl(sig, ctl, { method: e.method, tuning: e.tuning, stride: 2 });
      const sub = (a: Float64Array) => a.filter((_, i) => i % 2 === 0);
      const h = fitControl(sub(sig), sub(ctl), { method: e.method, tuning: e.tuning });
      expect([g.intercept, g.slope, g.iterations, g.downweighted]).toEqual([h.intercept, h.slope, h.iterations, h.downweighted]);
    }
  });

  it('S = 2C + 0.1 gives ΔF/F ≡ 0 (SIGNALS.md §1.6)', () => {
    const c = Float64Array.from({ length: 200 }, (_, i) => 1 + 0.1 * Math.sin(i / 7) + 0.01 * Math.cos(i));
    const s = Float64Array.from(c, (v) => 2 * v + 0.1);
    const f = fitControl(s, c);
    const d = deltaFOverF(s, { intercept: f.intercept, slope: f.slope, control: c });
    // Exact linear relation: residuals are rounding (≈ 1e-16 of F).
    expectAllClose(d.values, new Float64Array(200), { atol: 1e-13 });
  });

  it('rejects a control with no variance, unequal lengths and NaN with codes', () => {
    const c = new Float64Array(100).fill(1.5);
    expect(() => fitControl(Float64Array.from(c, (v, i) => v + i), c)).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
    expect(() => fitControl(new Float64Array(10), new Float64Array(11))).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    const bad = Float64Array.from(x);
    bad[3] = NaN;
    expect(() => fitControl(y, bad)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 3 }) }));
  });
});

describe('deltaFOverF', () => {
  it('divides by the reference and refuses references ≤ 0 (NaN, counted)', () => {
    const r = deltaFOverF([1.1, 0.9, 2, 1], [1, 1, 0, -1]);
    expectAllClose(r.values.subarray(0, 2), [0.1, -0.1], { rtol: 1e-12 }); // (1.1 − 1)/1 in floating point
    expect(Number.isNaN(r.values[2]!) && Number.isNaN(r.values[3]!)).toBe(true);
    expect(r.nonPositiveReference).toBe(2);
  });

  it('accepts a fitted line and propagates NaN', () => {
    const r = deltaFOverF([3, NaN], { intercept: 1, slope: 2, control: [0.5, 0.5] });
    expect(r.values[0]).toBe(0.5); // (3 − 2)/2
    expect(Number.isNaN(r.values[1]!)).toBe(true);
    expect(r.nonPositiveReference).toBe(0);
  });
});

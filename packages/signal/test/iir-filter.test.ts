import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { lfilter, lfilterZi, sosfilt, sosfiltZi } from '../src/index.js';

// Reference: scipy.signal.sosfilt / lfilter / sosfilt_zi / lfilter_zi, see fixtures/scipy/gen_filtfilt.py.
const fx = loadFixture('fixtures/scipy/filtfilt.json', here(import.meta.url));
const x = (fx.x as Float64Array).subarray(0, 200);
const maxAbs = (a: Float64Array): number => a.reduce((m, v) => Math.max(m, Math.abs(v)), 0);

describe('sosfiltZi', () => {
  it('matches scipy sosfilt_zi', () => {
    for (const c of fx.zi_cases) {
      // 2 × 2 solves per section: differences are rounding only (observed ≤ 4e-15).
      expectAllClose(sosfiltZi(c.sos), c.sosfilt_zi, { rtol: 1e-12, atol: 1e-15, label: `${c.order} ${c.type}`, source: fx.source });
    }
  });
});

describe('lfilterZi', () => {
  it('matches scipy lfilter_zi, including the ill-conditioned 8-pole band-pass', () => {
    for (const c of fx.zi_cases) {
      // The 8-pole case has cond(I − Aᵀ) ≈ 2e7, so LAPACK's solve carries ~3e-11 relative error
      // (checked against exact rational arithmetic); ours is refined in doubled precision. 1e-9
      // is the bound and still far below any wrong-state error (O(1)).
      expectAllClose(lfilterZi(c.b, c.a), c.lfilter_zi, { rtol: 1e-9, atol: 1e-15, label: `${c.order} ${c.type}`, source: fx.source });
    }
  });

  it('normalises by a[0] and pads unequal lengths as scipy', () => {
    // scipy: lfilter_zi([0.5, 0.25], [2, -0.5, 0.1]) — exact binary fractions.
    expectAllClose(lfilterZi(fx.extra_zi.b, fx.extra_zi.a), fx.extra_zi.zi, { rtol: 1e-14 });
  });
});

describe('sosfilt', () => {
  it('matches scipy sosfilt from rest and from zi·x[0], with its final state', () => {
    for (const c of fx.zi_cases) {
      const zi = sosfiltZi(c.sos).map((v) => v * x[0]!);
      const r = sosfilt(c.sos, x, { zi });
      // Identical operation order to scipy's Cython loop: agreement to a few ulps.
      expectAllClose(r.y, c.sosfilt_y, { rtol: 1e-12, atol: 1e-14 * maxAbs(c.sosfilt_y), source: fx.source });
      expectAllClose(r.state, c.sosfilt_zf, { rtol: 1e-12, atol: 1e-14 * maxAbs(c.sosfilt_zf), source: fx.source });
      expectAllClose(sosfilt(c.sos, x).y, c.sosfilt_rest_y, { rtol: 1e-12, atol: 1e-14 * maxAbs(c.sosfilt_rest_y), source: fx.source });
    }
  });

  it('refuses NaN input with TF_NON_FINITE naming the first bad index', () => {
    const bad = Float64Array.from(x);
    bad[17] = NaN;
    bad[40] = NaN;
    expect(() => sosfilt(fx.zi_cases[0].sos, bad)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 17 }) }));
  });

  it('rejects sections whose a0 is not 1', () => {
    expect(() => sosfilt([1, 0, 0, 2, 0, 0], x)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('lfilter', () => {
  it('matches scipy lfilter with zi·x[0] and its final state', () => {
    for (const c of fx.zi_cases) {
      const zi = lfilterZi(c.b, c.a).map((v) => v * x[0]!);
      const r = lfilter(c.b, c.a, x, { zi });
      // The (b, a) form of an 8-pole band-pass amplifies the ~1e-11 zi differences above; the
      // bound 1e-9·max|y| is the tolerance (observed 3e-12).
      expectAllClose(r.y, c.lfilter_y, { rtol: 1e-9, atol: 1e-9 * maxAbs(c.lfilter_y), label: `${c.order} ${c.type}`, source: fx.source });
      expectAllClose(r.state, c.lfilter_zf, { rtol: 1e-9, atol: 1e-9 * maxAbs(c.lfilter_zf), source: fx.source });
    }
  });

  it('filters an impulse into the impulse response (b for an FIR filter)', () => {
    // Analytic: with a = [1], lfilter returns the convolution of x with b.
    const r = lfilter([0.5, 0.25, 0.125], [1], [1, 0, 0, 0, 0]);
    expect(Array.from(r.y)).toEqual([0.5, 0.25, 0.125, 0, 0]);
  });
});

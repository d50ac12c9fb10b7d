import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { butterworth, filtfilt, sosfiltfilt, zeroPhasePlan } from '../src/index.js';

// Reference: scipy.signal.sosfiltfilt / filtfilt, see fixtures/scipy/gen_filtfilt.py.
const fx = loadFixture('fixtures/scipy/filtfilt.json', here(import.meta.url));
const maxAbs = (a: ArrayLike<number>): number => Array.from(a).reduce((m, v) => Math.max(m, Math.abs(v)), 0);

/** SIGNALS.md §1.3 check input: x = sin 2π5t + .5 sin 2π50t, t = arange(1000)/1000. */
function checkSignal(): Float64Array {
  const x = new Float64Array(1000);
  for (let i = 0; i < 1000; i++) {
    const t = i / 1000;
    x[i] = Math.sin(2 * Math.PI * 5 * t) + 0.5 * Math.sin(2 * Math.PI * 50 * t);
  }
  return x;
}

describe('sosfiltfilt', () => {
  it('matches scipy sosfiltfilt for orders 1–8 and every pad type', () => {
    for (const c of fx.sos_cases) {
      const y = sosfiltfilt(c.sos, fx.x, { padType: c.padType, padLen: c.padLen });
      // Two IIR passes: observed ≤ 4e-12 relative; 1e-9 (the bound) still catches a wrong
      // initial state or pad (errors of order 1e-2 at the edges).
      expectAllClose(y, c.y, { rtol: 1e-9, atol: 1e-12 * maxAbs(c.y), label: `${c.order} ${c.type} ${c.padType} ${String(c.padLen)}`, source: fx.source });
    }
  });

  it('reproduces the SIGNALS.md §1.3 check values', () => {
    const sos = butterworth({ order: 4, cutoffHz: 20, sampleRate: 1000 });
    const y = sosfiltfilt(sos, checkSignal());
    // SIGNALS.md §1.3 [scipy], 10 decimals given: atol 1e-10.
    expectAllClose([y[0]!, y[1]!, y[250]!, y[999]!], [-0.02739859, -0.0046795412, 0.9999854122, -0.2790915664], { atol: 1e-10 });
    const yn = sosfiltfilt(sos, checkSignal(), { padType: 'none' });
    expectAllClose([yn[0]!, yn[999]!], [0.1538115016, -0.6278564938], { atol: 1e-10 });
  });

  it('has gain 0.5 at the cutoff and −3 dB at 17.918 Hz for butter(4, 20 Hz) (SIGNALS.md §1.3)', () => {
    // Steady-state gain of a long sine: its amplitude in the middle of the output by projection
    // onto sin and cos over a whole number of periods (edges excluded).
    const sos = butterworth({ order: 4, cutoffHz: 20, sampleRate: 1000 });
    const gain = (f: number): number => {
      const n = 40000;
      const x = new Float64Array(n);
      for (let i = 0; i < n; i++) x[i] = Math.sin((2 * Math.PI * f * i) / 1000);
      const y = sosfiltfilt(sos, x);
      const periods = Math.floor((20000 * f) / 1000);
      const m = Math.round((periods * 1000) / f);
      let s = 0;
      let c = 0;
      for (let i = 10000; i < 10000 + m; i++) {
        s += y[i]! * Math.sin((2 * Math.PI * f * i) / 1000);
        c += y[i]! * Math.cos((2 * Math.PI * f * i) / 1000);
      }
      return (2 / m) * Math.hypot(s, c);
    };
    expectAllClose(gain(20), 0.5, { atol: 1e-6 });
    expectAllClose(gain(17.918), Math.SQRT1_2, { atol: 2e-4 }); // 17.918 is given to 3 decimals
  });

  it('needs more samples than padLen: length 15 fails, 16 works for order 4 (SIGNALS.md §1.3)', () => {
    const sos = butterworth({ order: 4, cutoffHz: 20, sampleRate: 1000 });
    expect(() => sosfiltfilt(sos, new Float64Array(15).fill(1))).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(sosfiltfilt(sos, new Float64Array(16).fill(1)).length).toBe(16);
  });

  it('refuses NaN with TF_NON_FINITE naming the first NaN', () => {
    const x = checkSignal();
    x[321] = NaN;
    expect(() => sosfiltfilt(butterworth({ order: 2, cutoffHz: 20, sampleRate: 1000 }), x)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 321 }) }));
  });

  const lp = butterworth({ order: 4, cutoffHz: 30, sampleRate: 1000 });
  const arbSignal = fc.integer({ min: 40, max: 400 }).chain((n) => fc.float64Array({ minLength: n, maxLength: n, noNaN: true, noDefaultInfinity: true, min: -1e3, max: 1e3 }));

  it('keeps a constant signal constant (unit DC gain)', () => {
    fc.assert(fc.property(fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.integer({ min: 16, max: 2000 }), (c, n) => {
      // Constants pass exactly up to rounding of the steady-state start (analytic: H(1) = 1).
      expectAllClose(sosfiltfilt(lp, new Float64Array(n).fill(c)), new Float64Array(n).fill(c), { rtol: 1e-9, atol: 1e-9 });
    }), { seed: 7, numRuns: 60 });
  });

  it('is linear: filter(αx + βy) = α·filter(x) + β·filter(y)', () => {
    fc.assert(fc.property(arbSignal, fc.double({ min: -10, max: 10, noNaN: true }), fc.double({ min: -10, max: 10, noNaN: true }), (x, a, b) => {
      const y = Float64Array.from(x, (v, i) => Math.cos(i) * 100 - v);
      const lhs = sosfiltfilt(lp, Float64Array.from(x, (v, i) => a * v + b * y[i]!));
      const fx1 = sosfiltfilt(lp, x);
      const fy1 = sosfiltfilt(lp, y);
      const rhs = Float64Array.from(fx1, (v, i) => a * v + b * fy1[i]!);
      // Rounding of sums of terms up to 1e4: absolute 1e-8.
      expectAllClose(lhs, rhs, { rtol: 1e-9, atol: 1e-8 });
    }), { seed: 11, numRuns: 40 });
  });

  it('is time-reversal symmetric: filtfilt(reverse(x)) = reverse(filtfilt(x)) away from the ends', () => {
    const longSignal = fc.integer({ min: 1100, max: 3000 }).chain((n) => fc.float64Array({ minLength: n, maxLength: n, noNaN: true, noDefaultInfinity: true, min: -1e3, max: 1e3 }));
    fc.assert(fc.property(longSignal, fc.constantFrom('odd', 'even', 'constant', 'none'), (x, padType) => {
      const n = x.length;
      const a = sosfiltfilt(lp, Float64Array.from(x).reverse(), { padType: padType as 'odd' });
      const b = sosfiltfilt(lp, x, { padType: padType as 'odd' }).reverse();
      // The forward and backward passes are LTI and commute; only their start transients differ,
      // and those decay geometrically (for this 30 Hz / 1 kHz design below 1e-12 of the signal
      // scale after 500 samples). Near the ends the two orders legitimately differ (O(signal)).
      const scale = Math.max(1, Array.from(x).reduce((m, v) => Math.max(m, Math.abs(v)), 0));
      expectAllClose(a.subarray(500, n - 500), b.subarray(500, n - 500), { atol: 1e-10 * scale });
    }), { seed: 5, numRuns: 30 });
  });
});

describe('filtfilt', () => {
  it('matches scipy filtfilt for (b, a) designs and pad types', () => {
    for (const c of fx.ba_cases) {
      const y = filtfilt(c.b, c.a, fx.x, { padType: c.padType, padLen: c.padLen });
      // Observed ≤ 7e-12; 1e-9 is the bound.
      expectAllClose(y, c.y, { rtol: 1e-9, atol: 1e-12 * maxAbs(c.y), label: `${c.order} ${c.type} ${c.padType}`, source: fx.source });
    }
  });

  it('agrees with sosfiltfilt within 4e-12 on the SIGNALS.md §1.3 check', () => {
    const f = butterworth({ order: 4, cutoffHz: 20, sampleRate: 1000 });
    const x = checkSignal();
    // SIGNALS.md §1.3: "filtfilt(b, a) matches within 4e-12".
    expectAllClose(filtfilt(f.b, f.a, x), sosfiltfilt(f, x), { atol: 4e-12 });
  });
});

describe('zeroPhasePlan', () => {
  it('gives the same result on reuse and in place, as a one-off sosfiltfilt', () => {
    const f = butterworth({ order: 3, cutoffHz: 40, sampleRate: 1000 });
    const plan = zeroPhasePlan(f, { padType: 'even' });
    const x = checkSignal();
    const ref = sosfiltfilt(f, x, { padType: 'even' });
    expect(Array.from(plan.apply(x))).toEqual(Array.from(ref));
    expect(Array.from(plan.apply(x))).toEqual(Array.from(ref));
    const inPlace = Float64Array.from(x);
    plan.apply(inPlace, inPlace);
    expect(Array.from(inPlace)).toEqual(Array.from(ref));
    expect(plan.padLen).toBe(12);
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { butterworth, filterSignal, sosfilt, sosfiltZi, sosfiltfilt } from '../src/index.js';

function sine(n: number, fs: number): Float64Array {
  return Float64Array.from({ length: n }, (_, i) => Math.sin((2 * Math.PI * 3 * i) / fs) + 0.1 * Math.cos(i));
}

describe('filterSignal', () => {
  const lp = butterworth({ order: 4, cutoffHz: 20, sampleRate: 1000 });

  it('equals sosfiltfilt for gap-free data and keeps the clock', () => {
    const x = sine(2000, 1000);
    const r = filterSignal({ values: x, sampleRate: 1000, t0: 12.5 }, lp);
    expect(Array.from(r.signal.values)).toEqual(Array.from(sosfiltfilt(lp, x)));
    expect(r.signal.t0).toBe(12.5);
    expect(r.segments).toBe(1);
  });

  it("causal phase equals sosfilt started from the first sample's steady state", () => {
    const x = sine(500, 1000);
    const zi = sosfiltZi(lp).map((v) => v * x[0]!);
    const r = filterSignal({ values: x, sampleRate: 1000, t0: 0 }, lp, { phase: 'causal' });
    expect(Array.from(r.signal.values)).toEqual(Array.from(sosfilt(lp, x, { zi }).y));
  });

  it('refuses a NaN run with TF_NON_FINITE naming the first index and its time', () => {
    const x = sine(2000, 1000);
    x.fill(NaN, 700, 720);
    expect(() => filterSignal({ values: x, sampleRate: 1000, t0: 2 }, lp)).toThrow(
      expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 700, time: 2.7 }) }),
    );
  });

  it("with nan: 'split' filters each finite run separately, keeps the gap NaN and reports the repair", () => {
    const x = sine(2000, 1000);
    x.fill(NaN, 700, 720);
    x.fill(NaN, 1990, 1995); // leaves a 5-sample run at the end, too short for padLen 15
    const r = filterSignal({ values: x, sampleRate: 1000, t0: 0 }, lp, { nan: 'split' });
    // Reference: each run filtered on its own by sosfiltfilt (scipy-checked elsewhere).
    expect(Array.from(r.signal.values.subarray(0, 700))).toEqual(Array.from(sosfiltfilt(lp, x.subarray(0, 700))));
    expect(Array.from(r.signal.values.subarray(720, 1990))).toEqual(Array.from(sosfiltfilt(lp, x.subarray(720, 1990))));
    expect(r.signal.values.subarray(700, 720).every(Number.isNaN)).toBe(true);
    expect(r.signal.values.subarray(1995).every(Number.isNaN)).toBe(true);
    expect(r.segments).toBe(2);
    expect(r.warnings.map((w) => w.code)).toEqual(['GAPS_SPLIT', 'SHORT_RUNS_BLANKED']);
  });

  it('rejects a filter designed for another sample rate', () => {
    expect(() => filterSignal({ values: sine(100, 500), sampleRate: 500, t0: 0 }, lp)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });

  it('keeps a constant signal constant (DC gain 1) in both phases', () => {
    const x = new Float64Array(300).fill(3.25);
    for (const phase of ['zero', 'causal'] as const) {
      // Steady-state starts make the constant pass exactly up to rounding.
      expectAllClose(filterSignal({ values: x, sampleRate: 1000, t0: 0 }, lp, { phase }).signal.values, x, { rtol: 1e-12 });
    }
  });
});

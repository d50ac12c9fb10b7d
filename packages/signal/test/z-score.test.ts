import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { MAD_TO_SD, zScore } from '../src/index.js';

const sig = (v: number[], fs = 1, t0 = 0) => ({ values: Float64Array.from(v), sampleRate: fs, t0 });

describe('zScore', () => {
  it('robust z uses 1.4826·MAD: z(100) = 65.42550576901992 for [1, 2, 3, 4, 100] (SIGNALS.md §1.7)', () => {
    const r = zScore(sig([1, 2, 3, 4, 100]), { method: 'robust' });
    // scipy.stats.median_abs_deviation(x, scale='normal') = 1.482602218505602 [scipy].
    expectAllClose(r.scale, 1.482602218505602, { rtol: 1e-15 });
    expectAllClose(r.signal.values[4]!, 65.42550576901992, { rtol: 1e-15 });
    expectAllClose(MAD_TO_SD, 1.482602218505602, { rtol: 1e-15 });
  });

  it('session z with divisor n − correction: 1.99934286 (ddof 0) and 1.78826662 (ddof 1) (SIGNALS.md §1.7)', () => {
    expectAllClose(zScore(sig([1, 2, 3, 4, 100])).signal.values[4]!, 1.99934286, { atol: 5e-9 });
    expectAllClose(zScore(sig([1, 2, 3, 4, 100]), { correction: 1 }).signal.values[4]!, 1.78826662, { atol: 5e-9 });
  });

  it('baseline z uses mean and sd of the window only', () => {
    // Window [0, 4) s at 1 Hz → samples 0..3 = [1, 2, 3, 4]: mean 2.5, population sd √1.25.
    const r = zScore(sig([1, 2, 3, 4, 100]), { method: 'baseline', baselineSec: [0, 4] });
    expectAllClose([r.center, r.scale], [2.5, Math.sqrt(1.25)], { rtol: 1e-15 });
    expect(r.nUsed).toBe(4);
  });

  it('floors the scale and reports it', () => {
    const r = zScore(sig([1, 1, 1, 1]), { minScale: 0.5 });
    expect(r.floored).toBe(true);
    expect(Array.from(r.signal.values)).toEqual([0, 0, 0, 0]);
  });

  it('NaN propagates by default and is omitted on request', () => {
    expect(Number.isNaN(zScore(sig([1, NaN, 3])).center)).toBe(true);
    const r = zScore(sig([1, NaN, 3]), { nan: 'omit' });
    expect(r.nUsed).toBe(2);
    expect(r.center).toBe(2);
  });

  it('rejects a baseline method without a window and a window outside the trace', () => {
    expect(() => zScore(sig([1, 2, 3]), { method: 'baseline' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => zScore(sig([1, 2, 3]), { method: 'baseline', baselineSec: [10, 20] })).toThrow(expect.objectContaining({ code: 'TF_WINDOW_OUT_OF_RANGE' }));
  });
});

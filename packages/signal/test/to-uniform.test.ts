import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { toUniform } from '../src/index.js';

describe('toUniform', () => {
  it('interpolates linearly onto the grid and reports the jitter', () => {
    // Values on a line v = 2t + 1 are reproduced exactly by linear interpolation; jitter values are
    // the offsets we added (hand-derived: max 0.0003 s, RMS √(Σd²/n)).
    const offsets = [0, 0.0002, -0.0003, 0.0001, 0, -0.0002, 0.0003, 0, 0.0001, 0];
    const t = Float64Array.from(offsets, (d, i) => i * 0.01 + d);
    const v = Float64Array.from(t, (x) => 2 * x + 1);
    const r = toUniform({ values: v, timestamps: t }, { sampleRate: 100 });
    expect(r.signal.values.length).toBe(10);
    expectAllClose(r.signal.values, Float64Array.from({ length: 10 }, (_, k) => 2 * (k * 0.01) + 1), { rtol: 1e-12 });
    expectAllClose(r.jitter.maxSec, 0.0003, { rtol: 1e-9 });
    const rms = Math.sqrt(offsets.reduce((s, d) => s + d * d, 0) / offsets.length);
    expectAllClose(r.jitter.rmsSec, rms, { rtol: 1e-9 });
    expect(r.gaps).toEqual([]);
  });

  it('infers the rate from the median interval and reports gaps with dropped samples', () => {
    const t = Float64Array.from([0, 0.1, 0.2, 0.3, 0.6, 0.7, 0.8]); // 2 samples missing after 0.3
    const r = toUniform({ values: Float64Array.from(t), timestamps: t });
    expect(r.inferredRate).toBe(true);
    expectAllClose(r.signal.sampleRate, 10, { rtol: 1e-12 });
    expect(r.gaps.length).toBe(1);
    expect(r.gaps[0]).toMatchObject({ index: 3, missingSamples: 2 });
    expect(r.droppedSamples).toBe(2);
    // Samples inside the gap are NaN by default…
    expect(Array.from(r.signal.values.subarray(4, 6)).every(Number.isNaN)).toBe(true);
    expect(r.warnings.map((w) => w.code)).toContain('GAPS_MARKED_NAN');
    // …or linearly interpolated on request.
    const s = toUniform({ values: Float64Array.from(t), timestamps: t }, { gaps: 'interpolate' });
    expectAllClose(s.signal.values.subarray(4, 6), [0.4, 0.5], { rtol: 1e-12 });
  });

  it('rejects non-monotonic and duplicate timestamps with the offending index', () => {
    const v = new Float64Array(4);
    expect(() => toUniform({ values: v, timestamps: Float64Array.of(0, 0.1, 0.05, 0.2) })).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING', details: expect.objectContaining({ index: 2 }) }));
    expect(() => toUniform({ values: v, timestamps: Float64Array.of(0, 0.1, 0.1, 0.2) })).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING', details: expect.objectContaining({ index: 2 }) }));
  });

  it('rejects unequal lengths', () => {
    expect(() => toUniform({ values: new Float64Array(3), timestamps: Float64Array.of(0, 1) })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

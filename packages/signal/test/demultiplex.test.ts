import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { demultiplexFrames } from '../src/index.js';

describe('demultiplexFrames', () => {
  it('splits interleaved frames and interpolates the control onto signal times (SIGNALS.md §1.2)', () => {
    // SIGNALS.md §1.2 [scipy np.interp]: frames [10,2,11,3,12,2,13,4], 10 ms apart → signal
    // [10,11,12,13] at 0/20/40/60 ms; control there [2, 2.5, 2.5, 3], the first extrapolated.
    const t = Float64Array.from({ length: 8 }, (_, i) => i * 0.01);
    const r = demultiplexFrames({ values: Float64Array.of(10, 2, 11, 3, 12, 2, 13, 4), timestamps: t }, [1, 2, 1, 2, 1, 2, 1, 2]);
    expect(Array.from(r.signal.values)).toEqual([10, 11, 12, 13]);
    expectAllClose(r.signal.timestamps, [0, 0.02, 0.04, 0.06], { rtol: 1e-12 });
    expectAllClose(r.control.values, [2, 2.5, 2.5, 3], { rtol: 1e-12 });
    expect(Array.from(r.extrapolated)).toEqual([1, 0, 0, 0]);
    expect(r.warnings.map((w) => w.code)).toContain('CONTROL_EXTRAPOLATED');
  });

  it('reads the phase from the state column, so a dropped frame does not swap channels', () => {
    // Frame 2 (a signal frame) dropped: states [1,2,2,1,2] still assign every frame correctly.
    const t = Float64Array.of(0, 0.01, 0.03, 0.04, 0.05);
    const r = demultiplexFrames({ values: Float64Array.of(10, 2, 3, 12, 2), timestamps: t }, [1, 2, 2, 1, 2]);
    expect(Array.from(r.signal.values)).toEqual([10, 12]);
    expect(Array.from(r.controlFrames.values)).toEqual([2, 3, 2]);
    expect(r.warnings.map((w) => w.code)).toContain('REPEATED_STATES');
  });

  it('subtracts the dark level interpolated to each frame', () => {
    // Cycle signal, control, dark: dark rises linearly 1 → 1.3, so at a frame halfway the subtracted level is the midpoint.
    const t = Float64Array.from({ length: 6 }, (_, i) => i * 0.01);
    const r = demultiplexFrames({ values: Float64Array.of(11, 6, 1.1, 11.3, 6.4, 1.4), timestamps: t }, [1, 2, 3, 1, 2, 3], { darkState: 3 });
    expect(r.darkSubtracted).toBe(true);
    // Signal frames at 0 and 30 ms: dark at 0 is clamped to 1.1, at 30 ms interpolates to 1.2.
    expectAllClose(r.signal.values, [11 - 1.1, 11.3 - 1.2], { rtol: 1e-12 });
  });

  it('rejects missing channels, unequal lengths and non-increasing timestamps with codes', () => {
    const t = Float64Array.of(0, 0.01, 0.02);
    expect(() => demultiplexFrames({ values: Float64Array.of(1, 2, 3), timestamps: t }, [1, 1, 1])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => demultiplexFrames({ values: Float64Array.of(1, 2, 3), timestamps: t }, [1, 2])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => demultiplexFrames({ values: Float64Array.of(1, 2, 3), timestamps: Float64Array.of(0, 0.01, 0.01) }, [1, 2, 1])).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING', details: expect.objectContaining({ index: 2 }) }));
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { firstMovementAfter, lickBouts, movementOnsets, wheelVelocity } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
const sg = loadFixture('scipy/savgol.json', fixtures);
const on = loadFixture('numpy/onset.json', fixtures);
const wheel = { values: on.v as Float64Array, sampleRate: on.fs as number, t0: 0 };

describe('wheelVelocity', () => {
  // Reference: scipy.signal.savgol_filter (scipy 1.17.1), fixtures/scipy/gen_savgol.py.
  it('wheelVelocity equals savgol_filter(pos, w, 2, deriv=1, delta=1/fs) for 51- and 11-sample windows, ends included', () => {
    const pos = { values: sg.pos, sampleRate: sg.fs, t0: 0 };
    // Sums of ≤ 51 integer-valued terms scaled by 1/(Σk²·Δt): agreement to ~1e-12 relative, and
    // scipy's edge polyfit (lstsq) vs our normal equations to ~1e-9 absolute on values ≲ 1e3.
    expectAllClose(wheelVelocity(pos, { windowSec: 0.051 }).values, sg.d51, { rtol: 1e-10, atol: 1e-8, source: sg.source });
    expectAllClose(wheelVelocity(pos, { windowSec: 0.011 }).values, sg.d11, { rtol: 1e-10, atol: 1e-8, source: sg.source });
  });

  it('wheelVelocity gives savgol_filter(t**2, 11, 2, deriv=1, delta=.01)[50] = 1.0 (SIGNALS.md 3.4)', () => {
    const t = Float64Array.from({ length: 101 }, (_, i) => (i / 100) ** 2);
    const v = wheelVelocity({ values: t, sampleRate: 100, t0: 0 }, { windowSec: 0.11 });
    expectAllClose(v.values[50]!, 1.0, { rtol: 1e-12, source: 'SIGNALS.md 3.4 [scipy]' });
    expectAllClose(v.values, sg.checkT2, { rtol: 1e-10, atol: 1e-10, source: sg.source });
  });

  it('wheelVelocity interpolates irregular encoder timestamps (numpy.interp) onto the grid: a ramp has constant speed', () => {
    // Position = 3·t logged at irregular times; linear interpolation is exact for a line, so the
    // derivative is 3 everywhere (analytic), scaled by `scale`.
    const ts = Float64Array.of(0, 0.013, 0.02, 0.051, 0.052, 0.09, 0.13, 0.2, 0.25, 0.3);
    const v = wheelVelocity({ values: ts.map((t) => 3 * t), timestamps: ts }, { windowSec: 0.011, scale: 2 });
    expect(v.sampleRate).toBe(1000);
    expect(v.values.length).toBe(301);
    expectAllClose(v.values, new Float64Array(301).fill(6), { rtol: 1e-9, source: 'analytic' });
  });

  it('wheelVelocity rejects non-increasing timestamps (TF_IRREGULAR_SAMPLING) and too short records (TF_TOO_FEW_SAMPLES)', () => {
    expect(() => wheelVelocity({ values: Float64Array.of(0, 1, 2), timestamps: Float64Array.of(0, 0.2, 0.1) })).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING' }));
    expect(() => wheelVelocity({ values: new Float64Array(5), sampleRate: 1000, t0: 0 })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
  });
});

describe('movementOnsets', () => {
  // Reference: SIGNALS.md §3.4 check [np-spec]; trace from fixtures/numpy/gen_onset.py.
  it('movementOnsets finds the crossing at 1.06 s and refines the onset to 1.00 s (v_on = 5.5)', () => {
    const r = movementOnsets(wheel, { onThreshold: 5.5, offThreshold: 2 });
    expect(r.onsets.length).toBe(1);
    expectAllClose(r.crossings, [1.06], { rtol: 1e-15, source: 'SIGNALS.md 3.4' });
    expectAllClose(r.onsets, [1.0], { rtol: 1e-15, source: 'SIGNALS.md 3.4' });
    // Vigour is the trace's peak speed, 20 (plateau of the np.interp ramp).
    expectAllClose(r.vigour, [20], { rtol: 1e-12, source: 'gen_onset.py trace' });
  });

  it("movementOnsets with refine: 'off-threshold' stops at the last sample below off, with 'none' at the crossing", () => {
    // v(1.01) = 1 < 2 ≤ v(1.02): the rise starts at 1.01 s.
    expectAllClose(movementOnsets(wheel, { onThreshold: 5.5, offThreshold: 2, refine: 'off-threshold' }).onsets, [1.01], { rtol: 1e-15, source: 'gen_onset.py trace' });
    expectAllClose(movementOnsets(wheel, { onThreshold: 5.5, offThreshold: 2, refine: 'none' }).onsets, [1.06], { rtol: 1e-15, source: 'gen_onset.py trace' });
  });

  it('movementOnsets requires quiescence before and a hold after the crossing', () => {
    // Needs 1.5 s of stillness but the trace is still only from 0 to 1.01 s: no onset.
    const q = movementOnsets(wheel, { onThreshold: 5.5, offThreshold: 2, quietSec: 1.5 });
    expect(q.onsets.length).toBe(0);
    expect(q.nNoQuiescence).toBe(1);
    // A 30 ms blip above threshold is not a movement with holdSec 0.05.
    const x = new Float64Array(300);
    for (let i = 100; i < 103; i++) x[i] = 10;
    const h = movementOnsets({ values: x, sampleRate: 100, t0: 0 }, { onThreshold: 5.5, offThreshold: 2 });
    expect(h.onsets.length).toBe(0);
  });

  it("movementOnsets removes gravity from accelerometer magnitude with baseline 'median' and robust thresholds", () => {
    // 1 g ± a deterministic ±0.01 g wobble, one bout of +0.3 g from 2.00 s to 2.50 s (100 Hz).
    const x = Float64Array.from({ length: 500 }, (_, i) => 1 + 0.01 * Math.sin(i * 2.1) + (i >= 200 && i < 250 ? 0.3 : 0));
    const r = movementOnsets({ values: x, sampleRate: 100, t0: 0 }, { baseline: 'median', refine: 'off-threshold' });
    expect(r.onsets.length).toBe(1);
    // Onset = last still sample before the bout (1.99 s); crossing at the first bout sample (2.00 s).
    expectAllClose(r.onsets, [1.99], { rtol: 1e-12, source: 'construction' });
    expectAllClose(r.crossings, [2.0], { rtol: 1e-12, source: 'construction' });
    // Vigour: peak |x − median| = 0.3 + the wobble at the peak sample (≤ 0.01) ± the median's offset.
    expectAllClose(r.vigour[0]!, 0.3, { atol: 0.02, source: 'construction' });
  });

  it("movementOnsets refuses 'robust' thresholds on an exactly still signal (TF_DEGENERATE_SIGNAL) and NaN samples (TF_NON_FINITE)", () => {
    expect(() => movementOnsets(wheel)).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
    const x = Float64Array.of(0, 1, NaN, 0);
    expect(() => movementOnsets({ values: x, sampleRate: 100, t0: 0 }, { onThreshold: 1, offThreshold: 0.5 })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
    expect(() => movementOnsets(wheel, { onThreshold: 1, offThreshold: 2 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('firstMovementAfter', () => {
  it('firstMovementAfter reports the first onset after each event, or NaN with a reason', () => {
    const r = firstMovementAfter(wheel, [0.5, 1.5, 2.5, NaN, 9], { onThreshold: 5.5, offThreshold: 2 });
    expectAllClose(r.onsets, [1.0, NaN, NaN, NaN, NaN], { rtol: 1e-15, source: 'SIGNALS.md 3.4' });
    expectAllClose(r.latencies[0]!, 0.5, { rtol: 1e-12, source: 'SIGNALS.md 3.4' });
    expect(r.status).toEqual(['ok', 'no-quiescence', 'no-movement', 'missing-time', 'outside-recording']);
  });

  it('firstMovementAfter searches only maxLatencySec after the event', () => {
    const r = firstMovementAfter(wheel, [0.5], { onThreshold: 5.5, offThreshold: 2, maxLatencySec: 0.3 });
    expect(r.status).toEqual(['no-movement']);
  });

  it('firstMovementAfter rejects unsorted events with TF_BAD_EVENTS', () => {
    expect(() => firstMovementAfter(wheel, [1, 0.5], { onThreshold: 5.5, offThreshold: 2 })).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
  });
});

describe('lickBouts', () => {
  // Reference: SIGNALS.md §3.5 check [numpy].
  const licks = [0, 0.14, 0.28, 0.42, 1.5, 1.63, 3, 3.12, 3.25, 3.4, 3.52];

  it('lickBouts with gap 0.5 s finds [0–0.42, n = 4], [1.5–1.63, n = 2], [3–3.52, n = 5]', () => {
    const r = lickBouts(licks, { gapSec: 0.5 });
    expect(Array.from(r.starts)).toEqual([0, 1.5, 3]);
    expect(Array.from(r.ends)).toEqual([0.42, 1.63, 3.52]);
    expect(Array.from(r.counts)).toEqual([4, 2, 5]);
  });

  it('lickBouts with minLicks = 3 drops the middle bout', () => {
    const r = lickBouts(licks, { gapSec: 0.5, minLicks: 3 });
    expect(Array.from(r.counts)).toEqual([4, 5]);
    expect(r.nShortBouts).toBe(1);
  });

  it('lickBouts sorts unsorted licks and drops chatter and duplicates, reporting both repairs', () => {
    const messy = [3.52, 0, 0.14, 0.14, 0.28, 0.42, 0.45, 1.5, 1.63, 3, 3.12, 3.25, 3.4];
    const r = lickBouts(messy, { gapSec: 0.5 });
    expect(Array.from(r.counts)).toEqual([4, 2, 5]);
    expect(r.nChatter).toBe(2);
    expect(r.warnings.map((w) => w.code)).toEqual(['licks-sorted', 'lick-chatter']);
  });

  it('lickBouts rejects NaN lick times with TF_BAD_EVENTS', () => {
    expect(() => lickBouts([0, NaN, 1])).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS', details: expect.objectContaining({ index: 1 }) }));
  });
});

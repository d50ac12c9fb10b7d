import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { consecutiveThresholdRuns, significantRunsFromInterval, significantRunsFromPValues } from '../src/index.js';

// Reference: the consecutive-threshold rule as defined by Jean-Richard-dit-Bressel, Clifford &
// McNally (2020): only runs of ≥ k consecutive candidate samples count. Expected runs are read
// off the constructed inputs by hand.

describe('consecutiveThresholdRuns', () => {
  it('keeps runs of at least ⌈minRunSec·rate⌉ same-sign samples and reports onset, offset and sign', () => {
    //                 0  1  2  3  4  5  6  7  8  9 10 11 12 13
    const c = Int8Array.from([0, 1, 1, 1, 0, 1, 1, -1, -1, -1, -1, 0, 1, 1]);
    const r = consecutiveThresholdRuns(c, { minRunSec: 0.03, sampleRate: 100, startSec: -0.05 });
    expect(r.minSamples).toBe(3); // 0.03 s × 100 Hz
    expect(r.runs.map((x) => [x.start, x.end, x.sign, x.samples])).toEqual([[1, 3, 1, 3], [7, 10, -1, 4]]);
    // startSec + i/rate: −0.05 + 1/100 and −0.05 + 10/100 (one rounding each).
    expectAllClose([r.runs[0]!.onsetSec, r.runs[1]!.offsetSec], [-0.04, 0.05], { rtol: 1e-14 });
  });
  it('takes column times from offsets, breaks runs at NaN and uses k = 1 for minRunSec = 0', () => {
    const offsets = Float64Array.from([0, 0.5, 1, 1.5, 2]);
    const r = consecutiveThresholdRuns([1, 1, NaN, 1, 1], { minRunSec: 1, offsets });
    expect(r.sampleRate).toBe(2);
    expect(r.minSamples).toBe(2);
    expect(r.runs.map((x) => [x.onsetSec, x.offsetSec])).toEqual([[0, 0.5], [1.5, 2]]);
    expect(consecutiveThresholdRuns([1, 0, -1], { minRunSec: 0, sampleRate: 10 }).runs.length).toBe(2);
  });
  it('requires minRunSec and a rate or offsets (TF_BAD_OPTION), and offsets of matching length (TF_SHAPE_MISMATCH)', () => {
    expect(() => consecutiveThresholdRuns([1, 1], { sampleRate: 10 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => consecutiveThresholdRuns([1, 1], { minRunSec: 0.1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => consecutiveThresholdRuns([1, 1], { minRunSec: 0.1, offsets: new Float64Array(3) })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => consecutiveThresholdRuns([1, 1], { minRunSec: 0.1, sampleRate: 0 })).toThrow(expect.objectContaining({ code: 'TF_BAD_SAMPLE_RATE' }));
  });
});

describe('significantRunsFromInterval', () => {
  it('marks bins whose band excludes the reference and applies the run rule with the band\'s offsets', () => {
    const band = {
      low: [-1, 0.1, 0.2, 0.3, -0.5, -2, -2, -2],
      high: [1, 1, 1, 1, 0.5, -0.1, -0.2, -0.3],
      offsets: Float64Array.from([0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7]),
    };
    const r = significantRunsFromInterval(band, { minRunSec: 0.25 });
    expect(r.minSamples).toBe(3); // ⌈0.25 × 10⌉
    expect(r.runs.map((x) => [x.start, x.end, x.sign])).toEqual([[1, 3, 1], [5, 7, -1]]);
    const shifted = significantRunsFromInterval(band, { minRunSec: 0.25, reference: 0.15 });
    expect(shifted.runs.map((x) => [x.start, x.end])).toEqual([[5, 7]]); // bin 1 no longer excludes 0.15
  });
});

describe('significantRunsFromPValues', () => {
  it('uses p < alpha signed by the effect, and rejects an effect of the wrong length', () => {
    const p = [0.2, 0.01, 0.02, 0.001, 0.04, 0.5, 0.01, 0.01];
    const effect = [1, 2, 2, 2, -1, 1, -3, -3];
    const r = significantRunsFromPValues(p, { effect, minRunSec: 2, sampleRate: 1 });
    expect(r.runs.map((x) => [x.start, x.end, x.sign])).toEqual([[1, 3, 1], [6, 7, -1]]);
    expect(significantRunsFromPValues(p, { alpha: 0.015, minRunSec: 1, sampleRate: 1 }).runs.map((x) => x.start)).toEqual([1, 3, 6]);
    expect(() => significantRunsFromPValues(p, { effect: [1], minRunSec: 1, sampleRate: 1 })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
  it('significantRunsFromPValues(p) rejects a p-value outside [0, 1] (e.g. t values passed by mistake) with its index', () => {
    // Before: p = −2.1 counted as p < alpha, so negative t values became a "significant" run.
    const t = [0.4, -2.1, -3.5, -2.8, 1.2];
    expect(() => significantRunsFromPValues(t, { minRunSec: 2, sampleRate: 1 }))
      .toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE', details: expect.objectContaining({ index: 1 }) }));
    expect(() => significantRunsFromPValues([0.01, 1.5], { minRunSec: 1, sampleRate: 1 }))
      .toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE', details: expect.objectContaining({ index: 1 }) }));
    expect(() => significantRunsFromPValues([0.01, Infinity], { minRunSec: 1, sampleRate: 1 }))
      .toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE', details: expect.objectContaining({ index: 1 }) }));
    // 0, 1 and NaN (a missing test) stay valid; NaN breaks runs.
    expect(significantRunsFromPValues([0, 0, NaN, 0, 1], { minRunSec: 1, sampleRate: 1 }).runs.map((x) => [x.start, x.end])).toEqual([[0, 1], [3, 3]]);
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { bootstrapTimecourse, responseSummary, significantRunsFromInterval } from '../src/index.js';

/** Trials of a triangle response peaking at t = 0.3 s (height 2) on a 100 Hz grid from −0.5 to 1 s. */
function triangleTrials(n: number, noise: number, seed: number) {
  const T = 151;
  const offsets = Float64Array.from({ length: T }, (_, j) => -0.5 + j / 100);
  const r = rng(seed);
  const data = new Float64Array(n * T);
  const shape = (t: number) => Math.max(0, 2 - Math.abs(t - 0.3) * 10); // support [0.1, 0.5]
  for (let i = 0; i < n; i++) for (let j = 0; j < T; j++) data[i * T + j] = shape(offsets[j]!) + noise * r.normal();
  return { data, rows: n, cols: T, offsets, kept: new Uint32Array(n) };
}

describe('responseSummary', () => {
  it('noise-free identical trials: peak 2 at 0.3 s, AUC 0.4 (triangle area), zero-width intervals', () => {
    const r = responseSummary(triangleTrials(10, 0, 1), { windowSec: [0, 1], resamples: 200 });
    // Closed forms: the triangle peaks at 2 at t = 0.3 s; its area is ½·0.4·2 = 0.4, and the trapezoid
    // rule is exact on a piecewise-linear trace whose kinks are grid points.
    expectAllClose([r.peakAmplitude.estimate, r.peakLatencySec.estimate, r.auc.estimate], [2, 0.3, 0.4], { rtol: 1e-12, atol: 1e-14 });
    expectAllClose([r.peakAmplitude.low, r.peakAmplitude.high], [2, 2], { rtol: 1e-12 });
    expectAllClose([r.auc.low, r.auc.high], [0.4, 0.4], { rtol: 1e-12 });
    expect(r.window).toEqual({ start: 50, end: 150, startSec: 0, endSec: 1 });
  });
  it('noisy trials: intervals bracket the truth and the onset matches significantRunsFromInterval on the same band', () => {
    const m = triangleTrials(40, 0.5, 2);
    const r = responseSummary(m, { windowSec: [0, 1], resamples: 2000, seed: 5, method: 'bca', minRunSec: 0.05 });
    expect(r.peakAmplitude.low).toBeLessThan(r.peakAmplitude.estimate);
    expect(r.auc.low).toBeLessThan(0.4);
    expect(r.auc.high).toBeGreaterThan(0.4);
    expect(r.peakLatencySec.low).toBeLessThanOrEqual(0.3);
    expect(r.peakLatencySec.high).toBeGreaterThanOrEqual(0.3);
    // Same resamples (stream 0 of seed 5) restricted to the window give the same percentile band.
    const win = { data: new Float64Array(40 * 101), rows: 40, cols: 101, offsets: m.offsets.slice(50), kept: m.kept };
    for (let i = 0; i < 40; i++) win.data.set(m.data.subarray(i * 151 + 50, i * 151 + 151), i * 101);
    const band = bootstrapTimecourse(win, { resamples: 2000, seed: 5 });
    const runs = significantRunsFromInterval(band, { minRunSec: 0.05 });
    expectAllClose(r.onsetSec, runs.runs[0]!.onsetSec, { rtol: 0 });
    expect(r.onsetSec).toBeGreaterThan(0.05);
    expect(r.onsetSec).toBeLessThan(0.3);
  });
  it('warns when no minRunSec is given and rejects an empty window or non-finite window cells', () => {
    const m = triangleTrials(5, 0.1, 3);
    const r = responseSummary(m, { resamples: 100 });
    expect(r.onsetSec).toBeNaN();
    expect(r.warnings.map((w) => w.code)).toContain('onset-not-computed');
    expect(() => responseSummary(m, { windowSec: [5, 6] })).toThrow(expect.objectContaining({ code: 'TF_WINDOW_OUT_OF_RANGE' }));
    m.data[60] = NaN;
    expect(() => responseSummary(m, { windowSec: [0, 1] })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
    expect(() => responseSummary({ data: new Float64Array(8), rows: 2, cols: 4 })).toThrow(expect.objectContaining({ code: 'TF_BAD_SAMPLE_RATE' }));
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { checkTimestamps, estimateSnr, findClipping, findSpectralPeaks, siteQuality, welch } from '../src/index.js';

function noisySite(n: number, fs: number, seed: number) {
  const g = rng(seed);
  const ctl = new Float64Array(n);
  const sig = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = i / fs;
    const bleach = 1 + 0.2 * Math.exp(-t / 60);
    const art = 1 - 0.03 * Math.max(0, Math.sin((2 * Math.PI * t) / 23)) ** 8;
    const transient = 0.05 * Math.max(0, Math.sin((2 * Math.PI * t) / 7)) ** 20;
    ctl[i] = 1.2 * bleach * art + 0.002 * g.normal();
    sig[i] = 2 * bleach * art * (1 + transient) + 0.003 * g.normal() + 0.01 * Math.sin(2 * Math.PI * 50 * t);
  }
  return { name: 'test', signal: { values: sig, sampleRate: fs, t0: 0 }, control: { values: ctl, sampleRate: fs, t0: 0 } };
}

describe('findSpectralPeaks', () => {
  it('finds a 50 Hz line more than 10 dB above the local median and nothing in white noise', () => {
    const fs = 500;
    const g = rng(3);
    const x = Float64Array.from({ length: 50000 }, (_, i) => g.normal() + 0.5 * Math.sin((2 * Math.PI * 50 * i) / fs));
    const peaks = findSpectralPeaks(welch({ values: x, sampleRate: fs, t0: 0 }, { segmentLength: 1024 }));
    expect(peaks.length).toBeGreaterThan(0);
    // Bin spacing 500/1024 Hz: the peak lands within one bin of 50 Hz.
    expectAllClose(peaks[0]!.frequencyHz, 50, { atol: 500 / 1024 });
    expect(peaks[0]!.prominenceDb).toBeGreaterThan(10);
    const white = Float64Array.from({ length: 50000 }, () => g.normal());
    expect(findSpectralPeaks(welch({ values: white, sampleRate: fs, t0: 0 }, { segmentLength: 1024 }))).toEqual([]);
  });
});

describe('findClipping', () => {
  it('flags a saturated segment (a run of equal maxima) with its start time', () => {
    const x = Float64Array.from({ length: 1000 }, (_, i) => Math.sin(i / 10));
    x.fill(1.25, 400, 460);
    const r = findClipping({ values: x, sampleRate: 100, t0: 1 });
    expect(r.clipped).toBe(true);
    expect(r.runs).toEqual([{ startIndex: 400, length: 60, startSec: 5, value: 1.25 }]);
  });

  it('counts samples near known detector limits', () => {
    const x = Float64Array.from({ length: 1000 }, (_, i) => 4.99 * Math.sin(i / 3));
    const r = findClipping({ values: x, sampleRate: 100, t0: 0 }, { range: [-5, 5] });
    expect(r.nearLimit).toBeGreaterThan(1);
    expect(r.clipped).toBe(true);
    const ok = findClipping({ values: Float64Array.from(x, (v) => v / 2), sampleRate: 100, t0: 0 }, { range: [-5, 5] });
    expect(ok.clipped).toBe(false);
  });
});

describe('checkTimestamps', () => {
  it('counts duplicates, reversals, jitter beyond 10 % of a period and dropped samples', () => {
    const t = Float64Array.of(0, 0.01, 0.02, 0.02, 0.035, 0.04, 0.07, 0.065, 0.08);
    const r = checkTimestamps(t, { sampleRate: 100 });
    expect(r.nonIncreasing).toBe(2);
    expect(r.firstNonIncreasing).toBe(3);
    // Gaps of ≥ 1.5 periods: 0.02 → 0.035, 0.04 → 0.07 and 0.065 → 0.08 (the reversal is skipped).
    expect(r.gaps).toBe(3);
    expect(r.droppedSamples).toBe(1 + 2 + 1); // round(Δt·fs) − 1 each
    expect(r.irregular).toBe(4);
  });

  it('counts an infinite timestamp as non-finite without an infinite gap or a zero inferred rate', () => {
    // Before: droppedSamples Infinity (rate given) or NaN with sampleRate 0 (rate inferred).
    const t = Float64Array.of(0, 0.01, 0.02, Infinity, 0.04, 0.05, 0.06);
    for (const r of [checkTimestamps(t, { sampleRate: 100 }), checkTimestamps(t)]) {
      expect(r.nonFinite).toBe(1);
      expect(r.droppedSamples).toBe(0);
      expect(r.gaps).toBe(0);
      expect(r.nonIncreasing).toBe(0);
      // Median of the four finite 0.01 s intervals (arithmetic); 1e-9 covers their rounding.
      expectAllClose(r.sampleRate, 100, { rtol: 1e-9 });
    }
  });
});

describe('estimateSnr', () => {
  it('is the 0.1–3 Hz sd over the robust sd above 5 Hz', () => {
    const fs = 200;
    const g = rng(9);
    const n = 60000;
    const x = Float64Array.from({ length: n }, (_, i) => Math.sin((2 * Math.PI * 1 * i) / fs) + 0.1 * g.normal());
    const r = estimateSnr({ values: x, sampleRate: fs, t0: 0 });
    // Analytic: band sd = 1/√2 (the 1 Hz sine, gain ≈ 1 in band) plus the in-band share of noise;
    // noise above 5 Hz has sd 0.1·√((100 − 5)/100) ≈ 0.0975 (white, fs/2 = 100 Hz).
    expectAllClose(r.signalSd, Math.SQRT1_2, { rtol: 0.02 });
    expectAllClose(r.noiseSd, 0.1 * Math.sqrt(0.95), { rtol: 0.03 });
    expectAllClose(r.snr, r.signalSd / r.noiseSd, { rtol: 1e-15 });
  });

  it('refuses a channel with no measurable noise (constant, zero or a noise-free ramp) instead of dividing rounding residue', () => {
    // Before: a constant 5 gave snr 0 (noise sd 7.7e-32), all zeros NaN (0/0), a ramp 8.7e13.
    const fs = 100;
    const n = 2000;
    const u = (v: Float64Array) => ({ values: v, sampleRate: fs, t0: 0 });
    for (const x of [new Float64Array(n).fill(5), new Float64Array(n), Float64Array.from({ length: n }, (_, i) => i)]) {
      expect(() => estimateSnr(u(x))).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
    }
    // A 16-bit-like quantised sine with its quantisation noise still has an SNR (common practice:
    // quantisation noise is noise).
    const q = Float64Array.from({ length: n }, (_, i) => Math.round(1000 * Math.sin((2 * Math.PI * i) / fs) + 0.4 * Math.sin(i * 1.7)));
    expect(estimateSnr(u(q)).snr).toBeGreaterThan(0);
  });
});

describe('siteQuality', () => {
  it('reports clipping, bleaching, spectrum peaks (50 Hz) and the control–signal relation', () => {
    const site = noisySite(120000, 500, 4);
    site.control.values.fill(site.control.values[1000]!, 1000, 1010);
    let mx = -Infinity;
    for (const v of site.control.values) mx = Math.max(mx, v);
    site.control.values.fill(mx, 5000, 5020); // saturated segment
    const q = siteQuality(site, { timestamps: Float64Array.from({ length: 120000 }, (_, i) => i / 500) });
    expect(q.flags).toContain('control-clipped');
    expect(q.flags).not.toContain('signal-clipped');
    // Bleaching 1 − (1 + .2e^−4)/(1.2) ≈ 0.1636 over 240 s (analytic), fitted on noisy data.
    expectAllClose(q.signal.bleachingFraction, 1 - (1 + 0.2 * Math.exp(-239.998 / 60)) / 1.2, { atol: 0.01 });
    expect(q.signal.peaks.some((p) => Math.abs(p.frequencyHz - 50) < 0.3)).toBe(true);
    expect(q.controlSignalSlope).toBeGreaterThan(0);
    expect(q.controlSignalR).toBeGreaterThan(0.9);
    expect(q.timestamps?.droppedSamples).toBe(0);
    expect(q.snr?.snr).toBeGreaterThan(0);
  });

  it('reports non-finite samples as a flag instead of throwing', () => {
    const site = noisySite(20000, 500, 5);
    site.signal.values[77] = NaN;
    const q = siteQuality(site);
    expect(q.signal.nonFinite).toBe(1);
    expect(q.flags).toContain('non-finite');
    expect(q.snr).toBeNull();
  });

  it('reports a dead (constant) sensor channel with a warning and no SNR, not NaN', () => {
    const site = noisySite(20000, 500, 7);
    const q = siteQuality({ ...site, signal: { ...site.signal, values: new Float64Array(20000).fill(1) } });
    expect(q.snr).toBeNull();
    expect(q.warnings.map((w) => w.code)).toContain('SNR_FAILED');
  });

  it('computes r and the slope at a sampling rate at or below 2·lowPassHz (20 Hz) instead of returning NaN silently', () => {
    // Time-division systems often deliver 20 Hz per channel, where the default 10 Hz low-pass is
    // at Nyquist. Signal = 2·control + 1 exactly: r = 1 and slope = 2 (closed form). Before: NaN
    // and NaN with no warning.
    const fs = 20;
    const g = rng(11);
    const ctl = Float64Array.from({ length: 12000 }, (_, i) => 1 + 0.05 * Math.sin((2 * Math.PI * i) / (fs * 23)) + 0.002 * g.normal());
    const sig = Float64Array.from(ctl, (c) => 2 * c + 1);
    const q = siteQuality({ name: 'slow', signal: { values: sig, sampleRate: fs, t0: 0 }, control: { values: ctl, sampleRate: fs, t0: 0 } });
    // 1e-12: rounding of the centred sums over 12000 samples.
    expectAllClose(q.controlSignalR, 1, { rtol: 1e-12 });
    expectAllClose(q.controlSignalSlope, 2, { rtol: 1e-12 });
    expect(q.warnings.map((w) => w.code)).toContain('LOWPASS_SKIPPED');
    // Too short for the low-pass: NaN, with a warning saying so.
    const short = siteQuality({ name: 'short', signal: { values: sig.subarray(0, 10), sampleRate: 100, t0: 0 }, control: { values: ctl.subarray(0, 10), sampleRate: 100, t0: 0 } });
    expect(short.controlSignalR).toBeNaN();
    expect(short.warnings.map((w) => w.code)).toContain('CONTROL_FIT_SKIPPED');
  });

  it('rejects channels of unequal length', () => {
    const site = noisySite(2000, 500, 6);
    expect(() => siteQuality({ ...site, control: { ...site.control, values: site.control.values.subarray(0, 1999) } })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { binSpikes, causalSmooth, gaussianSmooth, refractoryContamination, unitQuality } from '../src/index.js';

// Reference: scipy.ndimage.gaussian_filter1d, see fixtures/scipy/gen_gaussian.py.
const fx = loadFixture('fixtures/scipy/gaussian.json', here(import.meta.url));

describe('binSpikes', () => {
  it('bins with ⌊(t − start)/Δ⌋ into half-open bins (SIGNALS.md §2.1)', () => {
    // SIGNALS.md §2.1 [scipy]: spikes [.001, .0049, .005, .0099, .010, .0255], Δ = 5 ms → [2, 2, 1, 0, 0, 1].
    const r = binSpikes([0.001, 0.0049, 0.005, 0.0099, 0.01, 0.0255], { binSec: 0.005, endSec: 0.03 });
    expect(Array.from(r.signal.values)).toEqual([2, 2, 1, 0, 0, 1]);
    expect(r.signal.sampleRate).toBe(200);
  });

  it('does not close the last bin on the right (unlike numpy.histogram) and reports spikes outside', () => {
    // np.histogram([0, .5, 1], [0, .5, 1]) → [1, 2]; half-open bins give [1, 1] and one outside.
    const r = binSpikes([0, 0.5, 1], { binSec: 0.5, endSec: 1 });
    expect(Array.from(r.signal.values)).toEqual([1, 1]);
    expect(r.outside).toBe(1);
  });

  it('uses integer clock ticks when given, so 0.3 s falls in bin 3 of 0.1 s bins', () => {
    // Floating point: ⌊0.3/0.1⌋ = 2 (SIGNALS.md §2.1); in ticks of a 1 kHz clock it is 300/100 = 3.
    expect(Math.floor(0.3 / 0.1)).toBe(2);
    const plain = binSpikes([0.3], { binSec: 0.1, endSec: 1 });
    const ticks = binSpikes([0.3], { binSec: 0.1, endSec: 1, clockRate: 1000 });
    expect(plain.signal.values[2]).toBe(1);
    expect(ticks.signal.values[3]).toBe(1);
    expect(ticks.integerTicks).toBe(true);
  });

  it('returns rates in Hz and rejects non-finite spike times', () => {
    expect(Array.from(binSpikes([0.01, 0.02], { binSec: 0.1, endSec: 0.2, output: 'rate' }).signal.values)).toEqual([20, 0]);
    expect(() => binSpikes([0.1, NaN], { binSec: 0.1, endSec: 1 })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 1 }) }));
    expect(() => binSpikes([0.1], { binSec: 0.1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('gaussianSmooth', () => {
  it('matches scipy gaussian_filter1d in all five boundary modes and several widths', () => {
    for (const c of fx.cases) {
      const y = gaussianSmooth(fx.x, c.sigma, { mode: c.mode, truncate: c.truncate });
      // Same weights and summation order as ndimage: agreement to a few ulps.
      expectAllClose(y, c.y, { rtol: 1e-12, atol: 1e-15, label: `σ=${c.sigma} ${c.mode}`, source: fx.source });
    }
  });

  it('reproduces the SIGNALS.md §2.1 impulse values', () => {
    const imp = new Float64Array(41);
    imp[20] = 1;
    const y = gaussianSmooth(imp, 2, { mode: 'reflect' });
    // SIGNALS.md §2.1 [scipy]: centre .1994746479, ±1 → .1760357589, ±8 → 6.69e-5, ±9 → 0.
    expectAllClose([y[20]!, y[21]!, y[19]!], [0.1994746479, 0.1760357589, 0.1760357589], { atol: 5e-11 });
    expectAllClose(y[28]!, 6.69e-5, { atol: 5e-8 });
    expect(y[29]).toBe(0);
    const e = new Float64Array(10);
    e[0] = 1;
    // Impulse at index 0, σ = 1: reflect [.6409149, .2959626, .0584230], constant [.3989435, .2419715, .0539911].
    expectAllClose(gaussianSmooth(e, 1, { mode: 'reflect' }).subarray(0, 3), [0.6409149, 0.2959626, 0.058423], { atol: 5e-8 });
    // The doc's .2419715 is 0.24197144566 (scipy prints 0.24197145) rounded up twice, so the
    // constant-mode values are checked to one unit of the 7th decimal.
    expectAllClose(gaussianSmooth(e, 1, { mode: 'constant' }).subarray(0, 3), [0.3989435, 0.2419715, 0.0539911], { atol: 1e-7 });
  });

  it('turns one spike into a rate peak of 19.947 Hz with unit area (Δ 10 ms, σ 20 ms; SIGNALS.md §2.1)', () => {
    const r = binSpikes([0.5], { binSec: 0.01, endSec: 1, output: 'rate' });
    const y = gaussianSmooth(r.signal.values, 0.02 / 0.01, { mode: 'constant' });
    expectAllClose(Math.max(...y), 19.947, { atol: 5e-4 });
    expectAllClose(y.reduce((s, v) => s + v, 0) * 0.01, 1, { rtol: 1e-12 });
  });
});

describe('causalSmooth', () => {
  it('half-Gaussian σ = 2 bins: k[0] = .3326033580, mean lag 1.3022 bins (SIGNALS.md §2.1)', () => {
    const r = causalSmooth(new Float64Array(20), 2);
    expect(r.kernel.length).toBe(9); // n = 0 … 8
    expectAllClose(r.kernel[0]!, 0.332603358, { atol: 5e-11 });
    expectAllClose(r.meanLagBins, 1.3022, { atol: 5e-5 });
  });

  it('uses only current and past samples', () => {
    const x = new Float64Array(30);
    x[10] = 1;
    const y = causalSmooth(x, 3, { kernel: 'exponential' }).values;
    expect(Array.from(y.subarray(0, 10)).every((v) => v === 0)).toBe(true);
    expect(y[10]! > y[11]! && y[11]! > y[12]!).toBe(true);
  });
});

describe('refractoryContamination', () => {
  it('reproduces the SIGNALS.md §2.2 analytic check (Hill 2011 and Llobet 2022)', () => {
    // N = 5000, T = 1000 s, τ_R = 1.5 ms, τ_C = 0, r = 3: k = .04, f = .0417424305, Llobet .0408336953.
    const a = refractoryContamination({ violations: 3, nSpikes: 5000, durationSec: 1000, refractorySec: 0.0015, censoredSec: 0 });
    expectAllClose([a.k, a.hill, a.llobet], [0.04, 0.0417424305, 0.0408336953], { atol: 5e-11 });
    // τ_C = .5 ms: k = .06, f = .0641101056.
    const b = refractoryContamination({ violations: 3, nSpikes: 5000, durationSec: 1000, refractorySec: 0.0015, censoredSec: 0.0005 });
    expectAllClose([b.k, b.hill], [0.06, 0.0641101056], { atol: 5e-11 });
  });

  it('reports NaN and overHalf when 4k > 1', () => {
    const c = refractoryContamination({ violations: 500, nSpikes: 1000, durationSec: 100, refractorySec: 0.002, censoredSec: 0 });
    expect(c.overHalf).toBe(true);
    expect(Number.isNaN(c.hill)).toBe(true);
  });
});

describe('unitQuality', () => {
  it('counts 3 violations at 1.5 ms in the SIGNALS.md §2.2 train', () => {
    // [0, .001, .01, .0112, .05, .0504, .2] → 3 [scipy np.sum(np.diff(t) < .0015)].
    const q = unitQuality([0, 0.001, 0.01, 0.0112, 0.05, 0.0504, 0.2]);
    expect(q.violations).toBe(3);
    expect(q.nSpikes).toBe(7);
    expectAllClose(q.rateHz, 7 / 0.2, { rtol: 1e-15 });
  });

  it('sorts unsorted times and removes duplicates, reporting both', () => {
    const q = unitQuality([0.05, 0, 0.01, 0.01, 0.2], { startSec: 0, endSec: 1 });
    expect(q.nSpikes).toBe(4);
    expect(q.warnings.map((w) => w.code)).toEqual(['SPIKES_SORTED', 'DUPLICATE_SPIKES_REMOVED']);
    expect(q.durationSec).toBe(1);
  });

  it('rejects a reversed or non-finite recording span and spikes outside it, instead of a NaN or wrong rate', () => {
    const t = [0.1, 0.5, 0.9, 1.3, 1.30001, 2.2];
    // Before: durationSec −5, rateHz NaN, contamination NaN and no flag.
    expect(() => unitQuality(t, { startSec: 10, endSec: 5 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => unitQuality(t, { startSec: 0, endSec: Number.NaN })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    // Before: a span ending at 1 s gave rate 6 Hz from 6 spikes, 3 of them after the span.
    expect(() => unitQuality(t, { startSec: 0, endSec: 1 })).toThrow(
      expect.objectContaining({ code: 'TF_WINDOW_OUT_OF_RANGE', details: expect.objectContaining({ index: 3, time: 1.3 }) }),
    );
    // Spikes on the span's edges are inside it: rate 6/3 Hz (arithmetic).
    expectAllClose(unitQuality(t, { startSec: 0.1, endSec: 3.1 }).rateHz, 2, { rtol: 1e-15 });
  });
});

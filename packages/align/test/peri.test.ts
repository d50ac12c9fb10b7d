import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { periEventCounts, periEventMatrix } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
const fx = loadFixture('numpy/peri_interp.json', fixtures);
const row = (m: { data: Float64Array; cols: number }, r: number) => m.data.subarray(r * m.cols, (r + 1) * m.cols);

describe('periEventMatrix', () => {
  it('periEventMatrix reproduces the SIGNALS.md 3.6 example: 140 columns from 10.34 to 17.29, 12.34 at r = 0', () => {
    // Reference: SIGNALS.md §3.6 check [scipy np.interp]; fixtures/numpy/gen_peri_interp.py.
    const t = Float64Array.from({ length: 400 }, (_, i) => i / 20);
    const m = periEventMatrix({ values: t, sampleRate: 20, t0: 0 }, [12.34], { preSec: 2, postSec: 5 });
    expect(m.cols).toBe(140);
    // Interpolating x = t at t = 12.34 + r: float rounding of one product and sum, ~1e-14.
    expectAllClose(row(m, 0), fx.check.row, { rtol: 1e-13, source: fx.source });
    expectAllClose([m.data[0]!, m.data[40]!, m.data[139]!], [10.34, 12.34, 17.29], { rtol: 1e-13, source: 'SIGNALS.md 3.6' });
    expectAllClose(m.offsets[40]!, 0, { atol: 0 });
  });

  for (const k of [0, 1, 2]) {
    it(`periEventMatrix matches numpy.interp at ${[200, 30, 1000][k]} Hz columns (signal at 200 Hz)`, () => {
      // Reference: numpy.interp, fixtures/numpy/gen_peri_interp.py (numpy 2.4.6).
      const c = fx.cases[k];
      const s = { values: fx.x, sampleRate: fx.fs, t0: fx.t0 };
      const m = periEventMatrix(s, fx.events, { preSec: fx.preSec, postSec: fx.postSec, sampleRate: c.rate === fx.fs ? 'signal' : c.rate });
      expect(m.rows).toBe(4);
      expectAllClose(m.offsets, c.offsets, { rtol: 1e-15, atol: 1e-15, source: fx.source });
      // numpy forms slope·(x − xp[j]) + fp[j], we form a + f·(b − a) with f from (t − t0)·fs: the
      // two differ by a few ulps of times ≈ 10 s (≈ 1e-15 s) × slopes ≲ 1e3/s → atol 1e-11.
      for (let r = 0; r < 4; r++) expectAllClose(row(m, r), c.rows[r], { rtol: 1e-12, atol: 1e-11, source: fx.source, label: `row ${r}` });
    });
  }

  it("periEventMatrix with edges: 'nan' pads past the recording with NaN exactly where numpy.interp(left=nan, right=nan) does", () => {
    const s = { values: fx.x, sampleRate: fx.fs, t0: fx.t0 };
    const m = periEventMatrix(s, [fx.edgeEvent], { preSec: fx.preSec, postSec: fx.postSec, edges: 'nan' });
    expect(m.rows).toBe(1);
    expectAllClose(row(m, 0), fx.edgeRow, { rtol: 1e-12, atol: 1e-11, source: fx.source });
    expect(m.warnings.map((w) => w.code)).toContain('padded-with-nan');
  });

  it('periEventMatrix drops events whose window leaves the recording and keeps the reason', () => {
    const s = { values: fx.x, sampleRate: fx.fs, t0: fx.t0 };
    const ev = [0.5, ...Array.from(fx.events as Float64Array), fx.edgeEvent];
    const m = periEventMatrix(s, ev, { preSec: fx.preSec, postSec: fx.postSec });
    expect(Array.from(m.kept)).toEqual([1, 2, 3, 4]);
    expect(Array.from(m.excluded.index)).toEqual([0, 5]);
    expect(m.excluded.reason).toEqual(['outside-recording', 'outside-recording']);
    expect(() => periEventMatrix(s, ev, { preSec: fx.preSec, postSec: fx.postSec, edges: 'error' })).toThrow(expect.objectContaining({ code: 'TF_WINDOW_OUT_OF_RANGE', details: expect.objectContaining({ index: 0 }) }));
  });

  it('periEventMatrix returns the kernel in every row for a train of identical kernels (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: 3, maxLength: 40 }),
        fc.array(fc.integer({ min: 0, max: 30 }), { minLength: 1, maxLength: 8 }),
        fc.constantFrom(10, 100, 1000, 20000 / 3),
        fc.double({ min: -5, max: 5, noNaN: true }),
        (kernel, gaps, rate, t0) => {
          const L = kernel.length;
          const starts: number[] = [];
          let at = 5;
          for (const g of gaps) {
            starts.push(at);
            at += L + g;
          }
          const x = new Float64Array(at + 5);
          for (const s0 of starts) for (let k = 0; k < L; k++) x[s0 + k] = x[s0 + k]! + kernel[k]!;
          const events = starts.map((s0) => t0 + s0 / rate);
          // Window [0, L/rate) covers the kernel exactly: nPre = 0, nPost = L.
          const m = periEventMatrix({ values: x, sampleRate: rate, t0 }, events, { preSec: 0, postSec: L / rate });
          expect(m.rows).toBe(starts.length);
          expect(m.cols).toBe(L);
          // Event times t0 + i/rate land on samples up to float noise (snapped within 1e-9 samples),
          // so rows equal the kernel exactly or within one rounding of a + f·(b − a) with f ≈ 1e-12.
          for (let r = 0; r < m.rows; r++) expectAllClose(row(m, r), kernel, { rtol: 1e-9, atol: 1e-9, label: `row ${r}` });
        },
      ),
      { seed: 42, numRuns: 60 },
    );
  });

  it('periEventMatrix rows shift by k columns when events shift by k samples (property)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 2 ** 30 }),
        fc.integer({ min: -20, max: 20 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.constantFrom(50, 250, 1000),
        (seed, k, frac, rate) => {
          const n = 600;
          const x = new Float64Array(n);
          let v = seed % 97;
          for (let i = 0; i < n; i++) {
            v = (v * 31 + 7) % 101;
            x[i] = v / 10 - 5;
          }
          const s = { values: x, sampleRate: rate, t0: 0.25 };
          const e0 = 0.25 + (200 + frac) / rate;
          const a = periEventMatrix(s, [e0], { preSec: 60 / rate, postSec: 120 / rate });
          const b = periEventMatrix(s, [e0 + k / rate], { preSec: 60 / rate, postSec: 120 / rate });
          expect(a.rows).toBe(1);
          expect(b.rows).toBe(1);
          // Column c of b reads the sample position of column c + k of a.
          const ra = row(a, 0);
          const rb = row(b, 0);
          const lo = Math.max(0, -k);
          const hi = Math.min(a.cols, a.cols - k);
          expectAllClose(rb.subarray(lo, hi), ra.subarray(lo + k, hi + k), { rtol: 1e-9, atol: 1e-9 });
        },
      ),
      { seed: 7, numRuns: 80 },
    );
  });

  it("periEventMatrix 'subtract' and 'zscore' baselines give the closed-form rows for x = t", () => {
    const t = Float64Array.from({ length: 400 }, (_, i) => i / 20);
    const s = { values: t, sampleRate: 20, t0: 0 };
    const sub = periEventMatrix(s, [10], { preSec: 2, postSec: 1, baseline: 'subtract' });
    // Analytic: baseline mean of te + r over r = −2 … −0.05 is te − 1.025, so row = r + 1.025.
    expectAllClose(row(sub, 0), sub.offsets.map((r) => r + 1.025), { rtol: 1e-12, atol: 1e-12, source: 'analytic (arithmetic series)' });
    const z = periEventMatrix(s, [10], { preSec: 2, postSec: 1, baseline: 'zscore' });
    // Analytic: sample sd of 40 values spaced 0.05 apart is 0.05·√(40·41/12).
    const sd = 0.05 * Math.sqrt((40 * 41) / 12);
    expectAllClose(row(z, 0), z.offsets.map((r) => (r + 1.025) / sd), { rtol: 1e-12, atol: 1e-12, source: 'analytic (arithmetic series)' });
    // Baseline anchored at a per-event cue 3 s earlier: mean of x over [cue − 2, cue) = cue − 1.025.
    const anch = periEventMatrix(s, [10], { preSec: 2, postSec: 1, baseline: 'subtract', baselineAnchors: [7] });
    expectAllClose(row(anch, 0), anch.offsets.map((r) => 10 + r - (7 - 1.025)), { rtol: 1e-12, atol: 1e-12, source: 'analytic (arithmetic series)' });
  });

  it('periEventMatrix excludes events with a competing event in the window, or masks from it on', () => {
    const t = Float64Array.from({ length: 400 }, (_, i) => i / 20);
    const s = { values: t, sampleRate: 20, t0: 0 };
    const ev = [5, 10, 15];
    const ex = periEventMatrix(s, ev, { preSec: 1, postSec: 2, competing: [5, 10.5, 15] });
    expect(Array.from(ex.kept)).toEqual([0, 2]);
    expect(ex.excluded.reason).toEqual(['competing-event']);
    const mk = periEventMatrix(s, ev, { preSec: 1, postSec: 2, competing: [10.5], competingAction: 'mask' });
    expect(mk.rows).toBe(3);
    const r1 = row(mk, 1);
    // Offsets ≥ 0.5 s (columns 30 … 59) are masked; earlier ones are kept.
    expect(r1.subarray(30).every((v) => Number.isNaN(v))).toBe(true);
    expect(r1.subarray(0, 30).every((v) => !Number.isNaN(v))).toBe(true);
    expect(mk.nPerColumn[29]).toBe(3);
    expect(mk.nPerColumn[30]).toBe(2);
  });

  it('periEventMatrix follows the NaN policy: propagate, drop with reason, or TF_NON_FINITE', () => {
    const x = Float64Array.from({ length: 200 }, (_, i) => i);
    x[100] = NaN;
    const s = { values: x, sampleRate: 10, t0: 0 };
    const p = periEventMatrix(s, [5, 10], { preSec: 1, postSec: 1 });
    expect(p.rows).toBe(2);
    expect(row(p, 1)[10]).toBeNaN();
    expect(p.warnings.map((w) => w.code)).toContain('nan-in-window');
    const d = periEventMatrix(s, [5, 10], { preSec: 1, postSec: 1, nan: 'drop' });
    expect(Array.from(d.kept)).toEqual([0]);
    expect(d.excluded.reason).toEqual(['nan-in-window']);
    expect(() => periEventMatrix(s, [5, 10], { preSec: 1, postSec: 1, nan: 'error' })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
  });

  it('periEventMatrix rows equal a + f·(b − a) sample by sample, and nan-in-window fires exactly when a value is NaN, with ±∞ and NaN in the signal (property)', () => {
    // Reference: numpy.interp's rule between neighbours (SIGNALS.md §3.6), written out naively here;
    // guards the unrolled row kernel (remainder columns, NaN detection through ±∞).
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.constantFrom(NaN, Infinity, -Infinity)), { minLength: 30, maxLength: 60 }),
        fc.integer({ min: 3, max: 12 }),
        fc.double({ min: 0.01, max: 0.99, noNaN: true }),
        fc.integer({ min: 0, max: 10 }),
        (vals, pre, frac, post) => {
          const x = Float64Array.from(vals);
          const te = pre + frac; // seconds at 1 Hz: window [te − pre, te + post] stays inside
          const m = periEventMatrix({ values: x, sampleRate: 1, t0: 0 }, [te], { preSec: pre, postSec: post + 1 });
          expect(m.rows).toBe(1);
          let anyNaN = false;
          const p0 = te - pre; // at the signal's rate the whole row shares one fraction
          const f = p0 - Math.floor(p0);
          for (let c = 0; c < m.cols; c++) {
            const i = Math.floor(p0) + c;
            const want = x[i]! + f * (x[i + 1]! - x[i]!);
            expect(Object.is(m.data[c], want) || (Number.isNaN(m.data[c]) && Number.isNaN(want))).toBe(true);
            if (Number.isNaN(want)) anyNaN = true;
          }
          expect(m.warnings.some((w) => w.code === 'nan-in-window')).toBe(anyNaN);
        },
      ),
      { seed: 4, numRuns: 300 },
    );
  });

  it('periEventMatrix rejects unsorted or duplicate event times (TF_BAD_EVENTS) and windows longer than the recording (TF_WINDOW_OUT_OF_RANGE)', () => {
    const s = { values: new Float64Array(100), sampleRate: 10, t0: 0 };
    expect(() => periEventMatrix(s, [5, 4], { preSec: 1, postSec: 1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS', details: expect.objectContaining({ index: 1 }) }));
    expect(() => periEventMatrix(s, [5, 5], { preSec: 1, postSec: 1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
    expect(() => periEventMatrix(s, [5], { preSec: 5, postSec: 5 })).toThrow(expect.objectContaining({ code: 'TF_WINDOW_OUT_OF_RANGE' }));
    expect(() => periEventMatrix(s, [5], { preSecs: 1 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });

  it('periEventMatrix leaves out NaN event times (trials without the event) with reason missing-time', () => {
    const s = { values: new Float64Array(100), sampleRate: 10, t0: 0 };
    const m = periEventMatrix(s, [2, NaN, 6], { preSec: 1, postSec: 1 });
    expect(Array.from(m.kept)).toEqual([0, 2]);
    expect(m.excluded.reason).toEqual(['missing-time']);
  });

  it('periEventMatrix writes into a preallocated out buffer with the same values', () => {
    const s = { values: fx.x, sampleRate: fx.fs, t0: fx.t0 };
    const fresh = periEventMatrix(s, fx.events, { preSec: fx.preSec, postSec: fx.postSec });
    const buf = new Float64Array(fresh.rows * fresh.cols + 5);
    const reused = periEventMatrix(s, fx.events, { preSec: fx.preSec, postSec: fx.postSec, out: buf });
    expect(reused.data.buffer).toBe(buf.buffer);
    expect(Array.from(reused.data)).toEqual(Array.from(fresh.data));
    expect(() => periEventMatrix(s, fx.events, { preSec: fx.preSec, postSec: fx.postSec, out: new Float64Array(3) })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });

  it("periEventMatrix method 'nearest' reads the nearest sample (10 ms of jitter in the SIGNALS.md 3.6 example)", () => {
    const t = Float64Array.from({ length: 400 }, (_, i) => i / 20);
    const m = periEventMatrix({ values: t, sampleRate: 20, t0: 0 }, [12.34], { preSec: 2, postSec: 5, method: 'nearest' });
    // SIGNALS.md 3.6: the nearest sample (247) gives 12.35.
    expectAllClose(m.data[40]!, 12.35, { rtol: 1e-15, source: 'SIGNALS.md 3.6' });
  });
});

describe('periEventCounts', () => {
  it('periEventCounts histograms spikes in [te + r, te + r + bin) bins and converts to rates', () => {
    // One spike in the middle of every other 10 ms bin of [-0.1, 0.2) around 1 s, plus one far away.
    const spikes = [0.905, 0.925, 0.945, 0.965, 0.985, 1.005, 1.025, 1.045, 1.065, 1.085, 1.105, 1.125, 1.145, 1.165, 1.185, 5];
    const m = periEventCounts(spikes, [1], { preSec: 0.1, postSec: 0.2, binSec: 0.01, recordingSec: [0, 10] });
    expect(m.cols).toBe(30);
    expect(Array.from(row(m, 0))).toEqual(Array.from({ length: 30 }, (_, c) => (c % 2 === 0 ? 1 : 0)));
    const r = periEventCounts(spikes, [1], { preSec: 0.1, postSec: 0.2, binSec: 0.01, units: 'rate', recordingSec: [0, 10] });
    // 1 spike per 10 ms bin = 100 Hz.
    expectAllClose(row(r, 0)[0]!, 100, { rtol: 1e-12, source: 'analytic' });
  });

  it('periEventCounts drops windows outside recordingSec and warns when the bounds are unknown', () => {
    const m = periEventCounts([1, 2, 3], [0.05, 2], { preSec: 0.1, postSec: 0.2, recordingSec: [0, 10] });
    expect(Array.from(m.kept)).toEqual([1]);
    expect(m.excluded.reason).toEqual(['outside-recording']);
    const u = periEventCounts([1, 2, 3], [2], { preSec: 0.1, postSec: 0.2 });
    expect(u.warnings.map((w) => w.code)).toContain('recording-bounds-unknown');
  });

  it('periEventCounts rejects unsorted spikes and unsorted events with TF_BAD_EVENTS', () => {
    expect(() => periEventCounts([2, 1], [1])).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
    expect(() => periEventCounts([1, 2], [3, 1])).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
  });

  it('periEventCounts z-scores rows against the pre-event bins', () => {
    // Pre bins alternate 1, 0 (10 bins): mean 0.5, sample sd √(10/36)·… = √(2.5/9); post bins all 0.
    const spikes = [0.905, 0.925, 0.945, 0.965, 0.985];
    const m = periEventCounts(spikes, [1], { preSec: 0.1, postSec: 0.1, binSec: 0.01, baseline: 'zscore', recordingSec: [0, 2] });
    const sd = Math.sqrt((10 * 0.25) / 9); // Σ(x − 0.5)² = 10·0.25, divisor n − 1 = 9
    expectAllClose(row(m, 0)[10]!, -0.5 / sd, { rtol: 1e-12, source: 'analytic' });
    expectAllClose(row(m, 0)[0]!, 0.5 / sd, { rtol: 1e-12, source: 'analytic' });
  });
});

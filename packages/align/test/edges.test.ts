import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { analogEdges, digitalEdges } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
const fx = loadFixture('numpy/edges.json', fixtures);
const line = (s: string, sampleRate = 1, t0 = 0) => ({ values: Float64Array.from(s, Number), sampleRate, t0 });

describe('digitalEdges', () => {
  // Reference: SIGNALS.md §3.1 check [numpy].
  it("digitalEdges finds rises [2, 5, 12, 15] and falls [4, 9, 13, 18] in '0011011110001001110'", () => {
    const r = digitalEdges(line('0011011110001001110'));
    expect(Array.from(r.startIndex)).toEqual([2, 5, 12, 15]);
    expect(Array.from(r.endIndex)).toEqual([4, 9, 13, 18]);
    expect(Array.from(r.widths)).toEqual([2, 4, 1, 3]);
  });

  it('digitalEdges debounces with min_gap = min_width = 2 samples to [2, 9) and [15, 18)', () => {
    const r = digitalEdges(line('0011011110001001110'), { minGapSec: 2, minWidthSec: 2 });
    expect(Array.from(r.startIndex)).toEqual([2, 15]);
    expect(Array.from(r.endIndex)).toEqual([9, 18]);
    expect(r.nMerged).toBe(1);
    expect(r.nDropped).toBe(1);
  });

  it('digitalEdges gives sample times t0 + i / fs for starts and ends (1 kHz, seconds-valued debounce)', () => {
    const r = digitalEdges(line('0011011110001001110', 1000, 5), { minGapSec: 0.002, minWidthSec: 0.002 });
    // Times follow from the §3.1 indices: 5 + [2, 15]/1000 and 5 + [9, 18]/1000.
    expectAllClose(r.starts, [5.002, 5.015], { rtol: 1e-15, source: 'SIGNALS.md 3.1 indices' });
    expectAllClose(r.ends, [5.009, 5.018], { rtol: 1e-15, source: 'SIGNALS.md 3.1 indices' });
  });

  // Reference: fixtures/numpy/gen_edges.py (numpy 2.4.6), a bouncing random line.
  it('digitalEdges matches the numpy edge and debounce reference on a random bouncing line', () => {
    const s = { values: fx.digital.line, sampleRate: 1, t0: 0 };
    const raw = digitalEdges(s);
    expect(Array.from(raw.startIndex)).toEqual(Array.from(fx.digital.rises));
    expect(Array.from(raw.endIndex)).toEqual(Array.from(fx.digital.falls));
    const db = digitalEdges(s, { minGapSec: fx.digital.minGap, minWidthSec: fx.digital.minWidth });
    expect(Array.from(db.startIndex)).toEqual(Array.from(fx.digital.debouncedRises));
    expect(Array.from(db.endIndex)).toEqual(Array.from(fx.digital.debouncedFalls));
  });

  it('digitalEdges reads a bit of integer port words and handles active-low lines', () => {
    // Port words: bit 2 (value 4) carries the pattern of '0011011110001001110'; other bits are noise.
    const pattern = '0011011110001001110';
    const words = Float64Array.from(pattern, (c, i) => Number(c) * 4 + (i % 4 === 1 ? 1 : 0) + (i % 3 === 0 ? 2 : 0));
    const r = digitalEdges({ values: words, sampleRate: 1, t0: 0 }, { bit: 2 });
    expect(Array.from(r.startIndex)).toEqual([2, 5, 12, 15]);
    const inverted = line(Array.from(pattern, (c) => (c === '1' ? '0' : '1')).join(''));
    const n = digitalEdges(inverted, { polarity: 'negative', openPulses: 'drop' });
    expect(Array.from(n.startIndex)).toEqual([2, 5, 12, 15]);
  });

  it('digitalEdges flags pulses open at the record ends, or drops them on request', () => {
    const r = digitalEdges(line('1100110011'));
    expect(Array.from(r.startIndex)).toEqual([0, 4, 8]);
    expect(Array.from(r.endIndex)).toEqual([2, 6, 10]);
    expect(Array.from(r.open)).toEqual([1, 0, 2]);
    expect(r.warnings.map((w) => w.code)).toContain('open-pulses');
    const d = digitalEdges(line('1100110011'), { openPulses: 'drop' });
    expect(Array.from(d.startIndex)).toEqual([4]);
  });

  it('digitalEdges throws TF_NON_FINITE on a NaN sample and TF_BAD_VALUE on a non-integer port word', () => {
    const x = Float64Array.of(0, 1, NaN, 0);
    expect(() => digitalEdges({ values: x, sampleRate: 1, t0: 0 })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 2 }) }));
    expect(() => digitalEdges({ values: Float64Array.of(0, 1.5), sampleRate: 1, t0: 0 }, { bit: 0 })).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
  });
});

describe('analogEdges', () => {
  // Reference: SIGNALS.md §3.2 check [np-spec], regenerated in fixtures/numpy/gen_edges.py.
  const x = Float64Array.of(0, 0.5, 1.2, 2.6, 2.4, 1.1, 2.7, 3, 0.9, 0.2, 2.6, 0.5);
  const s = { values: x, sampleRate: 1, t0: 0 };

  it('analogEdges with hysteresis hi = 2.5, lo = 1 goes up at [3, 10] and down at [8, 11]', () => {
    const r = analogEdges(s, { high: 2.5, low: 1 });
    expect(Array.from(r.startIndex)).toEqual([3, 10]);
    expect(Array.from(r.endIndex)).toEqual([8, 11]);
    // Interpolated first crossing 2.9285714 (SIGNALS.md 3.2); float arithmetic of one division.
    expectAllClose(r.starts[0]!, 2.9285714, { atol: 5e-8, source: 'SIGNALS.md 3.2' });
    expectAllClose(r.starts, fx.check.tUp, { rtol: 1e-14, source: fx.source });
    expectAllClose(r.ends, fx.check.tDown, { rtol: 1e-14, source: fx.source });
  });

  it('analogEdges with a single threshold at 2.5 goes up at [3, 6, 10]', () => {
    const r = analogEdges(s, { high: 2.5, low: 2.5 });
    expect(Array.from(r.startIndex)).toEqual([3, 6, 10]);
  });

  it('analogEdges matches the numpy hysteresis reference on a noisy line, including interpolated times', () => {
    const r = analogEdges({ values: fx.analog.x, sampleRate: 1, t0: 0 }, { high: fx.analog.high, low: fx.analog.low });
    expect(Array.from(r.startIndex)).toEqual(Array.from(fx.analog.ups));
    expect(Array.from(r.endIndex)).toEqual(Array.from(fx.analog.downs));
    // Same formula in both languages: agreement to a few ulps of times ≤ 4000.
    expectAllClose(r.starts, fx.analog.tUp, { rtol: 1e-13, source: fx.source });
    expectAllClose(r.ends, fx.analog.tDown, { rtol: 1e-13, source: fx.source });
  });

  it('analogEdges finds negative pulses of a mirrored line at the same samples', () => {
    const neg = { values: x.map((v) => -v), sampleRate: 1, t0: 0 };
    const r = analogEdges(neg, { high: -1, low: -2.5, polarity: 'negative' });
    expect(Array.from(r.startIndex)).toEqual([3, 10]);
    expect(Array.from(r.endIndex)).toEqual([8, 11]);
    expectAllClose(r.starts, fx.check.tUp, { rtol: 1e-14, source: fx.source });
  });

  it('analogEdges drops pulses shorter than minWidthSec', () => {
    const r = analogEdges(s, { high: 2.5, low: 1, minWidthSec: 2 });
    expect(Array.from(r.startIndex)).toEqual([3]);
    expect(r.nDropped).toBe(1);
  });

  it("analogEdges refuses 'robust' levels on a clean TTL (zero MAD) with TF_DEGENERATE_SIGNAL, and low > high with TF_BAD_OPTION", () => {
    const ttl = line('0000000011000000000110000');
    expect(() => analogEdges(ttl)).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
    expect(() => analogEdges(s, { high: 1, low: 2 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => analogEdges({ values: Float64Array.of(0, NaN), sampleRate: 1, t0: 0 }, { high: 1, low: 0 })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
  });
});

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { decimateBand, decimateLine, linearScale } from '../src/index.js';

describe('decimateLine', () => {
  // M4 (Jugel et al. 2014, PVLDB 7(10):797–808): per pixel column, the first, last, minimum and maximum samples.
  it('decimateLine keeps ≤ 4 points per pixel column, including each column’s extremes and the end points', () => {
    fc.assert(fc.property(fc.integer({ min: 2000, max: 20000 }), fc.integer({ min: 20, max: 300 }), fc.integer({ min: 0, max: 1000 }), (n, width, seed) => {
      const y = Float64Array.from({ length: n }, (_, i) => Math.sin(i * 0.01 + seed) + ((i * 7919 + seed) % 101) / 50);
      const scale = linearScale([0, (n - 1) / 100], [10, 10 + width]);
      const d = decimateLine({ x0: 0, rate: 100 }, y, scale);
      expect(d.x.length).toBeLessThanOrEqual(4 * width);
      for (let i = 1; i < d.x.length; i++) expect(d.x[i]!).toBeGreaterThanOrEqual(d.x[i - 1]!);
      expect(d.y[0]).toBe(y[0]);
      expect(d.y[d.y.length - 1]).toBe(y[n - 1]);
      // Each column's min and max appear among the kept points of that column.
      const colOf = (x: number) => Math.min(width - 1, Math.floor(scale.map(x) - 10));
      const lo = new Float64Array(width).fill(Infinity), hi = new Float64Array(width).fill(-Infinity);
      for (let i = 0; i < n; i++) { const c = colOf(i / 100); lo[c] = Math.min(lo[c]!, y[i]!); hi[c] = Math.max(hi[c]!, y[i]!); }
      const klo = new Float64Array(width).fill(Infinity), khi = new Float64Array(width).fill(-Infinity);
      for (let j = 0; j < d.x.length; j++) { const c = colOf(d.x[j]!); klo[c] = Math.min(klo[c]!, d.y[j]!); khi[c] = Math.max(khi[c]!, d.y[j]!); }
      expect(Array.from(klo)).toEqual(Array.from(lo));
      expect(Array.from(khi)).toEqual(Array.from(hi));
    }), { seed: 4, numRuns: 30 });
  });

  it('decimateLine marks missing samples as a gap (NaN) instead of joining across them', () => {
    const y = Float64Array.from({ length: 10000 }, (_, i) => (i >= 4000 && i < 6000 ? NaN : 1));
    const d = decimateLine({ x0: 0, rate: 1 }, y, linearScale([0, 9999], [0, 100]));
    const gaps = Array.from(d.y).filter(Number.isNaN).length;
    expect(gaps).toBe(1);
    expect(d.x.length).toBeLessThanOrEqual(4 * 100 + 1);
  });

  it('decimateLine returns short lines unchanged', () => {
    const y = Float64Array.of(1, 3, 2);
    expect(Array.from(decimateLine(Float64Array.of(0, 1, 2), y, linearScale([0, 2], [0, 100])).y)).toEqual([1, 3, 2]);
    expect(() => decimateLine(Float64Array.of(0, 1), y, linearScale([0, 2], [0, 100]))).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('decimateBand', () => {
  it('decimateBand keeps an envelope: every input interval lies inside the band of its pixel column', () => {
    const n = 5000;
    const x = Float64Array.from({ length: n }, (_, i) => i / 1000);
    const low = Float64Array.from(x, (t) => Math.sin(7 * t) - 0.2 - 0.1 * Math.cos(97 * t));
    const high = Float64Array.from(x, (t) => Math.sin(7 * t) + 0.2 + 0.1 * Math.sin(89 * t));
    const scale = linearScale([0, (n - 1) / 1000], [0, 120]);
    const b = decimateBand(x, low, high, scale);
    expect(b.x.length).toBeLessThanOrEqual(2 * 120);
    const col = (t: number) => Math.min(119, Math.floor(scale.map(t)));
    const bl = new Map<number, number>(), bh = new Map<number, number>();
    for (let j = 0; j < b.x.length; j++) { bl.set(col(b.x[j]!), b.low[j]!); bh.set(col(b.x[j]!), b.high[j]!); }
    for (let i = 0; i < n; i++) {
      expect(low[i]!).toBeGreaterThanOrEqual(bl.get(col(x[i]!))!);
      expect(high[i]!).toBeLessThanOrEqual(bh.get(col(x[i]!))!);
    }
  });
});

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { loadFixture } from '@tuningfork/test-utils';
import { rng, Rng } from '../src/index.js';

const fx = loadFixture('fixtures/c/xoshiro128ss.json', import.meta.dirname);

describe('Rng', () => {
  // Reference: the published C code of xoshiro128** 1.1 and splitmix64 (Blackman & Vigna),
  // compiled from fixtures/c/xoshiro128ss_ref.c with our documented seeding.
  it('reproduces the reference xoshiro128** output stream for seeds 0, 1 and 20261202', () => {
    for (const c of fx.cases as { seed: number; outputs: Float64Array; output1000: number }[]) {
      const r = rng(c.seed);
      const got = Array.from({ length: 20 }, () => r.nextUint32());
      expect(got).toEqual(Array.from(c.outputs));
      for (let i = 20; i < 999; i++) r.nextUint32();
      expect(r.nextUint32()).toBe(c.output1000);
    }
  });

  it('rng(seed) gives bit-identical sequences for equal seeds and different ones otherwise', () => {
    const a = rng(42), b = rng(42), c = rng(43);
    const xa = Array.from({ length: 100 }, () => a.uniform());
    const xb = Array.from({ length: 100 }, () => b.uniform());
    const xc = Array.from({ length: 100 }, () => c.uniform());
    expect(xa).toEqual(xb);
    expect(xa).not.toEqual(xc);
  });

  it('stream(i) depends only on the key and i, not on draws made before', () => {
    const a = rng(7);
    const s1 = a.stream(3);
    for (let i = 0; i < 1000; i++) a.uniform();
    const s2 = a.stream(3);
    expect(Array.from({ length: 10 }, () => s1.nextUint32())).toEqual(Array.from({ length: 10 }, () => s2.nextUint32()));
    expect(rng(7).stream(4).nextUint32()).not.toBe(rng(7).stream(3).nextUint32());
    expect(rng(7).streamNamed('site01').nextUint32()).toBe(rng(7).streamNamed('site01').nextUint32());
  });

  it('uniform() lies in [0, 1) with mean 1/2 and variance 1/12 (textbook moments)', () => {
    const r = rng(1);
    const n = 200_000;
    let s = 0, s2 = 0, outside = 0;
    for (let i = 0; i < n; i++) {
      const u = r.uniform();
      if (!(u >= 0 && u < 1)) outside++;
      s += u; s2 += u * u;
    }
    expect(outside).toBe(0);
    const m = s / n;
    // Monte Carlo tolerance: 5 standard errors (sd 0.2887/√n = 6.5e-4).
    expect(Math.abs(m - 0.5)).toBeLessThan(5 * 0.2887 / Math.sqrt(n));
    expect(Math.abs(s2 / n - m * m - 1 / 12)).toBeLessThan(2e-3);
  });

  it('normal() matches the standard normal CDF at tabulated points', () => {
    // Reference: Abramowitz & Stegun (1964), Table 26.1: Φ(0.5) = 0.6914624613, Φ(1) = 0.8413447461,
    // Φ(2) = 0.9772498681, Φ(3) = 0.9986501020; and Φ(3.5) = 0.9997673709 (same table).
    const pts = [0.5, 1, 2, 3, 3.5, -1, -2];
    const phi = [0.6914624613, 0.8413447461, 0.9772498681, 0.998650102, 0.9997673709, 1 - 0.8413447461, 1 - 0.9772498681];
    const r = rng(11);
    const n = 400_000;
    const below = new Float64Array(pts.length);
    let s = 0, s2 = 0, s4 = 0;
    for (let i = 0; i < n; i++) {
      const z = r.normal();
      s += z; s2 += z * z; s4 += z ** 4;
      for (let k = 0; k < pts.length; k++) if (z < pts[k]!) below[k]!++;
    }
    for (let k = 0; k < pts.length; k++) {
      const p = phi[k]!;
      // Binomial sampling error; 5 standard errors.
      expect(Math.abs(below[k]! / n - p)).toBeLessThan(5 * Math.sqrt((p * (1 - p)) / n));
    }
    expect(Math.abs(s / n)).toBeLessThan(5 / Math.sqrt(n));
    expect(Math.abs(s2 / n - 1)).toBeLessThan(5 * Math.sqrt(2 / n));
    // Kurtosis of the normal is 3 (E z⁴ = 3, var z⁴ = 96).
    expect(Math.abs(s4 / n - 3)).toBeLessThan(5 * Math.sqrt(96 / n));
  });

  it('normalPolar() and normal() agree in distribution (tail beyond the ziggurat base R = 3.44)', () => {
    // Φ(−3.442619855899) ·2 = 5.76e-4 (two-sided tail mass; A&S 26.2.12 bound) — checked by count.
    const r = rng(5);
    const n = 1_000_000;
    let tailZig = 0;
    for (let i = 0; i < n; i++) if (Math.abs(r.normal()) > 3.442619855899) tailZig++;
    const p = 5.7604e-4; // 2·(1 − Φ(3.4426)), from the normal CDF (A&S 26.2.17 approximation, from memory)
    expect(Math.abs(tailZig / n - p)).toBeLessThan(5 * Math.sqrt((p * (1 - p)) / n));
    const q = rng(5);
    let tailPolar = 0;
    for (let i = 0; i < n; i++) if (Math.abs(q.normalPolar()) > 3.442619855899) tailPolar++;
    expect(Math.abs(tailPolar / n - p)).toBeLessThan(5 * Math.sqrt((p * (1 - p)) / n));
  });

  it('gamma(k, θ) has mean kθ and variance kθ² (textbook moments), also for k < 1', () => {
    for (const [k, th] of [[2, 0.25], [0.5, 2], [9, 1]] as const) {
      const r = rng(3);
      const n = 100_000;
      let s = 0, s2 = 0;
      for (let i = 0; i < n; i++) { const g = r.gamma(k, th); s += g; s2 += g * g; }
      const m = s / n, v = s2 / n - m * m;
      const sd = Math.sqrt(k) * th;
      expect(Math.abs(m - k * th)).toBeLessThan(5 * sd / Math.sqrt(n));
      expect(Math.abs(v / (k * th * th) - 1)).toBeLessThan(0.05);
    }
  });

  it('int(n) is uniform over [0, n) (chi-square, 9 df)', () => {
    const r = rng(9);
    const counts = new Float64Array(10);
    const n = 100_000;
    for (let i = 0; i < n; i++) counts[r.int(10)]!++;
    let chi = 0;
    for (const c of counts) chi += (c - n / 10) ** 2 / (n / 10);
    // χ²(9) upper 0.999 quantile = 27.877 (standard χ² table).
    expect(chi).toBeLessThan(27.877);
  });

  it('shuffle() is a permutation (property)', () => {
    fc.assert(fc.property(fc.integer({ min: 0, max: 2 ** 31 }), fc.integer({ min: 0, max: 50 }), (seed, n) => {
      const a = Int32Array.from({ length: n }, (_, i) => i);
      rng(seed).shuffle(a);
      expect(Array.from(a).sort((x, y) => x - y)).toEqual(Array.from({ length: n }, (_, i) => i));
    }), { seed: 17, numRuns: 50 });
  });

  it('rejects bad seeds and arguments with TF_BAD_OPTION', () => {
    expect(() => rng(-1)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => rng(1.5)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => new Rng(Number.NaN)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => rng(1).int(0)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => rng(1).gamma(0)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => rng(1).stream(-2)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

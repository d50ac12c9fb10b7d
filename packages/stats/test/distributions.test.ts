import { describe, expect, it } from 'vitest';
import { expectAllClose, loadFixture } from '@tuningfork/test-utils';
import { normalCdf, normalDensity, normalQuantile, studentTCdf, studentTQuantile } from '../src/index.js';

// Reference: mpmath.ncdf (40 digits) and scipy 1.17 norm.ppf / t.ppf / t.cdf; see fixtures/scipy/gen_distributions.py.
const fx = loadFixture('fixtures/scipy/distributions.json', import.meta.dirname);

describe('normalCdf', () => {
  it('matches mpmath (40 digits) from x = −30 to 8, including the far lower tail', () => {
    const got = Array.from(fx.normCdf.x as Float64Array, (x) => normalCdf(x));
    // Series / continued fraction with Cody's split of x²: a few ulps; 1e-14 relative still
    // catches a lost term (scipy itself is off by 6e-14 at x = −30).
    expectAllClose(got, fx.normCdf.cdf, { rtol: 1e-14, source: fx.source });
  });
  it('returns 0, 1 and NaN at −∞, +∞ and NaN, and is symmetric Φ(−x) = 1 − Φ(x)', () => {
    expect(normalCdf(-Infinity)).toBe(0);
    expect(normalCdf(Infinity)).toBe(1);
    expect(normalCdf(Number.NaN)).toBeNaN();
    for (const x of [0.3, 1.7, 2.4]) expectAllClose(normalCdf(-x), 1 - normalCdf(x), { rtol: 1e-14 }); // closed form
  });
  it('normalDensity(0) is 1/√(2π)', () => {
    expectAllClose(normalDensity(0), 1 / Math.sqrt(2 * Math.PI), { rtol: 1e-15 }); // closed form
  });
});

describe('normalQuantile', () => {
  it('matches scipy norm.ppf from p = 1e−300 to 1 − 1e−12 (AS 241)', () => {
    const got = Array.from(fx.normPpf.p as Float64Array, (p) => normalQuantile(p));
    // Wichura states ~1e-16 relative accuracy; 2e-15 leaves room for the last-bit rounding of both.
    expectAllClose(got, fx.normPpf.ppf, { rtol: 2e-15, source: fx.source });
  });
  it('gives the INFERENCE.md §5.3 z values (scipy ref.) and ±∞ / NaN at the ends', () => {
    // INFERENCE.md §5.3, scipy ref. norm.ppf.
    expectAllClose([normalQuantile(0.95), normalQuantile(0.975), normalQuantile(0.995)],
      [1.6448536269514722, 1.959963984540054, 2.5758293035489004], { rtol: 2e-15 });
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(1.5)).toBeNaN();
  });
});

describe('studentTQuantile', () => {
  it('matches scipy t.ppf for df 1–1000 (integer and fractional) and p from 1e−8 to 0.9995', () => {
    const cases = fx.tPpf as { df: number; p: number; quantile: number }[];
    const got = cases.map((c) => studentTQuantile(c.p, c.df));
    // Newton on a continued-fraction tail: ~1e-14 relative; 1e-12 is the documented accuracy bound.
    expectAllClose(got, cases.map((c) => c.quantile), { rtol: 1e-12, source: fx.source });
  });
  it('gives the INFERENCE.md §5.3 critical values (scipy ref.) and the e-Handbook table to 3 decimals', () => {
    const df = [1, 2, 5, 9, 10, 30, 100];
    const want = [12.706204736174694, 4.302652729749462, 2.5705818356363146, 2.262157162798205, 2.228138851986274,
      2.0422724563012378, 1.9839715185235518];
    expectAllClose(df.map((d) => studentTQuantile(0.975, d)), want, { rtol: 1e-12 }); // INFERENCE.md §5.3
    expectAllClose(studentTQuantile(0.995, 5), 4.032142983555228, { rtol: 1e-12 });
    expectAllClose(studentTQuantile(0.95, 10), 1.8124611228116756, { rtol: 1e-12 });
    // NIST/SEMATECH e-Handbook, upper critical values of Student's t: df 1: 63.657; df 10: 3.169 (3 decimals).
    expectAllClose([studentTQuantile(0.995, 1), studentTQuantile(0.995, 10)], [63.657, 3.169], { atol: 5e-4, rtol: 0 });
  });
  it('studentTQuantile(p, df) matches mpmath in the far lower tail (p 1e−30 to 1e−300, df 1.05–100, |t| up to 1e285)', () => {
    // Before: from a start far below the root, Newton crept by ≈ (1 + 1/ν) per step and stopped after
    // 200 iterations (df 3, p 1e−100: −5.9e30 instead of −2.2e33), and t² overflowed above 1.3e154.
    const cases = fx.tPpfFarTail.cases as { df: number; p: number; quantile: number }[];
    // Same ~1e-13 accuracy as in the body; 1e-12 is the documented bound (the mpmath roots are 50-digit).
    expectAllClose(cases.map((c) => studentTQuantile(c.p, c.df)), cases.map((c) => c.quantile), { rtol: 1e-12, source: fx.source });
    expect(studentTQuantile(1e-300, 0.3)).toBe(-Infinity); // |t| ≈ 1e1000 > 1e300 (documented)
  });
  it('studentTCdf(t, df) keeps its relative accuracy for |t| > 1.3e154 (t² overflows)', () => {
    const cases = fx.tCdfFarTail.cases as { df: number; t: number; cdf: number }[];
    // First term of the incomplete-beta series in logs, exact but for rounding; exp of an argument
    // near −550 turns its ≈ 550·ε absolute rounding into ≈ 1.2e-13 relative, so 5e-13 here.
    expectAllClose(cases.map((c) => studentTCdf(c.t, c.df)), cases.map((c) => c.cdf), { rtol: 5e-13, source: fx.source });
  });
  it('is −∞, 0, +∞ at p = 0, ½, 1 and rejects df ≤ 0 or p outside [0, 1] with TF_BAD_OPTION', () => {
    expect(studentTQuantile(0, 4)).toBe(-Infinity);
    expect(studentTQuantile(0.5, 4)).toBe(0);
    expect(studentTQuantile(1, 4)).toBe(Infinity);
    expect(() => studentTQuantile(0.5, 0)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => studentTQuantile(1.2, 3)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('studentTCdf', () => {
  it('matches scipy t.cdf for df 1–100 and t from −50 to 12', () => {
    const cases = fx.tCdf as { df: number; t: number; cdf: number }[];
    // Continued fraction of the incomplete beta: ~1e-15 relative; 1e-13 is headroom.
    expectAllClose(cases.map((c) => studentTCdf(c.t, c.df)), cases.map((c) => c.cdf), { rtol: 1e-13, source: fx.source });
  });
  it('inverts studentTQuantile', () => {
    for (const df of [3, 17.5]) for (const p of [0.01, 0.3, 0.99]) expectAllClose(studentTCdf(studentTQuantile(p, df), df), p, { rtol: 1e-13 }); // definition
  });
});

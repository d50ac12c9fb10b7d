import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { linearScale, logScale, logTicks, niceDomain, niceStep, ticksAt } from '../src/index.js';

/** True when v is 1, 2 or 5 × 10^k (the 'nice' steps of Heckbert 1990, Graphics Gems pp. 61–63). */
function isNice(v: number): boolean {
  const k = Math.floor(Math.log10(v) + 1e-12);
  const m = v / 10 ** k;
  return [1, 2, 5, 10].some((x) => Math.abs(m - x) < 1e-9);
}

describe('niceStep', () => {
  // Heckbert (1990), Graphics Gems, "Nice numbers for graph labels": steps are 1, 2 or 5 × 10^k.
  it('niceStep(span, count) is 1, 2 or 5 × 10^k within a factor 2.5 of span / count', () => {
    fc.assert(fc.property(fc.double({ min: 1e-8, max: 1e8, noNaN: true }), fc.integer({ min: 2, max: 10 }), (span, count) => {
      const s = niceStep(span, count);
      expect(isNice(s)).toBe(true);
      expect(s / (span / count)).toBeGreaterThan(0.4);
      expect(s / (span / count)).toBeLessThan(2.5);
    }), { seed: 3, numRuns: 300 });
  });

  it('niceStep(10, 5) = 2 and niceStep(0.97, 5) = 0.2 (worked by hand from the rule: 2.0 → 2, 0.194 → 0.2)', () => {
    expect(niceStep(10, 5)).toBe(2);
    expect(niceStep(0.97, 5)).toBe(0.2);
  });

  it('niceStep rejects a non-positive span with TF_BAD_OPTION', () => {
    expect(() => niceStep(0)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('niceDomain', () => {
  it('niceDomain(lo, hi) gives ticks at multiples of a nice step whose first and last ticks cover [lo, hi]', () => {
    fc.assert(fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.double({ min: 1e-6, max: 1e6, noNaN: true }), (lo, span) => {
      const hi = lo + span;
      if (!(hi > lo)) return;
      const { domain, step } = niceDomain(lo, hi, 5);
      expect(isNice(step)).toBe(true);
      const t = ticksAt(domain[0], domain[1], step);
      expect(t.length).toBeGreaterThanOrEqual(2);
      expect(t.length).toBeLessThanOrEqual(12);
      // Cover the data up to round-off: a value within a relative 1e-9 of a tick (in units of the step)
      // counts as on it, far below a pixel. The domain itself contains the data exactly.
      const tol = (v: number) => 1e-9 * step * Math.max(1, Math.abs(v / step));
      expect(t[0]!).toBeLessThanOrEqual(lo + tol(lo));
      expect(t[t.length - 1]!).toBeGreaterThanOrEqual(hi - tol(hi));
      expect(domain[0]).toBeLessThanOrEqual(lo);
      expect(domain[1]).toBeGreaterThanOrEqual(hi);
      // Integer multiples of the step, up to double round-off (relative ε·|v / step|, bounded by 1e-9 here).
      for (const v of t) expect(Math.abs(v / step - Math.round(v / step))).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(v / step)));
    }), { seed: 5, numRuns: 400 });
  });

  it('niceDomain(0.013, 0.987) = [0, 1] with step 0.2 and ticks print as short decimals', () => {
    const { domain, step } = niceDomain(0.013, 0.987, 5);
    expect(domain).toEqual([0, 1]);
    expect(step).toBe(0.2);
    // Decimal values must be the closest doubles (0.6, not 0.6000000000000001).
    expect(Array.from(ticksAt(0, 1, 0.2))).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
  });

  it('niceDomain widens a zero-width interval (documented repair) and rejects NaN with TF_NON_FINITE', () => {
    const { domain } = niceDomain(3, 3);
    expect(domain[0]).toBeLessThan(3);
    expect(domain[1]).toBeGreaterThan(3);
    expect(() => niceDomain(NaN, 1)).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
  });
});

describe('linearScale', () => {
  it('linearScale maps the domain ends to the range ends and is affine (closed form)', () => {
    const s = linearScale([-2, 6], [300, 100]);
    // pixel = r0 + (v − d0)(r1 − r0)/(d1 − d0): v = 0 → 300 − 2·25 = 250.
    expectAllClose([s.map(-2), s.map(6), s.map(0), s.invert(250)], [300, 100, 250, 0], { rtol: 1e-12, atol: 1e-12 });
  });

  it('linearScale(…, { nice: true }) extends to ticks and labels them with the typographic minus', () => {
    const s = linearScale([-0.73, 2.1], [0, 100], { nice: true });
    expect(s.domain).toEqual([-1, 2.5]);
    expect(s.ticks().map((t) => t.label)).toEqual(['−1.0', '−0.5', '0', '0.5', '1.0', '1.5', '2.0', '2.5']);
  });
});

describe('logScale', () => {
  it('logScale maps each decade to equal pixel steps and non-positive values to NaN', () => {
    const s = logScale([0.01, 100], [0, 400]);
    expectAllClose([s.map(0.01), s.map(0.1), s.map(1), s.map(100)], [0, 100, 200, 400], { rtol: 1e-12, atol: 1e-9 });
    expect(Number.isNaN(s.map(0))).toBe(true);
    expect(() => logScale([0, 1], [0, 1])).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });

  it('logScale(…, { nice: true }) extends to whole decades', () => {
    expect(logScale([0.3, 47], [0, 1], { nice: true }).domain).toEqual([0.1, 100]);
  });
});

describe('logTicks', () => {
  it('logTicks labels every decade inside the range and marks 2× and 5× as minor', () => {
    const t = logTicks(0.1, 1000);
    expect(t.filter((x) => !x.minor).map((x) => x.value)).toEqual([0.1, 1, 10, 100, 1000]);
    expect(t.filter((x) => !x.minor).map((x) => x.label)).toEqual(['0.1', '1', '10', '100', '1000']);
    expect(t.filter((x) => x.minor).map((x) => x.value)).toEqual([0.2, 0.5, 2, 5, 20, 50, 200, 500]);
    expect(logTicks(1e-6, 1e-4).filter((x) => !x.minor).map((x) => x.label)).toEqual(['10⁻⁶', '10⁻⁵', '10⁻⁴']);
  });
});

import { describe, expect, it } from 'vitest';
import { formatNumber, formatTick } from '../src/index.js';

describe('formatTick', () => {
  // Expected strings follow from the documented rule (decimals = −log10(step) for steps below 1), common practice.
  it('formatTick shows just the decimals the step needs, with a typographic minus', () => {
    expect(formatTick(0.30000000000000004, 0.1)).toBe('0.3');
    expect(formatTick(-2, 1)).toBe('−2');
    expect(formatTick(-0, 0.5)).toBe('0');
    expect(formatTick(0.25, 0.05)).toBe('0.25');
    expect(formatTick(1500, 500)).toBe('1500');
  });

  it('formatTick switches to powers of ten for very large or very fine values', () => {
    expect(formatTick(2e6, 1e6)).toBe('2×10⁶');
    expect(formatTick(3e-7, 1e-7)).toBe('3×10⁻⁷');
  });
});

describe('formatNumber', () => {
  it('formatNumber uses 3 significant digits by default, — for NaN and never shows a non-zero value as 0', () => {
    expect(formatNumber(0.012345)).toBe('0.0123');
    expect(formatNumber(-1234.5)).toBe('−1230');
    expect(formatNumber(NaN)).toBe('—');
    expect(formatNumber(0.00001234)).toBe('1.23×10⁻⁵');
    expect(formatNumber(0.0004, { decimals: 2 })).toBe('4.0×10⁻⁴');
    expect(formatNumber(2.5, { decimals: 0 })).toBe('3'); // toFixed rounds half away from zero for 2.5 (ECMA-262 Number.prototype.toFixed)
  });
});

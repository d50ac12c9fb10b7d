import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { rng } from '@tuningfork/core';
import { medianOf } from '../src/internal/select.js';

/** Median by a full native sort, numpy's convention (mean of the two middle values for even n; numpy.median docs). */
function sortedMedian(x: Float64Array): number {
  const s = Float64Array.from(x).sort();
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2]! : (s[n / 2 - 1]! + s[n / 2]!) / 2;
}

/** Arrays built to stress the strided-sample bracket: heavy ties, sorted runs, periods that alias with the stride. */
function build(kind: number, n: number, seed: number): Float64Array {
  const g = rng(seed);
  const x = new Float64Array(n);
  const stride = Math.floor(n / 4096);
  for (let i = 0; i < n; i++) {
    switch (kind) {
      case 0: x[i] = g.normal(); break;
      case 1: x[i] = Math.floor(g.uniform() * 5); break; // five values only
      case 2: x[i] = i; break; // sorted
      case 3: x[i] = n - i; break; // reversed
      case 4: x[i] = i % stride === 0 ? 1e6 : g.normal(); break; // the sample sees only outliers
      case 5: x[i] = 3.25; break; // constant
      default: x[i] = Math.abs(g.normal()) ** 3 * (i % 2 ? 1 : -1); break; // heavy tails
    }
  }
  return x;
}

describe('medianOf', () => {
  it('equals the median of a full sort, without touching its input, whatever the values (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 6 }), fc.integer({ min: 1, max: 60000 }), fc.integer({ min: 0, max: 1e6 }), (kind, n, seed) => {
        const x = build(kind, n, seed);
        const before = Float64Array.from(x);
        expect(medianOf(x)).toBe(sortedMedian(x));
        expect(x).toEqual(before);
      }),
      { numRuns: 60, seed: 11 },
    );
  });

  it('takes the fast path on long inputs and still matches the sort at both parities', () => {
    for (const n of [1 << 16, (1 << 16) + 1, 250001]) {
      const x = build(0, n, n);
      expect(medianOf(x)).toBe(sortedMedian(x));
    }
  });
});

// Two-option reversal schedule from a generator (trusted arguments).
import type { Matrix, Rng } from '@tuningfork/core';

export function buildReversal(
  n: number,
  probs: readonly [number, number],
  blocks: readonly [number, number],
  firstBetter: 0 | 1 | 'random',
  random: Rng,
): { schedule: Matrix; better: Int32Array; blockStarts: Int32Array } {
  const [bmin, bmax] = blocks;
  let better = firstBetter === 'random' ? random.int(2) : firstBetter;
  const data = new Float64Array(n * 2);
  const betterOut = new Int32Array(n);
  const starts: number[] = [];
  let t = 0;
  while (t < n) {
    starts.push(t);
    const len = bmin + random.int(bmax - bmin + 1);
    for (let k = 0; k < len && t < n; k++, t++) {
      betterOut[t] = better;
      data[t * 2 + better] = probs[0];
      data[t * 2 + (1 - better)] = probs[1];
    }
    better = 1 - better;
  }
  return { schedule: { data, rows: n, cols: 2 }, better: betterOut, blockStarts: Int32Array.from(starts) };
}

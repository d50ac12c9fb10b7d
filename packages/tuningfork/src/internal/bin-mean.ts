import type { UniformSignal } from '@tuningfork/core';

/**
 * Mean of `signal` in consecutive bins of 1/binRate seconds starting at `startSec` (nBins bins):
 * bin i covers [startSec + i/binRate, startSec + (i+1)/binRate). A bin with no sample or any NaN
 * sample is NaN (NaN propagates; it is never skipped silently).
 */
export function binMean(signal: UniformSignal, startSec: number, binRate: number, nBins: number): Float64Array {
  const out = new Float64Array(nBins);
  const fs = signal.sampleRate;
  const x = signal.values;
  for (let i = 0; i < nBins; i++) {
    const a = Math.max(0, Math.ceil((startSec + i / binRate - signal.t0) * fs - 1e-9));
    const b = Math.min(x.length, Math.ceil((startSec + (i + 1) / binRate - signal.t0) * fs - 1e-9));
    if (b <= a) {
      out[i] = NaN;
      continue;
    }
    let s = 0;
    for (let k = a; k < b; k++) s += x[k]!;
    out[i] = s / (b - a);
  }
  return out;
}

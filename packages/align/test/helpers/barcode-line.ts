/**
 * Barcode lines for tests, written straight from the format in decodeBarcodes' documentation:
 * header pulse, header gap, nBits data cells (active = 1). Independent of the decoder's code.
 */
import type { UniformSignal } from '@tuningfork/core';

export interface BarcodeFormat {
  bitSec: number;
  nBits: number;
  headerSec: number;
  headerGapSec: number;
  bitOrder: 'lsb-first' | 'msb-first';
}

/** Active intervals [start, end) of one barcode starting at t0. */
export function barcodeIntervals(t0: number, value: number, f: BarcodeFormat): [number, number][] {
  const out: [number, number][] = [[t0, t0 + f.headerSec]];
  const data = t0 + f.headerSec + f.headerGapSec;
  for (let k = 0; k < f.nBits; k++) {
    const weight = f.bitOrder === 'lsb-first' ? k : f.nBits - 1 - k;
    const bit = Math.floor(value / 2 ** weight) % 2;
    if (bit === 0) continue;
    const s = data + k * f.bitSec;
    const last = out[out.length - 1]!;
    if (out.length > 1 && Math.abs(last[1] - s) < 1e-12) last[1] = s + f.bitSec;
    else out.push([s, s + f.bitSec]);
  }
  return out;
}

/** A 0/1 line sampled at `sampleRate` from t0Line for durationSec, high inside every barcode's intervals. */
export function barcodeLine(starts: ArrayLike<number>, values: ArrayLike<number>, f: BarcodeFormat, sampleRate: number, t0Line: number, durationSec: number): UniformSignal {
  const n = Math.round(durationSec * sampleRate);
  const x = new Float64Array(n);
  for (let b = 0; b < starts.length; b++) {
    for (const [s, e] of barcodeIntervals(starts[b]!, values[b]!, f)) {
      const i0 = Math.max(0, Math.ceil((s - t0Line) * sampleRate - 1e-9));
      const i1 = Math.min(n, Math.ceil((e - t0Line) * sampleRate - 1e-9));
      for (let i = i0; i < i1; i++) x[i] = 1;
    }
  }
  return { values: x, sampleRate, t0: t0Line };
}

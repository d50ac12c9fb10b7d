import { TuningforkError } from '@tuningfork/core';

/** Throw TF_SHAPE_MISMATCH unless every array has the length of the first. */
export function checkLengths(fn: string, what: string, arrays: Readonly<Record<string, { length: number }>>): void {
  const entries = Object.entries(arrays);
  const n = entries[0]?.[1].length ?? 0;
  for (const [k, a] of entries) {
    if (a.length !== n) {
      const desc = entries.map(([kk, aa]) => `${kk}: ${aa.length}`).join(', ');
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${what} arrays must have equal lengths, got ${desc}.`, { fn, where: what, [k]: a.length, expected: n });
    }
  }
}

/** Throw TF_BAD_SAMPLE_RATE / TF_BAD_OPTION for a malformed UniformSignal. */
export function checkSignal(fn: string, name: string, s: { values: Float64Array; sampleRate: number; t0: number }): void {
  if (!(s.values instanceof Float64Array)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name}.values must be a Float64Array.`, { fn, name });
  if (!(s.sampleRate > 0) || !Number.isFinite(s.sampleRate)) throw new TuningforkError('TF_BAD_SAMPLE_RATE', `${fn}: ${name}.sampleRate must be finite and > 0 Hz, got ${s.sampleRate}.`, { fn, name, sampleRate: s.sampleRate });
  if (!Number.isFinite(s.t0)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name}.t0 must be finite, got ${s.t0}.`, { fn, name, t0: s.t0 });
}

/** [min, max] of the finite values of several arrays (optionally only positive ones), or null when there are none. */
export function finiteExtent(arrays: readonly ArrayLike<number>[], positiveOnly = false): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const a of arrays) {
    for (let i = 0; i < a.length; i++) {
      const v = a[i]!;
      if (v - v !== 0 || (positiveOnly && !(v > 0))) continue; // NaN or ±Infinity
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return lo <= hi ? [lo, hi] : null;
}

/** Order of rows sorted by key ascending (stable; NaN keys last). */
export function sortOrder(key: Float64Array): Uint32Array {
  const idx = Array.from({ length: key.length }, (_, i) => i);
  idx.sort((a, b) => {
    const x = key[a]!;
    const y = key[b]!;
    const xn = Number.isNaN(x);
    const yn = Number.isNaN(y);
    if (xn || yn) return xn === yn ? a - b : xn ? 1 : -1;
    return x - y || a - b;
  });
  return Uint32Array.from(idx);
}

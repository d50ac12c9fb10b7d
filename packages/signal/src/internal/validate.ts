/** Entry checks shared by the public functions of this package (kernels trust their input). */
import { TuningforkError, checkSampleRate, formatValue, toFloat64 } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';

/** Index of the first NaN/±Infinity in x[start, end), or −1. */
export function firstNonFinite(x: ArrayLike<number>, start = 0, end = x.length): number {
  if (x instanceof Float64Array) return firstNonFiniteF64(x, start, end);
  for (let i = start; i < end; i++) {
    const v = x[i]!;
    if (v - v !== 0) return i; // NaN or ±Infinity
  }
  return -1;
}

/** Monomorphic Float64Array version of {@link firstNonFinite} (kept separate for the JIT). */
function firstNonFiniteF64(x: Float64Array, start: number, end: number): number {
  // Sum blocks first: a finite block sum proves the block finite (overflow to ±Infinity or NaN
  // sends us to the exact scan).
  const B = 1024;
  for (let a = start; a < end; a += B) {
    const b = Math.min(end, a + B);
    let s = 0;
    for (let i = a; i < b; i++) s += x[i]! * 0;
    if (s !== 0 || s - s !== 0) {
      for (let i = a; i < b; i++) {
        const v = x[i]!;
        if (v - v !== 0) return i;
      }
    }
  }
  return -1;
}

/** Number of non-finite values. */
export function countNonFinite(x: ArrayLike<number>): number {
  let c = 0;
  for (let i = 0; i < x.length; i++) {
    const v = x[i]!;
    if (v - v !== 0) c++;
  }
  return c;
}

/**
 * Throw TF_NON_FINITE naming the first non-finite sample (index, and time when a clock is given).
 */
export function requireFinite(
  fn: string,
  name: string,
  x: ArrayLike<number>,
  clock?: { sampleRate: number; t0: number },
  hint = 'Remove or interpolate the missing samples, or ask for gap splitting where the function offers it.',
): void {
  const i = firstNonFinite(x);
  if (i < 0) return;
  const where = clock ? ` at t=${formatTime(clock.t0 + i / clock.sampleRate)} s` : '';
  throw new TuningforkError(
    'TF_NON_FINITE',
    `${fn}: ${name}[${i}]${where} is ${String(x[i])}; finite values are required. ${hint}`,
    { fn, parameter: name, index: i, ...(clock ? { time: clock.t0 + i / clock.sampleRate } : {}), value: x[i] },
  );
}

export function formatTime(t: number): string {
  return Number.isInteger(t) ? String(t) : t.toPrecision(Math.max(6, Math.ceil(Math.log10(Math.abs(t) + 1)) + 4));
}

/** Validate a UniformSignal argument (values Float64Array, sampleRate, t0). */
export function checkUniform(fn: string, name: string, s: unknown): UniformSignal {
  if (s === null || typeof s !== 'object') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a UniformSignal { values, sampleRate, t0 }, got ${formatValue(s)}.`, { fn, parameter: name });
  }
  const u = s as Partial<UniformSignal>;
  if (!(u.values instanceof Float64Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name}.values must be a Float64Array, got ${formatValue(u.values)}.`, { fn, parameter: name });
  }
  checkSampleRate(`${fn} (${name})`, u.sampleRate);
  if (typeof u.t0 !== 'number' || !Number.isFinite(u.t0)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name}.t0 must be a finite number of seconds, got ${formatValue(u.t0)}.`, { fn, parameter: name });
  }
  return u as UniformSignal;
}

/** Require two uniform signals on the same grid (same length, rate and start). */
export function checkSameGrid(fn: string, a: UniformSignal, aName: string, b: UniformSignal, bName: string): void {
  if (a.values.length !== b.values.length) {
    throw new TuningforkError(
      'TF_SHAPE_MISMATCH',
      `${fn}: ${aName} has ${a.values.length} samples but ${bName} has ${b.values.length}; both channels must share one grid. Trim or resample them to a common grid first.`,
      { fn, [aName]: a.values.length, [bName]: b.values.length },
    );
  }
  if (a.sampleRate !== b.sampleRate || a.t0 !== b.t0) {
    throw new TuningforkError(
      'TF_SHAPE_MISMATCH',
      `${fn}: ${aName} (${a.sampleRate} Hz from t=${a.t0} s) and ${bName} (${b.sampleRate} Hz from t=${b.t0} s) are on different grids; resample one onto the other first.`,
      { fn, sampleRates: [a.sampleRate, b.sampleRate], t0: [a.t0, b.t0] },
    );
  }
}

/** Convert to Float64Array and check the length matches. */
export function asF64(fn: string, name: string, x: ArrayLike<number>, length?: number): Float64Array {
  if (x === null || typeof x !== 'object' || typeof (x as ArrayLike<number>).length !== 'number') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be an array of numbers, got ${formatValue(x)}.`, { fn, parameter: name });
  }
  const f = toFloat64(x);
  if (length !== undefined && f.length !== length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name} has length ${f.length}, expected ${length}.`, { fn, parameter: name, length: f.length, expected: length });
  }
  return f;
}

/** Time window [startSec, endSec) → sample index range [i0, i1) clipped to [0, n). */
export function windowIndices(s: UniformSignal, win: readonly [number, number] | null): [number, number] {
  const n = s.values.length;
  if (win === null) return [0, n];
  const i0 = Math.max(0, Math.ceil((win[0] - s.t0) * s.sampleRate - 1e-9));
  const i1 = Math.min(n, Math.ceil((win[1] - s.t0) * s.sampleRate - 1e-9));
  return [i0, Math.max(i0, i1)];
}

/** Validate an optional [start, end] window option in seconds. */
export function checkWindow(fn: string, name: string, v: unknown): readonly [number, number] | null {
  if (v === null) return null;
  if (!Array.isArray(v) || v.length !== 2 || typeof v[0] !== 'number' || typeof v[1] !== 'number' || !Number.isFinite(v[0]) || !Number.isFinite(v[1]) || !(v[0] < v[1])) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be null or [startSec, endSec] with startSec < endSec, got ${JSON.stringify(v)}.`, { fn, option: name });
  }
  return [v[0], v[1]];
}

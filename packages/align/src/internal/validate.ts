import { TuningforkError, checkSampleRate } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';

/** Validate a UniformSignal's shape (values Float64Array, rate, finite t0, at least `minLength` samples). */
export function checkSignal(fn: string, name: string, signal: UniformSignal, minLength = 2): void {
  if (signal === null || typeof signal !== 'object' || !(signal.values instanceof Float64Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a UniformSignal with a Float64Array of values.`, { fn, parameter: name });
  }
  checkSampleRate(fn, signal.sampleRate);
  if (!Number.isFinite(signal.t0)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name}.t0 must be a finite number of seconds, got ${signal.t0}.`, { fn, parameter: name });
  }
  if (signal.values.length < minLength) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${name} has ${signal.values.length} samples; at least ${minLength} are needed.`, { fn, parameter: name, n: signal.values.length });
  }
}

/**
 * Require event times to be strictly increasing among the finite values. NaN entries are allowed
 * only when `allowNaN` (they mean "did not occur"); ±Infinity is never allowed.
 *
 * @throws {TuningforkError} TF_BAD_EVENTS naming the first offending index and both times.
 */
export function checkEventTimes(fn: string, name: string, times: Float64Array, allowNaN: boolean): void {
  let prev = -Infinity;
  let prevIndex = -1;
  for (let i = 0; i < times.length; i++) {
    const t = times[i]!;
    if (t !== t) {
      if (!allowNaN) {
        throw new TuningforkError('TF_BAD_EVENTS', `${fn}: ${name}[${i}] is NaN; event times must be finite.`, { fn, parameter: name, index: i });
      }
      continue;
    }
    if (t === Infinity || t === -Infinity) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: ${name}[${i}] is ${t}; event times must be finite seconds.`, { fn, parameter: name, index: i });
    }
    if (t <= prev) {
      const what = t === prev ? 'duplicates' : 'precedes';
      throw new TuningforkError(
        'TF_BAD_EVENTS',
        `${fn}: ${name}[${i}] = ${t} s ${what} ${name}[${prevIndex}] = ${prev} s; event times must be strictly increasing. Sort them and remove duplicates first.`,
        { fn, parameter: name, index: i, time: t, previousIndex: prevIndex, previousTime: prev },
      );
    }
    prev = t;
    prevIndex = i;
  }
}

/** Require a [start, end) pair of finite numbers with start < end. @throws TF_BAD_OPTION */
export function checkInterval(fn: string, name: string, v: unknown): readonly [number, number] {
  if (!Array.isArray(v) && !(ArrayBuffer.isView(v) && (v as unknown as ArrayLike<number>).length !== undefined)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a pair [start, end] of seconds.`, { fn, option: name });
  }
  const a = (v as ArrayLike<number>)[0];
  const b = (v as ArrayLike<number>)[1];
  if ((v as ArrayLike<number>).length !== 2 || typeof a !== 'number' || typeof b !== 'number' || !Number.isFinite(a) || !Number.isFinite(b) || !(a < b)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a pair [start, end] of finite seconds with start < end, got ${JSON.stringify(Array.from(v as ArrayLike<number>))}.`, { fn, option: name });
  }
  return [a, b];
}

/** Require an array-like of numbers (typed array or plain array). @throws TF_BAD_OPTION */
export function checkNumberArray(fn: string, name: string, v: unknown): ArrayLike<number> {
  if (v instanceof Float64Array || (Array.isArray(v) && v.every((x) => typeof x === 'number')) || (ArrayBuffer.isView(v) && !(v instanceof DataView))) {
    return v as ArrayLike<number>;
  }
  throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be an array of numbers (seconds).`, { fn, option: name });
}

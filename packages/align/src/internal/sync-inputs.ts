/**
 * Input checks of fitClockMap: the two pulse trains and the optional per-pulse codes.
 */
import { TuningforkError, toFloat64 } from '@tuningfork/core';
import { checkNumberArray } from './validate.js';

/**
 * Reference pulses finite and strictly increasing; device pulses finite, without consecutive
 * duplicates, and increasing except at clock resets (counted, or refused with jumps 'error').
 */
export function checkSyncPulses(fn: string, referencePulses: ArrayLike<number>, devicePulses: ArrayLike<number>, jumps: 'split' | 'error'): { A: Float64Array; B: Float64Array; resets: number } {
  const A = toFloat64(checkNumberArray(fn, 'referencePulses', referencePulses));
  const B = toFloat64(checkNumberArray(fn, 'devicePulses', devicePulses));
  for (let i = 0; i < A.length; i++) {
    if (!Number.isFinite(A[i])) throw new TuningforkError('TF_BAD_EVENTS', `${fn}: referencePulses[${i}] is ${A[i]}; pulse times must be finite seconds.`, { fn, parameter: 'referencePulses', index: i });
    if (i > 0 && !(A[i]! > A[i - 1]!)) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: referencePulses[${i}] = ${A[i]} s does not follow referencePulses[${i - 1}] = ${A[i - 1]} s; reference pulses must be strictly increasing (sort them and remove duplicates).`, { fn, parameter: 'referencePulses', index: i });
    }
  }
  let resets = 0;
  for (let j = 0; j < B.length; j++) {
    if (!Number.isFinite(B[j])) throw new TuningforkError('TF_BAD_EVENTS', `${fn}: devicePulses[${j}] is ${B[j]}; pulse times must be finite seconds.`, { fn, parameter: 'devicePulses', index: j });
    if (j > 0 && B[j] === B[j - 1]) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: devicePulses[${j}] duplicates devicePulses[${j - 1}] (${B[j]} s); remove duplicate pulses.`, { fn, parameter: 'devicePulses', index: j });
    }
    if (j > 0 && B[j]! < B[j - 1]!) {
      if (jumps === 'error') {
        throw new TuningforkError('TF_SYNC_FAILED', `${fn}: the device clock goes back at pulse ${j} (${B[j - 1]} s → ${B[j]} s), a reset; pass { jumps: 'split' } to fit each stretch separately.`, { fn, index: j });
      }
      resets++;
    }
  }
  return { A, B, resets };
}

/** Validate the optional per-pulse codes: both or neither, one per pulse, non-negative integers or NaN. */
export function checkCodes(fn: string, ref: ArrayLike<number> | null, dev: ArrayLike<number> | null, nA: number, nB: number): { reference: Float64Array; device: Float64Array } | null {
  if (ref === null && dev === null) return null;
  if (ref === null || dev === null) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${ref === null ? 'deviceCodes' : 'referenceCodes'} was given without ${ref === null ? 'referenceCodes' : 'deviceCodes'}; codes match two trains, so pass both or neither.`, { fn });
  }
  const out: Float64Array[] = [];
  for (const [name, c, n] of [['referenceCodes', ref, nA], ['deviceCodes', dev, nB]] as const) {
    const x = toFloat64(checkNumberArray(fn, name, c));
    if (x.length !== n) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name} has ${x.length} entries for ${n} pulses; pass one code per pulse (NaN where unknown).`, { fn, parameter: name, codes: x.length, pulses: n });
    }
    for (let i = 0; i < n; i++) {
      const v = x[i]!;
      if (v === v && !(Number.isInteger(v) && v >= 0)) {
        throw new TuningforkError('TF_BAD_VALUE', `${fn}: ${name}[${i}] is ${v}; a code must be a non-negative integer (NaN where unknown).`, { fn, parameter: name, index: i });
      }
    }
    out.push(x);
  }
  return { reference: out[0]!, device: out[1]! };
}

import { TuningforkError, formatValue } from '@tuningfork/core';

/** Require a number in the open interval (0, 1). @throws TF_BAD_OPTION */
export function checkOpenUnit(fn: string, name: string, v: unknown): number {
  if (typeof v !== 'number' || !(v > 0 && v < 1)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a number in (0, 1), got ${formatValue(v)}.`, { fn, option: name, value: v });
  }
  return v;
}

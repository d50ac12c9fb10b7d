// Validation of the fitting options shared by fitChoiceModel and the recovery tools.
import { TuningforkError, checkInteger, checkPositive, formatValue } from '@tuningfork/core';
import type { ChoiceParamName, ModelStructure } from '../choice/model.js';
import { DEFAULT_BOUNDS, PARAM_DOMAIN, START_RANGES } from '../choice/model.js';
import type { FitSettings } from './fit-core.js';
import { resolvePriors } from './priors.js';

export type ParamRanges = Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>;

/** Check a record of [lo, hi] pairs: known parameter names, numbers, lo < hi (or ≤ when `allowEqual`). */
export function checkRanges(fn: string, option: string, ranges: unknown, allowEqual: boolean): ParamRanges {
  if (typeof ranges !== 'object' || ranges === null || Array.isArray(ranges)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${option} must be an object of [lo, hi] pairs keyed by parameter name, got ${formatValue(ranges)}.`, { fn, option });
  }
  for (const [key, v] of Object.entries(ranges)) {
    if (!(key in PARAM_DOMAIN)) {
      throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: ${option}.${key} is not a parameter name (known: ${Object.keys(PARAM_DOMAIN).join(', ')}).`, { fn, option: `${option}.${key}` });
    }
    const ok = Array.isArray(v) && v.length === 2 && typeof v[0] === 'number' && typeof v[1] === 'number' && !Number.isNaN(v[0]) && !Number.isNaN(v[1]) && (allowEqual ? v[0] <= v[1] : v[0] < v[1]);
    if (!ok) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${option}.${key} must be [lo, hi] with lo ${allowEqual ? '≤' : '<'} hi, got ${formatValue(v)}.`, { fn, option: `${option}.${key}` });
    }
    const [dlo, dhi] = PARAM_DOMAIN[key as ChoiceParamName];
    if (v[0] < dlo || v[1] > dhi) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${option}.${key} = [${v[0]}, ${v[1]}] leaves the admissible domain [${dlo}, ${dhi}] of ${key}.`, { fn, option: `${option}.${key}` });
    }
  }
  return ranges as ParamRanges;
}

export interface FitSettingOptions {
  readonly bounds: unknown;
  readonly startRanges: unknown;
  readonly starts: unknown;
  readonly gradientTolerance: unknown;
  readonly maxIterations: unknown;
  readonly bestTolerance: unknown;
  readonly hessianStep: unknown;
  readonly boundTolerance: unknown;
  readonly priors: unknown;
}

/** Resolve and validate the fitting settings of model `m`. @throws TF_BAD_OPTION, TF_UNKNOWN_OPTION */
export function resolveFitSettings(fn: string, m: ModelStructure, o: FitSettingOptions): FitSettings {
  const bounds = checkRanges(fn, 'bounds', o.bounds, false);
  const startRanges = checkRanges(fn, 'startRanges', o.startRanges, true);
  const b = m.params.map((name) => bounds[name] ?? DEFAULT_BOUNDS[name]);
  const sr = m.params.map((name, j) => {
    const [blo, bhi] = b[j]!;
    const user = startRanges[name];
    const [dlo, dhi] = user ?? START_RANGES[name];
    let lo = Math.max(dlo, blo);
    let hi = Math.min(dhi, bhi);
    if (!user && !(lo <= hi) && Number.isFinite(bhi - blo)) {
      // narrow user bounds that miss the default start range: start inside the bounds instead
      lo = blo + 0.05 * (bhi - blo);
      hi = bhi - 0.05 * (bhi - blo);
    }
    if (!(lo <= hi) || (user && (user[0] < blo || user[1] > bhi))) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: the start range of ${name} [${dlo}, ${dhi}] lies outside its bounds [${blo}, ${bhi}]; pass startRanges.${name} inside the bounds.`, { fn, option: `startRanges.${name}` });
    }
    return [lo, hi] as const;
  });
  return {
    bounds: b,
    startRanges: sr,
    starts: checkInteger(fn, 'starts', o.starts, 1, 10000),
    gradientTolerance: checkPositive(fn, 'gradientTolerance', o.gradientTolerance),
    maxIterations: checkInteger(fn, 'maxIterations', o.maxIterations, 1, 1e6),
    bestTolerance: checkPositive(fn, 'bestTolerance', o.bestTolerance),
    hessianStep: checkPositive(fn, 'hessianStep', o.hessianStep),
    boundTolerance: checkPositive(fn, 'boundTolerance', o.boundTolerance),
    priors: resolvePriors(fn, m, o.priors),
  };
}

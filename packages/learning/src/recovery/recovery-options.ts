// Options shared by parameterRecovery and modelRecovery.
import { TuningforkError, checkInteger, checkRange, formatValue } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import type { ChoiceParamName, ModelStructure } from '../choice/model.js';
import { checkModelOptions } from '../choice/model.js';
import { checkRanges } from '../internal/fit-settings.js';

/** Default ranges the true parameters are drawn from (uniform, natural scale). */
export const RECOVERY_RANGES: Readonly<Record<ChoiceParamName, readonly [number, number]>> = Object.freeze({
  alpha: [0.1, 0.9],
  alphaPos: [0.1, 0.9],
  alphaNeg: [0.1, 0.9],
  beta: [1, 10],
  forget: [0.02, 0.4],
  alphaC: [0.1, 0.9],
  betaC: [0.5, 3],
  epsilon: [0.02, 0.3],
  bias: [0.2, 0.8],
});

export function drawRanges(fn: string, m: ModelStructure, ranges: unknown): (readonly [number, number])[] {
  const user = checkRanges(fn, 'ranges', ranges, true);
  return m.params.map((name) => user[name] ?? RECOVERY_RANGES[name]);
}

export function checkSchedule(fn: string, schedule: unknown, models: readonly ModelStructure[]): Matrix | null {
  if (schedule === null) {
    for (const m of models) checkModelOptions(fn, m, 2);
    return null;
  }
  const s = schedule as Matrix;
  if (!s || !(s.data instanceof Float64Array) || !Number.isInteger(s.rows) || !Number.isInteger(s.cols) || s.data.length !== s.rows * s.cols || s.rows < 2 || s.cols < 2) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: schedule must be null or a { data: Float64Array, rows ≥ 2, cols ≥ 2 } matrix of reward probabilities (trials × options).`, { fn, option: 'schedule' });
  }
  for (let i = 0; i < s.data.length; i++) {
    if (!(s.data[i]! >= 0 && s.data[i]! <= 1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: schedule row ${Math.floor(i / s.cols)}, option ${i % s.cols}: probability ${formatValue(s.data[i])} is outside [0, 1].`, { fn, option: 'schedule' });
    }
  }
  for (const m of models) checkModelOptions(fn, m, s.cols);
  return s;
}

export function checkReversal(fn: string, rewardProbs: unknown, blockTrials: unknown): { probs: [number, number]; blocks: [number, number] } {
  if (!Array.isArray(rewardProbs) || rewardProbs.length !== 2) throw new TuningforkError('TF_BAD_OPTION', `${fn}: rewardProbs must be [better, worse], got ${formatValue(rewardProbs)}.`, { fn, option: 'rewardProbs' });
  if (!Array.isArray(blockTrials) || blockTrials.length !== 2) throw new TuningforkError('TF_BAD_OPTION', `${fn}: blockTrials must be [min, max], got ${formatValue(blockTrials)}.`, { fn, option: 'blockTrials' });
  const p0 = checkRange(fn, 'rewardProbs[0]', rewardProbs[0], 0, 1);
  const p1 = checkRange(fn, 'rewardProbs[1]', rewardProbs[1], 0, 1);
  const b0 = checkInteger(fn, 'blockTrials[0]', blockTrials[0], 1);
  const b1 = checkInteger(fn, 'blockTrials[1]', blockTrials[1], b0);
  return { probs: [p0, p1], blocks: [b0, b1] };
}

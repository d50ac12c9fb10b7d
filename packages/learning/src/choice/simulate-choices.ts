import { TuningforkError, checkInteger, formatValue, resolveOptions, rng } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { ChoiceEngine, compileModel } from '../internal/choice-engine.js';
import { choiceRegressors } from './choice-regressors.js';
import type { ChoiceRegressors } from './choice-regressors.js';
import { checkModelOptions, paramVector, resolveModel } from './model.js';
import type { ChoiceModel, ChoiceParamName } from './model.js';

/** Options of {@link simulateChoices}. */
export interface SimulateChoicesOptions {
  /** Generating model (preset name, spec, or `fit.model`). @defaultValue 'q-ck' */
  model?: ChoiceModel;
  /** Seed of the choice and reward draws. @defaultValue 0 */
  seed?: number;
}

const DEFAULTS = Object.freeze({ model: 'q-ck' as ChoiceModel, seed: 0 });

/** Result of {@link simulateChoices}: a ChoiceSession plus the generating model's regressors. */
export interface SimulatedChoices {
  readonly choice: Int32Array;
  /** 1 (reward) or 0 (omission). */
  readonly reward: Float64Array;
  readonly trial: Int32Array;
  readonly nOptions: number;
  /** Per-trial quantities of the generating model (the truth: RPE, APE, values, probabilities). */
  readonly truth: ChoiceRegressors;
  readonly seed: number;
}

/**
 * Simulate an agent of a choice model on a reward schedule (e.g. with fitted parameters, to check
 * behavioural signatures or for parameter recovery).
 *
 * On each trial the agent draws its choice from the model policy (Q0 = C0 = 0 at the start), the
 * chosen option pays 1 with the scheduled probability (else 0), and the agent learns. Draws come
 * from `rng(seed)` in a fixed order (choice then reward), so the same inputs and seed give the
 * same session.
 *
 * @param schedule - Reward probability per trial (rows) and option (cols), values in [0, 1];
 *   see {@link reversalSchedule}.
 * @param params - Natural-scale parameters of `options.model`.
 * @throws {TuningforkError} TF_BAD_OPTION (schedule shape or values; parameters outside their
 * domain), TF_TOO_FEW_SAMPLES (fewer than 2 trials).
 */
export function simulateChoices(schedule: Matrix, params: Readonly<Partial<Record<ChoiceParamName, number>>>, options: SimulateChoicesOptions = {}): SimulatedChoices {
  const fn = 'simulateChoices';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const m = resolveModel(fn, opts.model);
  const theta = paramVector(fn, m, params);
  const seed = checkInteger(fn, 'seed', opts.seed, 0, Number.MAX_SAFE_INTEGER);
  const rows = schedule?.rows;
  const K = schedule?.cols;
  if (!schedule || !(schedule.data instanceof Float64Array) || !Number.isInteger(rows) || !Number.isInteger(K) || schedule.data.length !== rows * K) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: schedule must be a { data: Float64Array, rows, cols } matrix of reward probabilities (trials × options).`, { fn, option: 'schedule' });
  }
  if (rows < 2) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: schedule has ${rows} trial(s); need at least 2.`, { fn, nTrials: rows });
  if (K < 2) throw new TuningforkError('TF_BAD_OPTION', `${fn}: schedule has ${K} option column(s); need at least 2.`, { fn, option: 'schedule' });
  for (let i = 0; i < schedule.data.length; i++) {
    const p = schedule.data[i]!;
    if (!(p >= 0 && p <= 1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: schedule row ${Math.floor(i / K)} (trial), option ${i % K}: reward probability ${formatValue(p)} is outside [0, 1].`, { fn, option: 'schedule', row: Math.floor(i / K), col: i % K });
    }
  }
  checkModelOptions(fn, m, K);
  const choice = new Int32Array(rows);
  const reward = new Float64Array(rows);
  new ChoiceEngine(compileModel(m), K).simulate(theta, schedule.data, rows, rng(seed), choice, reward);
  const trial = new Int32Array(rows);
  for (let t = 0; t < rows; t++) trial[t] = t;
  const truth = choiceRegressors({ choice, reward, trial, nOptions: K }, params, { model: m });
  return { choice, reward, trial, nOptions: K, truth, seed };
}

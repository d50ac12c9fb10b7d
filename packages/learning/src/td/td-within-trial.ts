import { TuningforkError, checkInteger, checkOneOf, checkPositive, checkRange, formatValue, resolveOptions } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { microstimuli } from './microstimuli.js';
import { tdLambda } from './td-lambda.js';
import type { TdEpisode } from './td-lambda.js';

/** Trials of a cue → outcome task for {@link tdWithinTrial}: one entry per trial. */
export interface TdTrials {
  /** Reward size; 0 = omitted (no reward stimulus). Must be finite. */
  readonly reward: ArrayLike<number>;
  /** Step of the reward after cue onset (0 … nSteps − 1); ignored when the reward is 0. */
  readonly rewardStep: ArrayLike<number>;
}

/** Options of {@link tdWithinTrial}. */
export interface TdWithinTrialOptions {
  /** Model steps per trial from cue onset (step 0) — one step per analysis bin. @defaultValue 20 */
  nSteps?: number;
  /**
   * Time representation: 'csc' (complete serial compound: one indicator per step since the cue)
   * or 'microstimulus' (cue and reward each start a set of microstimuli). @defaultValue 'csc'
   */
  representation?: 'csc' | 'microstimulus';
  /** Step size α. @defaultValue 0.1 */
  alpha?: number;
  /** Discount per step γ in [0, 1]. @defaultValue 0.98 */
  gamma?: number;
  /** Trace decay λ in [0, 1]. @defaultValue 0 */
  lambda?: number;
  /** Microstimuli per stimulus (representation 'microstimulus'). @defaultValue 10 */
  microstimulusCount?: number;
  /** Trace decay per step of the microstimuli. @defaultValue 0.985 */
  microstimulusDecay?: number;
  /** Width σ of the microstimuli. @defaultValue 0.08 */
  microstimulusWidth?: number;
  /** Duration of one model step, seconds (labels `time` and `horizonSec`). @defaultValue 0.05 */
  stepSec?: number;
}

const DEFAULTS = Object.freeze({
  nSteps: 20,
  representation: 'csc' as 'csc' | 'microstimulus',
  alpha: 0.1,
  gamma: 0.98,
  lambda: 0,
  microstimulusCount: 10,
  microstimulusDecay: 0.985,
  microstimulusWidth: 0.08,
  stepSec: 0.05,
});

/** Result of {@link tdWithinTrial}. */
export interface TdWithinTrialResult {
  /** δ at each step of each trial, trials × nSteps; column 0 is the cue onset. */
  readonly delta: Matrix;
  /** V(k) = w·x(k) at each step, as used for the δ leaving that step, trials × nSteps. */
  readonly value: Matrix;
  /** Weights after the last trial. */
  readonly weights: Float64Array;
  /** Step times relative to cue onset, seconds (k · stepSec). */
  readonly time: Float64Array;
  /** Discount horizon −stepSec / ln γ, seconds (Infinity for γ = 1). */
  readonly horizonSec: number;
  readonly nFeatures: number;
}

/**
 * Within-trial reward prediction errors of TD(λ) learning over a sequence of cue → reward trials.
 *
 * Each trial is an episode: an inter-trial state with no features (value 0), then steps
 * 0 … nSteps − 1 from cue onset, then a return to the inter-trial state (value 0). δ at step k is
 * r_k + γ·V(k) − V(k − 1) with V(−1) = 0, so column 0 is the response to the cue and the column
 * of the reward step the response to the reward. With the complete serial compound at asymptote
 * (cue at 0, reward r at step T, λ = 0): V(k) = γ^(T−1−k)·r, δ at the cue = γ^T·r, δ at a
 * predicted reward = 0, δ at an omitted reward = −r. Microstimuli generalise over time, so an
 * omitted or early reward gives a smaller negative δ. γ is per step: report `horizonSec`.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (reward and rewardStep lengths), TF_NON_FINITE (a
 * NaN reward, naming the trial), TF_BAD_OPTION (a rewarded trial's step outside 0 … nSteps − 1;
 * options out of range).
 *
 * References
 * - Sutton, R. S. & Barto, A. G. (1990). Time-derivative models of Pavlovian reinforcement. In
 *   Gabriel, M. & Moore, J. (eds), Learning and Computational Neuroscience, 497–537. MIT Press.
 * - Schultz, W., Dayan, P. & Montague, P. R. (1997). A neural substrate of prediction and reward.
 *   Science 275(5306):1593–1599. doi:10.1126/science.275.5306.1593
 * - Ludvig, E. A., Sutton, R. S. & Kehoe, E. J. (2008). Stimulus representation and the timing of
 *   reward-prediction errors in models of the dopamine system. Neural Computation
 *   20(12):3034–3054. doi:10.1162/neco.2008.11-07-654
 */
export function tdWithinTrial(trials: TdTrials, options: TdWithinTrialOptions = {}): TdWithinTrialResult {
  const fn = 'tdWithinTrial';
  const o = resolveOptions(fn, DEFAULTS, options);
  const L = checkInteger(fn, 'nSteps', o.nSteps, 1, 1e6);
  const rep = checkOneOf(fn, 'representation', o.representation, ['csc', 'microstimulus'] as const);
  const gamma = checkRange(fn, 'gamma', o.gamma, 0, 1);
  const stepSec = checkPositive(fn, 'stepSec', o.stepSec);
  const n = trials.reward.length;
  if (trials.rewardStep.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${n} rewards but ${trials.rewardStep.length} reward steps.`, { fn });
  }
  const micro = rep === 'microstimulus'
    ? microstimuli(L, { count: o.microstimulusCount, decay: o.microstimulusDecay, width: o.microstimulusWidth })
    : null;
  const m = micro ? micro.cols : 0;
  const nf = micro ? 2 * m : L;
  const episodes: TdEpisode[] = [];
  for (let t = 0; t < n; t++) {
    const r = trials.reward[t]!;
    if (!Number.isFinite(r)) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: trial ${t} has reward ${formatValue(r)}; use 0 for an omitted reward.`, { fn, trial: t, value: r });
    }
    const step = trials.rewardStep[t]!;
    if (r !== 0 && (!Number.isInteger(step) || step < 0 || step >= L)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: trial ${t}: reward step ${formatValue(step)} is outside 0…${L - 1} (nSteps = ${L}).`, { fn, trial: t, value: step });
    }
    // Steps of the episode: 0 = inter-trial state (no features), 1 + k = step k after the cue.
    const x = new Float64Array((L + 1) * nf);
    const rewards = new Float64Array(L + 1);
    for (let k = 0; k < L; k++) {
      const row = (k + 1) * nf;
      if (micro) {
        for (let i = 0; i < m; i++) x[row + i] = micro.data[k * m + i]!;
        if (r !== 0 && k >= step) for (let i = 0; i < m; i++) x[row + m + i] = micro.data[(k - step) * m + i]!;
      } else {
        x[row + k] = 1;
      }
    }
    if (r !== 0) rewards[step] = r; // received on leaving episode step `step`, i.e. on entering cue step `step`
    episodes.push({ features: { data: x, rows: L + 1, cols: nf }, rewards });
  }
  const res = tdLambda(episodes, { alpha: o.alpha, gamma, lambda: o.lambda });
  const delta = new Float64Array(n * L);
  const value = new Float64Array(n * L);
  for (let t = 0; t < n; t++) {
    const base = res.offsets[t]!;
    for (let k = 0; k < L; k++) {
      delta[t * L + k] = res.delta[base + k]!; // leaving step k − 1 (the ITI for k = 0) into step k
      value[t * L + k] = res.value[base + k + 1]!;
    }
  }
  const time = new Float64Array(L);
  for (let k = 0; k < L; k++) time[k] = k * stepSec;
  return {
    delta: { data: delta, rows: n, cols: L },
    value: { data: value, rows: n, cols: L },
    weights: res.weights,
    time,
    horizonSec: gamma === 1 ? Infinity : gamma === 0 ? 0 : -stepSec / Math.log(gamma),
    nFeatures: nf,
  };
}

import { TuningforkError, checkInteger, checkRange, formatValue, resolveOptions, rng } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { buildReversal } from '../internal/reversal.js';

/** Options of {@link reversalSchedule}. */
export interface ReversalScheduleOptions {
  /** Number of trials. @defaultValue 500 */
  nTrials?: number;
  /** Reward probabilities of the better and the worse of two options. @defaultValue [0.8, 0.2] */
  rewardProbs?: readonly [number, number];
  /** Block length range in trials, [min, max] inclusive, drawn uniformly. @defaultValue [30, 60] */
  blockTrials?: readonly [number, number];
  /** Better option in the first block: 0, 1, or 'random' (drawn from the seed). @defaultValue 'random' */
  firstBetter?: 0 | 1 | 'random';
  /** Seed of the block lengths (and of the first better option). @defaultValue 0 */
  seed?: number;
}

const DEFAULTS = Object.freeze({
  nTrials: 500,
  rewardProbs: [0.8, 0.2] as readonly [number, number],
  blockTrials: [30, 60] as readonly [number, number],
  firstBetter: 'random' as 0 | 1 | 'random',
  seed: 0,
});

/** Result of {@link reversalSchedule}. */
export interface ReversalSchedule {
  /** Reward probability per trial and option, nTrials × 2, row-major. */
  readonly schedule: Matrix;
  /** Better option on each trial. */
  readonly better: Int32Array;
  /** First trial of each block. */
  readonly blockStarts: Int32Array;
  readonly seed: number;
}

/**
 * A two-option probabilistic reversal schedule: one option pays with probability
 * `rewardProbs[0]`, the other with `rewardProbs[1]`, and they swap at the end of each block, whose
 * length is drawn uniformly from `blockTrials`. Feed `schedule` to {@link simulateChoices}.
 *
 * @throws {TuningforkError} TF_BAD_OPTION for probabilities outside [0, 1], block lengths < 1 or
 * min > max, nTrials < 2.
 */
export function reversalSchedule(options: ReversalScheduleOptions = {}): ReversalSchedule {
  const fn = 'reversalSchedule';
  const o = resolveOptions(fn, DEFAULTS, options);
  const n = checkInteger(fn, 'nTrials', o.nTrials, 2, 1e8);
  const seed = checkInteger(fn, 'seed', o.seed, 0, Number.MAX_SAFE_INTEGER);
  const probs = o.rewardProbs;
  const blocks = o.blockTrials;
  if (!Array.isArray(probs) || probs.length !== 2) throw new TuningforkError('TF_BAD_OPTION', `${fn}: rewardProbs must be [better, worse], got ${formatValue(probs)}.`, { fn, option: 'rewardProbs' });
  checkRange(fn, 'rewardProbs[0]', probs[0], 0, 1);
  checkRange(fn, 'rewardProbs[1]', probs[1], 0, 1);
  if (!Array.isArray(blocks) || blocks.length !== 2) throw new TuningforkError('TF_BAD_OPTION', `${fn}: blockTrials must be [min, max], got ${formatValue(blocks)}.`, { fn, option: 'blockTrials' });
  const bmin = checkInteger(fn, 'blockTrials[0]', blocks[0], 1);
  const bmax = checkInteger(fn, 'blockTrials[1]', blocks[1], bmin);
  if (o.firstBetter !== 0 && o.firstBetter !== 1 && o.firstBetter !== 'random') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: firstBetter must be 0, 1 or 'random', got ${formatValue(o.firstBetter)}.`, { fn, option: 'firstBetter' });
  }
  const built = buildReversal(n, probs, [bmin, bmax], o.firstBetter, rng(seed));
  return { ...built, seed };
}

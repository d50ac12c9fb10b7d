import { TuningforkError, checkInteger, checkOneOf, resolveOptions } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { resolveModel } from '../choice/model.js';
import type { ChoicePriors } from '../choice/priors.js';
import type { ChoiceModel, ChoiceParamName } from '../choice/model.js';
import { resolveFitSettings } from '../internal/fit-settings.js';
import { runAgents } from '../internal/recovery-runner.js';
import { checkReversal, checkSchedule, drawRanges } from './recovery-options.js';

type Ranges = Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>;

/** Options of {@link modelRecovery}. */
export interface ModelRecoveryOptions {
  /** Candidate models: each generates agents and each is fitted to every agent. @defaultValue ['bias', 'wsls', 'q', 'ck', 'q-ck'] */
  models?: readonly ChoiceModel[];
  /** Simulated agents per generating model. @defaultValue 20 */
  agentsPerModel?: number;
  /** Trials per agent (ignored when `schedule` is given). @defaultValue 500 */
  nTrials?: number;
  /** Criterion that picks the best-fitting model (lowest wins; ties go to the earlier model). @defaultValue 'bic' */
  criterion?: 'aic' | 'bic';
  /** Ranges of the true parameters (see parameterRecovery). @defaultValue {} */
  ranges?: Ranges;
  /** Fixed schedule (trials × options) or null for a reversal schedule per agent. @defaultValue null */
  schedule?: Matrix | null;
  /** @defaultValue [0.8, 0.2] */
  rewardProbs?: readonly [number, number];
  /** @defaultValue [30, 60] */
  blockTrials?: readonly [number, number];
  /** Optimiser starts per fit. @defaultValue 10 */
  starts?: number;
  /** Fitting bounds (see fitChoiceModel). @defaultValue {} */
  bounds?: Ranges;
  /**
   * Priors of the refits (see fitChoiceModel): 'none' (maximum likelihood), 'weakly-informative'
   * or a prior per parameter. @defaultValue 'none'
   */
  priors?: ChoicePriors;
  /** Seed: agent i draws everything from `rng(seed).stream(i)`. @defaultValue 0 */
  seed?: number;
  /** Worker threads (1 = this thread). Results do not depend on it. @defaultValue 1 */
  workers?: number;
}

const DEFAULTS = Object.freeze({
  models: Object.freeze(['bias', 'wsls', 'q', 'ck', 'q-ck']) as readonly ChoiceModel[],
  agentsPerModel: 20,
  nTrials: 500,
  criterion: 'bic' as 'aic' | 'bic',
  ranges: Object.freeze({}) as Ranges,
  schedule: null as Matrix | null,
  rewardProbs: [0.8, 0.2] as readonly [number, number],
  blockTrials: [30, 60] as readonly [number, number],
  starts: 10,
  bounds: Object.freeze({}) as Ranges,
  priors: 'none' as ChoicePriors,
  seed: 0,
  workers: 1,
});

/** Result of {@link modelRecovery}. Rows of the matrices are generating models, columns fitted models, in `models` order. */
export interface ModelRecovery {
  readonly models: readonly string[];
  readonly criterion: 'aic' | 'bic';
  /** Number of agents of generator g best fitted by model f. */
  readonly counts: Matrix;
  /** Confusion matrix p(best fit = f | generator = g); rows sum to 1. */
  readonly confusion: Matrix;
  /** Inversion matrix p(generator = g | best fit = f) with equal agents per generator; columns sum to 1 (NaN for a model never best). */
  readonly inversion: Matrix;
  /** Fraction of agents whose generating model is the best fit. */
  readonly accuracy: number;
  /** Per agent: generator index, best-fit index, and the criterion of every model (agents × models). */
  readonly generator: Int32Array;
  readonly best: Int32Array;
  readonly scores: Matrix;
  readonly seed: number;
  readonly workersUsed: number;
  readonly warnings: readonly ResultWarning[];
}

/**
 * Model recovery: simulate agents from each candidate model, fit every candidate to every agent,
 * and count which model the criterion picks.
 *
 * Returns the confusion matrix p(fit | generator) and the inversion matrix p(generator | fit)
 * (Bayes with a uniform prior over generators, as the design has equal agents per generator).
 * Use the criterion your analysis reports. Agent i uses only `rng(seed).stream(i)`; `workers` > 1
 * gives results identical to serial.
 *
 * @returns a Promise (worker threads are asynchronous).
 * @throws {TuningforkError} TF_BAD_OPTION (fewer than 2 models, duplicates, options).
 *
 * Method: model recovery with confusion and inversion matrices as advised by Wilson & Collins (2019).
 *
 * References
 * - Wilson, R. C. & Collins, A. G. E. (2019). Ten simple rules for the computational modeling of
 *   behavioral data. eLife 8:e49547. doi:10.7554/eLife.49547
 */
export async function modelRecovery(options: ModelRecoveryOptions = {}): Promise<ModelRecovery> {
  const fn = 'modelRecovery';
  const o = resolveOptions(fn, DEFAULTS, options);
  if (!Array.isArray(o.models) || o.models.length < 2) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: models must list at least 2 candidate models.`, { fn, option: 'models' });
  }
  const models = o.models.map((x) => resolveModel(fn, x));
  const names = models.map((m) => m.name);
  if (new Set(names).size !== names.length) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: models lists a model twice (${names.join(', ')}).`, { fn, option: 'models' });
  }
  const per = checkInteger(fn, 'agentsPerModel', o.agentsPerModel, 1, 1e6);
  const nTrials = checkInteger(fn, 'nTrials', o.nTrials, 2, 1e8);
  const seed = checkInteger(fn, 'seed', o.seed, 0, Number.MAX_SAFE_INTEGER);
  const workers = checkInteger(fn, 'workers', o.workers, 1, 256);
  const criterion = checkOneOf(fn, 'criterion', o.criterion, ['aic', 'bic'] as const);
  const schedule = checkSchedule(fn, o.schedule, models);
  const { probs, blocks } = checkReversal(fn, o.rewardProbs, o.blockTrials);
  const settings = models.map((m) =>
    resolveFitSettings(fn, m, {
      bounds: o.bounds,
      startRanges: {},
      starts: o.starts,
      gradientTolerance: 1e-6,
      maxIterations: 200,
      bestTolerance: 1e-6,
      hessianStep: 1e-5,
      boundTolerance: 1e-4,
      priors: o.priors,
    }),
  );
  const task = {
    seed,
    nTrials,
    schedule,
    rewardProbs: probs,
    blockTrials: blocks,
    generators: models,
    ranges: models.map((m) => drawRanges(fn, m, o.ranges)),
    drawScale: 'natural' as const,
    agentsPerGenerator: per,
    candidates: models,
    settings,
  };
  const M = models.length;
  const nAgents = M * per;
  const run = await runAgents(fn, task, nAgents, workers);
  const counts = new Float64Array(M * M);
  const generator = new Int32Array(nAgents);
  const best = new Int32Array(nAgents);
  const scores = new Float64Array(nAgents * M);
  for (const r of run.results) {
    let b = 0;
    for (let f = 0; f < M; f++) {
      const v = criterion === 'aic' ? r.fits[f]!.aic : r.fits[f]!.bic;
      scores[r.agent * M + f] = v;
      if (v < scores[r.agent * M + b]!) b = f;
    }
    generator[r.agent] = r.generator;
    best[r.agent] = b;
    counts[r.generator * M + b] = counts[r.generator * M + b]! + 1;
  }
  const confusion = new Float64Array(M * M);
  const inversion = new Float64Array(M * M);
  let correct = 0;
  for (let g = 0; g < M; g++) {
    correct += counts[g * M + g]!;
    for (let f = 0; f < M; f++) confusion[g * M + f] = counts[g * M + f]! / per;
  }
  for (let f = 0; f < M; f++) {
    let col = 0;
    for (let g = 0; g < M; g++) col += confusion[g * M + f]!;
    for (let g = 0; g < M; g++) inversion[g * M + f] = col > 0 ? confusion[g * M + f]! / col : NaN;
  }
  return {
    models: names,
    criterion,
    counts: { data: counts, rows: M, cols: M },
    confusion: { data: confusion, rows: M, cols: M },
    inversion: { data: inversion, rows: M, cols: M },
    accuracy: correct / nAgents,
    generator,
    best,
    scores: { data: scores, rows: nAgents, cols: M },
    seed,
    workersUsed: run.workersUsed,
    warnings: run.warnings,
  };
}

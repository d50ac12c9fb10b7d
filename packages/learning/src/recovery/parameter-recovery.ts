import { TuningforkError, checkInteger, checkOneOf, resolveOptions, rng } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { PARAM_DOMAIN, resolveModel } from '../choice/model.js';
import type { ChoicePriors, ParamPrior } from '../choice/priors.js';
import type { ChoiceModel, ChoiceParamName, ModelStructure } from '../choice/model.js';
import { EM_DEFAULTS, checkEmOptions, integratedBic, populationPrior } from '../choice/fit-choice-population.js';
import type { PopulationPrior } from '../choice/fit-choice-population.js';
import { resolveFitSettings } from '../internal/fit-settings.js';
import { runPopulationEm } from '../internal/population-em.js';
import type { EmOutcome } from '../internal/population-em.js';
import { singleSession } from '../internal/recovery-agents.js';
import { runAgents } from '../internal/recovery-runner.js';
import { checkReversal, checkSchedule, drawRanges } from './recovery-options.js';

type Ranges = Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>;

/** Options of {@link parameterRecovery}. */
export interface ParameterRecoveryOptions {
  /** Model that generates and is refitted. @defaultValue 'q-ck' */
  model?: ChoiceModel;
  /** Number of simulated agents. @defaultValue 50 */
  nAgents?: number;
  /** Trials per agent (ignored when `schedule` is given). @defaultValue 500 */
  nTrials?: number;
  /**
   * Ranges the true parameters are drawn from, uniformly and independently per agent.
   * @defaultValue {} (alpha-type and alphaC [0.1, 0.9], beta [1, 10], betaC [0.5, 3], forget [0.02, 0.4],
   * epsilon [0.02, 0.3], bias [0.2, 0.8])
   */
  ranges?: Ranges;
  /**
   * Scale on which the true parameters are uniform within `ranges`: 'natural', or 'unbounded' —
   * uniform on logit θ for parameters in [0, 1], on log θ for β (log-uniform), on θ for β_C — so a
   * range centred (on that scale) on a value is a population centred on it. 'unbounded' needs
   * ranges strictly inside (0, 1) for rates and above 0 for β.
   * @defaultValue 'natural'
   */
  drawScale?: 'natural' | 'unbounded';
  /**
   * The real trial structure: reward probability per trial × option, used for every agent. `null`
   * draws a two-option reversal schedule per agent from `rewardProbs` and `blockTrials`.
   * @defaultValue null
   */
  schedule?: Matrix | null;
  /** @defaultValue [0.8, 0.2] */
  rewardProbs?: readonly [number, number];
  /** @defaultValue [30, 60] */
  blockTrials?: readonly [number, number];
  /**
   * Optimiser starts per fit (20, as fitChoiceModel: with 10, about 1 agent in 50 of the q-ck
   * study missed its best optimum). @defaultValue 20
   */
  starts?: number;
  /** Fitting bounds (see fitChoiceModel). @defaultValue {} */
  bounds?: Ranges;
  /** Start ranges (see fitChoiceModel). @defaultValue {} */
  startRanges?: Ranges;
  /**
   * Priors of the refits (see fitChoiceModel): 'none' (maximum likelihood), 'weakly-informative'
   * or a prior per parameter. With estimator 'empirical-bayes' they are the priors of the initial
   * per-agent fits (fitChoicePopulation `initialPriors`), 'weakly-informative' unless given.
   * @defaultValue 'none' ('weakly-informative' with estimator 'empirical-bayes')
   */
  priors?: ChoicePriors;
  /**
   * How the agents are refitted: `'per-agent'`, each on its own (ML, or MAP with `priors`), or
   * `'empirical-bayes'`, all together as by fitChoicePopulation — a Gaussian population prior on the
   * transformed parameters fitted by EM across the simulated agents, each agent's estimate its
   * posterior mode under that prior (`se`: Laplace posterior SDs). The per-agent fits run on
   * `workers` threads; the EM then runs on this thread.
   * @defaultValue 'per-agent'
   */
  estimator?: 'per-agent' | 'empirical-bayes';
  /**
   * EM settings of estimator 'empirical-bayes' (see fitChoicePopulation): `maxIterations`,
   * `tolerance`, `likelihoodTolerance`, `varianceFloor`.
   * @defaultValue {} (maxIterations 200, tolerance 1e-4, likelihoodTolerance 1e-3, varianceFloor 1e-3)
   */
  empiricalBayes?: { maxIterations?: number; tolerance?: number; likelihoodTolerance?: number; varianceFloor?: number };
  /** Seed: agent i draws everything from `rng(seed).stream(i)`. @defaultValue 0 */
  seed?: number;
  /** Worker threads (1 = this thread). Results do not depend on it. @defaultValue 1 */
  workers?: number;
}

const DEFAULTS = Object.freeze({
  model: 'q-ck' as ChoiceModel,
  nAgents: 50,
  nTrials: 500,
  ranges: Object.freeze({}) as Ranges,
  drawScale: 'natural' as 'natural' | 'unbounded',
  schedule: null as Matrix | null,
  rewardProbs: [0.8, 0.2] as readonly [number, number],
  blockTrials: [30, 60] as readonly [number, number],
  starts: 20,
  bounds: Object.freeze({}) as Ranges,
  startRanges: Object.freeze({}) as Ranges,
  priors: 'none' as ChoicePriors,
  estimator: 'per-agent' as 'per-agent' | 'empirical-bayes',
  empiricalBayes: Object.freeze({}) as { maxIterations?: number; tolerance?: number; likelihoodTolerance?: number; varianceFloor?: number },
  seed: 0,
  workers: 1,
});

/** The population fit of estimator 'empirical-bayes'. */
export interface RecoveryPopulation {
  /** The fitted population prior (transformed scale and natural-scale summaries). */
  readonly prior: PopulationPrior;
  readonly iterations: number;
  readonly converged: boolean;
  /** Σ of the agents' Laplace log marginal likelihoods, and the integrated BIC. */
  readonly logMarginalLikelihood: number;
  readonly ibic: number;
}

/** Result of {@link parameterRecovery}. Per-parameter arrays follow `paramNames`. */
export interface ParameterRecovery {
  readonly model: ModelStructure;
  readonly paramNames: readonly ChoiceParamName[];
  /** True parameters, agents × k. */
  readonly truth: Matrix;
  /** Fitted parameters, agents × k. */
  readonly fitted: Matrix;
  /** Standard errors of the fits, agents × k (NaN at a bound). */
  readonly se: Matrix;
  /**
   * Pearson correlation of true and fitted values across agents, per parameter. NaN (with warning
   * 'correlation-undefined') when the true or the fitted values are the same for every agent, e.g. a
   * parameter fixed by a range [v, v].
   */
  readonly correlation: Float64Array;
  /** Spearman rank correlation of true and fitted values (robust to a few fits at a bound); NaN as `correlation`. */
  readonly rankCorrelation: Float64Array;
  /** Number of agents whose fitted value is at a bound (or diverging), per parameter. */
  readonly nAtBound: Int32Array;
  /** Mean(fitted − true), per parameter. */
  readonly bias: Float64Array;
  /** Root mean squared error, per parameter. */
  readonly rmse: Float64Array;
  /** Correlations among the fitted parameters across agents, k × k (e.g. the α–β trade-off); NaN off the diagonal for a constant column. */
  readonly fittedCorrelation: Matrix;
  /** Correlations among the true parameters (≈ 0 for independent draws; the baseline for the above); NaN off the diagonal for a fixed parameter. */
  readonly trueCorrelation: Matrix;
  readonly nll: Float64Array;
  /** Starts reaching the best NLL, per agent. */
  readonly nAtBest: Int32Array;
  readonly converged: Uint8Array;
  readonly ranges: readonly (readonly [number, number])[];
  readonly drawScale: 'natural' | 'unbounded';
  /**
   * Prior of each parameter in the refits (null = flat; all null = maximum likelihood); with
   * estimator 'empirical-bayes', of the initial per-agent fits.
   */
  readonly priors: readonly (ParamPrior | null)[];
  readonly estimator: 'per-agent' | 'empirical-bayes';
  /** The population fit (estimator 'empirical-bayes'), else null. */
  readonly population: RecoveryPopulation | null;
  readonly nAgents: number;
  readonly seed: number;
  readonly workersUsed: number;
  readonly warnings: readonly ResultWarning[];
}

/** Ranks (1-based, ties averaged) of column j of an agents × k matrix, as an agents × 1 matrix. */
function columnRanks(a: Matrix, j: number): Matrix {
  const n = a.rows;
  const idx = Array.from({ length: n }, (_, r) => r).sort((x, y) => a.data[x * a.cols + j]! - a.data[y * a.cols + j]!);
  const out = new Float64Array(n);
  for (let i = 0; i < n; ) {
    let e = i;
    while (e + 1 < n && a.data[idx[e + 1]! * a.cols + j] === a.data[idx[i]! * a.cols + j]) e++;
    for (let m = i; m <= e; m++) out[idx[m]!] = (i + e) / 2 + 1;
    i = e + 1;
  }
  return { data: out, rows: n, cols: 1 };
}

/** True when every agent has the same value in column j (zero variance: correlations undefined). */
function constantColumn(a: Matrix, j: number): boolean {
  const v0 = a.data[j]!;
  for (let r = 1; r < a.rows; r++) if (a.data[r * a.cols + j] !== v0) return false;
  return true;
}

/**
 * Pearson correlation of two columns of agents × k matrices; NaN when either column is constant
 * (undefined; the centred column would otherwise hold the rounding residue of the mean, not 0).
 */
function columnCorrelation(a: Matrix, i: number, b: Matrix, j: number): number {
  if (constantColumn(a, i) || constantColumn(b, j)) return NaN;
  const n = a.rows;
  let ma = 0;
  let mb = 0;
  for (let r = 0; r < n; r++) {
    ma += a.data[r * a.cols + i]!;
    mb += b.data[r * b.cols + j]!;
  }
  ma /= n;
  mb /= n;
  let saa = 0;
  let sbb = 0;
  let sab = 0;
  for (let r = 0; r < n; r++) {
    const x = a.data[r * a.cols + i]! - ma;
    const y = b.data[r * b.cols + j]! - mb;
    saa += x * x;
    sbb += y * y;
    sab += x * y;
  }
  return sab / Math.sqrt(saa * sbb);
}

/**
 * Parameter recovery: simulate agents with known parameters, refit, and compare.
 *
 * Each agent draws its parameters uniformly from `ranges` (on the natural or the unbounded scale), plays `schedule` (or its own reversal
 * schedule), and is refitted by maximum likelihood, or MAP with `priors` (`starts` starts), or — with `estimator:
 * 'empirical-bayes'` — by the hierarchical fit of fitChoicePopulation across all agents. Reports per parameter the
 * true–fitted correlation, bias and RMSE, and the correlations among fitted parameters (a strong
 * α–β correlation flags a trade-off). Agent i uses only `rng(seed).stream(i)`, so `workers` > 1
 * splits agents across threads (node:worker_threads) with results identical to a serial run.
 * A parameter whose true (or fitted) values are the same for every agent — a range [v, v] — has no
 * defined correlation: NaN, with a 'correlation-undefined' warning.
 *
 * @returns a Promise (worker threads are asynchronous).
 * @throws {TuningforkError} TF_BAD_OPTION / TF_UNKNOWN_OPTION (options).
 *
 * Method: parameter recovery as advised by Wilson & Collins (2019).
 *
 * References
 * - Wilson, R. C. & Collins, A. G. E. (2019). Ten simple rules for the computational modeling of
 *   behavioral data. eLife 8:e49547. doi:10.7554/eLife.49547
 */
export async function parameterRecovery(options: ParameterRecoveryOptions = {}): Promise<ParameterRecovery> {
  const fn = 'parameterRecovery';
  const o = resolveOptions(fn, DEFAULTS, options);
  const m = resolveModel(fn, o.model);
  const nAgents = checkInteger(fn, 'nAgents', o.nAgents, 3, 1e6);
  const nTrials = checkInteger(fn, 'nTrials', o.nTrials, 2, 1e8);
  const seed = checkInteger(fn, 'seed', o.seed, 0, Number.MAX_SAFE_INTEGER);
  const workers = checkInteger(fn, 'workers', o.workers, 1, 256);
  const schedule = checkSchedule(fn, o.schedule, [m]);
  const { probs, blocks } = checkReversal(fn, o.rewardProbs, o.blockTrials);
  const ranges = drawRanges(fn, m, o.ranges);
  const drawScale = checkOneOf(fn, 'drawScale', o.drawScale, ['natural', 'unbounded'] as const);
  if (drawScale === 'unbounded') {
    m.params.forEach((name, j) => {
      const [lo, hi] = ranges[j]!;
      const [dlo, dhi] = PARAM_DOMAIN[name];
      if ((dlo === 0 && !(lo > 0)) || (dhi === 1 && !(hi < 1))) {
        throw new TuningforkError('TF_BAD_OPTION', `${fn}: drawScale 'unbounded' draws ${name} uniformly on its ${dhi === 1 ? 'logit' : 'log'} scale, so its range must lie strictly inside (${dlo}, ${dhi}); got [${lo}, ${hi}].`, { fn, option: `ranges.${name}` });
      }
    });
  }
  const estimator = checkOneOf(fn, 'estimator', o.estimator, ['per-agent', 'empirical-bayes'] as const);
  const eb = estimator === 'empirical-bayes';
  const emSettings = checkEmOptions(`${fn}: empiricalBayes`, resolveOptions(`${fn}: empiricalBayes`, EM_DEFAULTS, o.empiricalBayes));
  if (!eb && Object.keys(o.empiricalBayes).length > 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: empiricalBayes settings apply to estimator 'empirical-bayes' only; estimator is '${estimator}'.`, { fn, option: 'empiricalBayes' });
  }
  const settings = resolveFitSettings(fn, m, {
    bounds: o.bounds,
    startRanges: o.startRanges,
    starts: o.starts,
    gradientTolerance: 1e-6,
    maxIterations: 200,
    bestTolerance: 1e-6,
    hessianStep: 1e-5,
    boundTolerance: 1e-4,
    priors: eb && options.priors === undefined ? 'weakly-informative' : o.priors,
  });
  const task = { seed, nTrials, schedule, rewardProbs: probs, blockTrials: blocks, generators: [m], ranges: [ranges], drawScale, agentsPerGenerator: nAgents, candidates: [m], settings: [settings], keepData: eb };
  const run = await runAgents(fn, task, nAgents, workers);
  let em: EmOutcome | null = null;
  if (eb) {
    const byAgent = [...run.results].sort((a, b) => a.agent - b.agent);
    // Agent i's first-E-step starts draw from rng(seed).stream(i).stream(4): streams 0–3 are its draws,
    // schedule, choices and per-agent fit.
    const agents = byAgent.map((r) => ({ data: singleSession(r.data!.choice, r.data!.reward, r.data!.nOptions), initial: r.fits[0]!.estimates, random: rng(seed).stream(r.agent).stream(4) }));
    em = runPopulationEm(fn, m, agents, { fit: settings, ...emSettings }, null);
  }
  const k = m.params.length;
  const truth = new Float64Array(nAgents * k);
  const fitted = new Float64Array(nAgents * k);
  const se = new Float64Array(nAgents * k);
  const nll = new Float64Array(nAgents);
  const nAtBest = new Int32Array(nAgents);
  const converged = new Uint8Array(nAgents);
  for (const r of run.results) {
    const f = r.fits[0]!;
    truth.set(r.truth, r.agent * k);
    if (em) continue;
    fitted.set(f.estimates, r.agent * k);
    se.set(f.se, r.agent * k);
    nll[r.agent] = f.nll;
    nAtBest[r.agent] = f.nAtBest;
    converged[r.agent] = f.converged ? 1 : 0;
  }
  if (em) {
    fitted.set(em.estimates);
    se.set(em.se);
    nll.set(em.nll);
    nAtBest.set(em.nAtBest);
    converged.set(em.agentConverged);
  }
  const T = { data: truth, rows: nAgents, cols: k };
  const F = { data: fitted, rows: nAgents, cols: k };
  const correlation = new Float64Array(k);
  const rankCorrelation = new Float64Array(k);
  const nAtBound = new Int32Array(k);
  if (em) em.atBound.forEach((b, i) => (nAtBound[i % k] = nAtBound[i % k]! + b));
  else for (const r of run.results) r.fits[0]!.atBound.forEach((b, j) => (nAtBound[j] = nAtBound[j]! + b));
  const bias = new Float64Array(k);
  const rmse = new Float64Array(k);
  const fc = new Float64Array(k * k);
  const tc = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    correlation[j] = columnCorrelation(T, j, F, j);
    rankCorrelation[j] = columnCorrelation(columnRanks(T, j), 0, columnRanks(F, j), 0);
    let b = 0;
    let s2 = 0;
    for (let a = 0; a < nAgents; a++) {
      const e = fitted[a * k + j]! - truth[a * k + j]!;
      b += e;
      s2 += e * e;
    }
    bias[j] = b / nAgents;
    rmse[j] = Math.sqrt(s2 / nAgents);
    for (let i = 0; i < k; i++) {
      fc[j * k + i] = i === j ? 1 : columnCorrelation(F, j, F, i);
      tc[j * k + i] = i === j ? 1 : columnCorrelation(T, j, T, i);
    }
  }
  const warnings = [...run.warnings, ...(em ? em.warnings : [])];
  const constantTruth = m.params.filter((_, j) => constantColumn(T, j));
  const constantFitted = m.params.filter((_, j) => constantColumn(F, j));
  if (constantTruth.length > 0 || constantFitted.length > 0) {
    const parts: string[] = [];
    if (constantTruth.length > 0) parts.push(`the true values of ${constantTruth.join(', ')} are the same for every agent (a range [v, v] fixes them)`);
    if (constantFitted.length > 0) parts.push(`every agent's fitted ${constantFitted.join(', ')} is the same (e.g. all at a bound)`);
    warnings.push({
      code: 'correlation-undefined',
      message: `${fn}: ${parts.join('; ')}: their correlations (correlation, rankCorrelation, fittedCorrelation / trueCorrelation) are undefined and reported as NaN; bias and RMSE are still given.`,
      details: { constantTruth, constantFitted },
    });
  }
  const nc = nAgents - converged.reduce((s, x) => s + x, 0);
  if (nc > 0 && !em) warnings.push({ code: 'fits-not-converged', message: `${fn}: ${nc} of ${nAgents} fits did not meet the gradient tolerance.`, details: { count: nc } });
  return {
    model: m,
    paramNames: m.params,
    truth: T,
    fitted: F,
    se: { data: se, rows: nAgents, cols: k },
    correlation,
    rankCorrelation,
    nAtBound,
    bias,
    rmse,
    fittedCorrelation: { data: fc, rows: k, cols: k },
    trueCorrelation: { data: tc, rows: k, cols: k },
    nll,
    nAtBest,
    converged,
    ranges,
    drawScale,
    priors: settings.priors,
    estimator,
    population: em ? { prior: populationPrior(m, em, settings.bounds), iterations: em.iterations, converged: em.converged, logMarginalLikelihood: em.logMarginalLikelihood, ibic: integratedBic(em, k) } : null,
    nAgents,
    seed,
    workersUsed: run.workersUsed,
    warnings,
  };
}

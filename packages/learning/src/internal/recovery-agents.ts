// One simulated agent of a recovery study: draw parameters, build its schedule, simulate, refit
// every candidate model. Everything random comes from rng(task.seed).stream(agent), so agents can
// be computed in any order, on any thread, with identical results.
import { rng } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import type { PreparedChoices } from '../choice/data.js';
import type { ChoiceParamName, ModelStructure } from '../choice/model.js';
import { PARAM_DOMAIN } from '../choice/model.js';
import { ChoiceEngine, compileModel } from './choice-engine.js';
import { fitPrepared } from './fit-core.js';
import type { FitSettings } from './fit-core.js';
import { buildReversal } from './reversal.js';

/** A recovery study, as plain data (structured-clonable for worker threads). */
export interface RecoveryTask {
  readonly seed: number;
  readonly nTrials: number;
  /** Fixed schedule for every agent, or null for a fresh reversal schedule per agent. */
  readonly schedule: Matrix | null;
  readonly rewardProbs: readonly [number, number];
  readonly blockTrials: readonly [number, number];
  /** Generating models and the [lo, hi] draw range of each of their parameters. */
  readonly generators: readonly ModelStructure[];
  readonly ranges: readonly (readonly (readonly [number, number])[])[];
  /** 'natural': uniform in each range; 'unbounded': uniform on logit θ (rates), log θ (β), θ (β_C). */
  readonly drawScale: 'natural' | 'unbounded';
  /** Agents per generator: agent i uses generator floor(i / agentsPerGenerator). */
  readonly agentsPerGenerator: number;
  /** Candidate models fitted to every agent, with their settings. */
  readonly candidates: readonly ModelStructure[];
  readonly settings: readonly FitSettings[];
  /** Return each agent's simulated choices and outcomes (for a population fit after the per-agent fits). */
  readonly keepData?: boolean;
}

export interface AgentFit {
  readonly estimates: Float64Array;
  readonly se: Float64Array;
  readonly nll: number;
  readonly aic: number;
  readonly bic: number;
  readonly nAtBest: number;
  readonly converged: boolean;
  readonly atBound: Uint8Array;
}

export interface AgentResult {
  readonly agent: number;
  readonly generator: number;
  readonly truth: Float64Array;
  readonly fits: readonly AgentFit[];
  /** The simulated session (with `keepData`): choices, outcomes and the number of options. */
  readonly data?: { readonly choice: Int32Array; readonly reward: Float64Array; readonly nOptions: number };
}

/** One simulated session in the prepared form the fitting kernels take. */
export function singleSession(choice: Int32Array, reward: Float64Array, nOptions: number): PreparedChoices {
  const n = choice.length;
  const trial = new Int32Array(n);
  for (let t = 0; t < n; t++) trial[t] = t;
  return {
    nOptions,
    nSessions: 1,
    sessionStart: Int32Array.of(0, n),
    session: new Int32Array(n),
    trial,
    choice,
    reward,
    nChoices: n,
    nSkipped: 0,
    warnings: [],
  };
}

/** A value uniform on the unbounded scale of `name` between lo and hi (u ∈ [0, 1)). */
export function drawUnbounded(name: ChoiceParamName, lo: number, hi: number, u: number): number {
  const [dlo, dhi] = PARAM_DOMAIN[name];
  if (dlo === 0 && dhi === 1) {
    const a = Math.log(lo / (1 - lo));
    const b = Math.log(hi / (1 - hi));
    return 1 / (1 + Math.exp(-(a + u * (b - a))));
  }
  if (dlo === 0) return Math.exp(Math.log(lo) + u * (Math.log(hi) - Math.log(lo)));
  return lo + u * (hi - lo);
}

export function runAgent(task: RecoveryTask, agent: number): AgentResult {
  const root = rng(task.seed).stream(agent);
  const generator = Math.floor(agent / task.agentsPerGenerator);
  const gm = task.generators[generator]!;
  const ranges = task.ranges[generator]!;
  const draw = root.stream(0);
  const truth = new Float64Array(gm.params.length);
  for (let j = 0; j < truth.length; j++) {
    const [lo, hi] = ranges[j]!;
    const u = draw.uniform();
    truth[j] = task.drawScale === 'unbounded' ? drawUnbounded(gm.params[j]!, lo, hi, u) : lo + (hi - lo) * u;
  }
  const schedule = task.schedule ?? buildReversal(task.nTrials, task.rewardProbs, task.blockTrials, 'random', root.stream(1)).schedule;
  const n = schedule.rows;
  const K = schedule.cols;
  const choice = new Int32Array(n);
  const reward = new Float64Array(n);
  new ChoiceEngine(compileModel(gm), K).simulate(truth, schedule.data, n, root.stream(2), choice, reward);
  const d = singleSession(choice, reward, K);
  const fits = task.candidates.map((cm, c) => {
    const f = fitPrepared('recovery', cm, d, task.settings[c]!, root.stream(3 + c));
    return { estimates: f.estimates, se: f.se, nll: f.nll, aic: f.aic, bic: f.bic, nAtBest: f.nAtBest, converged: f.converged, atBound: f.atBound };
  });
  return task.keepData ? { agent, generator, truth, fits, data: { choice, reward, nOptions: K } } : { agent, generator, truth, fits };
}

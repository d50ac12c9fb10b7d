import { resolveOptions, TuningforkError } from '@tuningfork/core';
import { ChoiceEngine, allocTrace, compileModel } from '../internal/choice-engine.js';
import { prepareChoices, whereRow } from './data.js';
import type { ChoiceData } from './data.js';
import { checkModelOptions, paramVector, resolveModel } from './model.js';
import type { ChoiceModel, ChoiceParamName } from './model.js';

/** Options of {@link choiceLogLikelihood}. */
export interface ChoiceLogLikelihoodOptions {
  /** Model (preset name or spec). @defaultValue 'q-ck' */
  model?: ChoiceModel;
  /** Number of options; overridden by `nOptions` of the data. @defaultValue 2 */
  nOptions?: number;
}

const DEFAULTS = Object.freeze({ model: 'q-ck' as ChoiceModel, nOptions: undefined as number | undefined });

/** Result of {@link choiceLogLikelihood}. */
export interface ChoiceLogLikelihood {
  /** −Σ log P(c_t) over trials with a choice (natural log). */
  readonly nll: number;
  /** Σ log P(c_t) = −nll. */
  readonly logLik: number;
  /** Number of trials with a choice. */
  readonly n: number;
  /** log P(c_t) per row (NaN on rows without a choice), sessions concatenated. */
  readonly logp: Float64Array;
  /** ∂NLL/∂θ on the natural scale, in the order of `paramNames` (exact, forward-mode). */
  readonly gradient: Float64Array;
  readonly paramNames: readonly ChoiceParamName[];
}

/**
 * Log-likelihood of the observed choices under a choice model with fixed parameters.
 *
 * Each term is z_c − logsumexp(z) with z = β·Q + β_C·C (softmax models), so large β never
 * overflows. Q0 = 0 and C0 = 0 at each session start; trials with choice −1 are skipped.
 *
 * @param data - A session or an array of sessions (see `ChoiceSession`).
 * @param params - Natural-scale parameters by name, e.g. `{ alpha: 0.3, beta: 2 }`.
 * @throws {TuningforkError} TF_BAD_OPTION (a parameter missing or outside its domain),
 * TF_UNKNOWN_OPTION (a parameter the model lacks), TF_BAD_VALUE / TF_NON_FINITE /
 * TF_TOO_FEW_SAMPLES (data, naming session and trial), TF_BAD_LIKELIHOOD (a log-probability of −∞
 * or NaN, naming the trial).
 *
 * @example
 * ```ts
 * // INFERENCE.md §3.8: NLL = 7.455297294853
 * choiceLogLikelihood({ choice: [0,0,1,0,1,1,0,0,0,1], reward: [1,0,1,1,0,1,1,0,1,0] },
 *   { alpha: 0.3, beta: 2 }, { model: 'q' }).nll;
 * ```
 */
export function choiceLogLikelihood(data: ChoiceData, params: Readonly<Partial<Record<ChoiceParamName, number>>>, options: ChoiceLogLikelihoodOptions = {}): ChoiceLogLikelihood {
  const fn = 'choiceLogLikelihood';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const m = resolveModel(fn, opts.model);
  const theta = paramVector(fn, m, params);
  const d = prepareChoices(fn, data, opts.nOptions);
  checkModelOptions(fn, m, d.nOptions);
  const engine = new ChoiceEngine(compileModel(m), d.nOptions);
  const trace = allocTrace(d.choice.length, d.nOptions, d.nSessions);
  const gradient = new Float64Array(m.params.length);
  const nll = engine.nll(d, theta, gradient, trace);
  if (!Number.isFinite(nll)) throw badLikelihood(fn, d, engine.badRow, m.name);
  return { nll, logLik: -nll, n: d.nChoices, logp: trace.logp, gradient, paramNames: m.params };
}

/** The TF_BAD_LIKELIHOOD error for a row. */
export function badLikelihood(fn: string, d: Parameters<typeof whereRow>[0], row: number, model: string): TuningforkError {
  const w = whereRow(d, Math.max(0, row));
  return new TuningforkError(
    'TF_BAD_LIKELIHOOD',
    `${fn}: the log-probability of the choice at ${w.text} is not finite under model '${model}' (choice ${d.choice[Math.max(0, row)]}, outcome ${d.reward[Math.max(0, row)]}): a probability of zero or an overflow. Check the outcome scale and the parameters.`,
    { fn, session: w.session, row: w.row, trial: w.trial },
  );
}

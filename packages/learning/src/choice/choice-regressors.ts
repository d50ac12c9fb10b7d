import { resolveOptions } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { ChoiceEngine, allocTrace, compileModel } from '../internal/choice-engine.js';
import { badLikelihood } from './choice-log-likelihood.js';
import { prepareChoices } from './data.js';
import type { ChoiceData } from './data.js';
import { checkModelOptions, paramRecord, paramVector, resolveModel } from './model.js';
import type { ChoiceModel, ChoiceParamName } from './model.js';

/** Options of {@link choiceRegressors}. */
export interface ChoiceRegressorsOptions {
  /** Model (preset name, spec, or `fit.model`). @defaultValue 'q-ck' */
  model?: ChoiceModel;
  /** Number of options; overridden by `nOptions` of the data. @defaultValue 2 */
  nOptions?: number;
}

const DEFAULTS = Object.freeze({ model: 'q-ck' as ChoiceModel, nOptions: undefined as number | undefined });

/**
 * Per-trial regressors of a choice model, one row per input trial (sessions concatenated).
 * Every quantity is taken BEFORE that trial's update. Columns a model does not have are NaN
 * (Q without value learning; C and APE without a choice kernel); rows without a choice have NaN
 * in `qChosen`, `rpe`, `ape`, `pChoice` and their centred forms.
 */
export interface ChoiceRegressors {
  /** Canonical model name. */
  readonly model: string;
  readonly params: Readonly<Record<string, number>>;
  readonly nOptions: number;
  readonly nSessions: number;
  readonly session: Int32Array;
  readonly trial: Int32Array;
  /** Chosen option, −1 when none. */
  readonly choice: Int32Array;
  /** Outcome as given. */
  readonly outcome: Float64Array;
  /** Action values before the update, rows × nOptions (Q0 = 0 at each session start). */
  readonly q: Matrix;
  /** Choice-kernel (habit) strengths before the update, rows × nOptions (C0 = 0). */
  readonly c: Matrix;
  /** Policy: probability of each option, rows × nOptions. */
  readonly policy: Matrix;
  /** Reward prediction error at the outcome, r − Q(c) before the update (not centred). */
  readonly rpe: Float64Array;
  /** `rpe` minus its mean over the session's trials with a choice. */
  readonly rpeCentred: Float64Array;
  /** Expected value at choice: Q(c) before the update. */
  readonly qChosen: Float64Array;
  /** Expected value at the cue: Σ_a P(a)·Q(a), the policy-weighted value (defined on every row). */
  readonly vCue: Float64Array;
  /** Action prediction error at the choice, 1 − C(c) before the update (not centred). */
  readonly ape: Float64Array;
  /** `ape` minus its mean over the session's trials with a choice. */
  readonly apeCentred: Float64Array;
  /** Model probability of the choice made. */
  readonly pChoice: Float64Array;
  /** Values and habit strengths after each session's last trial, nSessions × nOptions. */
  readonly finalQ: Matrix;
  readonly finalC: Matrix;
  /** NLL of the choices under these parameters, and the number of choices. */
  readonly nll: number;
  readonly n: number;
  readonly warnings: readonly ResultWarning[];
}

function centre(x: Float64Array, d: { nSessions: number; sessionStart: Int32Array }): Float64Array {
  const out = new Float64Array(x.length);
  for (let s = 0; s < d.nSessions; s++) {
    let sum = 0;
    let n = 0;
    for (let t = d.sessionStart[s]!; t < d.sessionStart[s + 1]!; t++) {
      if (x[t] === x[t]) {
        sum += x[t]!;
        n++;
      }
    }
    const mean = n > 0 ? sum / n : NaN;
    for (let t = d.sessionStart[s]!; t < d.sessionStart[s + 1]!; t++) out[t] = x[t]! - mean;
  }
  return out;
}

/**
 * Per-trial regressors of a choice model with given (e.g. fitted) parameters: values and habit
 * strengths before the update, RPE at the outcome, APE at the choice, expected value at choice and
 * at the cue, and the choice probability — ready to be parametric modulators of an encoding model.
 *
 * Conventions: Q0 = 0 and C0 = 0 at every session start; RPE = r − Q(c) and APE = 1 − C(c) are
 * pre-update and NOT centred (centred copies are `rpeCentred`/`apeCentred`, centred within session
 * over trials with a choice, as INFERENCE.md §3.7 advises for neural regressors). Because RPE is
 * strongly correlated with the outcome, also enter `outcome` and `qChosen` separately when testing
 * for an RPE code; APE is confounded with choice repetition. Use {@link regressorTable} for an
 * arquero table.
 *
 * @param data - A session or an array of sessions (values reset per session).
 * @param params - Natural-scale parameters by name (e.g. `fit.params`).
 * @throws {TuningforkError} as {@link choiceLogLikelihood}.
 *
 * @example
 * ```ts
 * const fit = fitChoiceModel(trials, { model: 'q-ck' });
 * const reg = choiceRegressors(trials, fit.params, { model: fit.model });
 * reg.rpe; reg.ape; regressorTable(reg).print();
 * ```
 *
 * References
 * - Miller, K. J., Shenhav, A. & Ludvig, E. A. (2019). Habits without values. Psychological
 *   Review 126(2):292–311. doi:10.1037/rev0000120
 * - Wilson, R. C. & Collins, A. G. E. (2019). Ten simple rules for the computational modeling of
 *   behavioral data. eLife 8:e49547. doi:10.7554/eLife.49547
 */
export function choiceRegressors(data: ChoiceData, params: Readonly<Partial<Record<ChoiceParamName, number>>>, options: ChoiceRegressorsOptions = {}): ChoiceRegressors {
  const fn = 'choiceRegressors';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const m = resolveModel(fn, opts.model);
  const theta = paramVector(fn, m, params);
  const d = prepareChoices(fn, data, opts.nOptions);
  checkModelOptions(fn, m, d.nOptions);
  const K = d.nOptions;
  const rows = d.choice.length;
  const engine = new ChoiceEngine(compileModel(m), K);
  const tr = allocTrace(rows, K, d.nSessions);
  const nll = engine.nll(d, theta, null, tr);
  if (!Number.isFinite(nll)) throw badLikelihood(fn, d, engine.badRow, m.name);
  return {
    model: m.name,
    params: paramRecord(m, theta),
    nOptions: K,
    nSessions: d.nSessions,
    session: d.session,
    trial: d.trial,
    choice: d.choice,
    outcome: d.reward,
    q: { data: tr.q, rows, cols: K },
    c: { data: tr.c, rows, cols: K },
    policy: { data: tr.prob, rows, cols: K },
    rpe: tr.rpe,
    rpeCentred: centre(tr.rpe, d),
    qChosen: tr.qChosen,
    vCue: tr.vCue,
    ape: tr.ape,
    apeCentred: centre(tr.ape, d),
    pChoice: tr.pChoice,
    finalQ: { data: tr.finalQ, rows: d.nSessions, cols: K },
    finalC: { data: tr.finalC, rows: d.nSessions, cols: K },
    nll,
    n: d.nChoices,
    warnings: d.warnings,
  };
}

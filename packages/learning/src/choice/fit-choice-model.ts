import { resolveOptions, rng, TuningforkError, checkInteger } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import { fitPrepared } from '../internal/fit-core.js';
import type { CoreFit } from '../internal/fit-core.js';
import { resolveFitSettings } from '../internal/fit-settings.js';
import { prepareChoices } from './data.js';
import type { ChoiceData, ChoiceSession } from './data.js';
import { checkModelOptions, paramRecord, resolveModel } from './model.js';
import type { ChoiceModel, ChoiceParamName, ModelStructure } from './model.js';
import type { ChoicePriors } from './priors.js';

/** Options of {@link fitChoiceModel}. */
export interface FitChoiceModelOptions {
  /** Model to fit (preset name or spec). @defaultValue 'q-ck' */
  model?: ChoiceModel;
  /** Number of options; overridden by `nOptions` of the data (a TrialTable carries it). @defaultValue 2 */
  nOptions?: number;
  /**
   * Bounds per parameter on the natural scale, e.g. `{ beta: [0, 20] }`, within the parameter's
   * domain. Both finite → scaled logit transform; only the lower finite → log (`[0, Infinity]`);
   * none finite → identity. Keys of parameters the model does not have are ignored (so one object
   * can serve several models).
   * @defaultValue {} (DEFAULT_BOUNDS: alpha-type, forget, epsilon, bias in [0, 1]; beta in [0, 50];
   * betaC in [−20, 20])
   */
  bounds?: Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>;
  /**
   * Ranges the starts are drawn from (natural scale; beta log-uniform, others uniform).
   * @defaultValue {} (alpha-type [0.05, 0.95], beta [0.5, 20], forget and epsilon [0.02, 0.5],
   * betaC [−1, 4], bias [0.2, 0.8]; intersected with the bounds, or the middle 90 % of finite
   * bounds that miss the default range)
   */
  startRanges?: Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>;
  /** Number of optimiser starts (10–20 is common practice). @defaultValue 20 */
  starts?: number;
  /** Seed of the start draws (start s uses `rng(seed).stream(s)`). @defaultValue 0 */
  seed?: number;
  /** A start has converged when max |∂NLL/∂φ| ≤ this (φ = transformed parameters). @defaultValue 1e-6 */
  gradientTolerance?: number;
  /** BFGS iterations per start. @defaultValue 200 */
  maxIterations?: number;
  /** A start "reaches the best" when its NLL is within this of the best NLL. @defaultValue 1e-6 */
  bestTolerance?: number;
  /** Relative step of the central-difference Hessian on the φ scale. @defaultValue 1e-5 */
  hessianStep?: number;
  /**
   * An estimate within this fraction of its bounded range from a bound (absolute for a half-open
   * range, or larger than its inverse: diverging) counts as at the bound: no standard error.
   * @defaultValue 1e-4
   */
  boundTolerance?: number;
  /**
   * Priors for maximum a posteriori (MAP) fitting: `'none'` (maximum likelihood),
   * `'weakly-informative'` (WEAK_PRIORS: Beta(1.1, 1.1) on rates, Gamma(1.2, 5) on β, Normal(0, 5)
   * on β_C), or a `ParamPrior` per parameter (unlisted parameters are flat; keys of parameters the
   * model lacks are ignored). NLL, AIC and BIC stay those of the likelihood at the estimates.
   * @defaultValue 'none'
   */
  priors?: ChoicePriors;
}

const DEFAULTS = Object.freeze({
  model: 'q-ck' as ChoiceModel,
  nOptions: undefined as number | undefined,
  bounds: Object.freeze({}) as Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>,
  startRanges: Object.freeze({}) as Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>,
  starts: 20,
  seed: 0,
  gradientTolerance: 1e-6,
  maxIterations: 200,
  bestTolerance: 1e-6,
  hessianStep: 1e-5,
  boundTolerance: 1e-4,
  priors: 'none' as ChoicePriors,
});

/**
 * Result of {@link fitChoiceModel}: the core fit (estimator and priors, estimates, SEs, NLL, log
 * prior, AIC/BIC, starts) plus bookkeeping. Arrays are in the order of `paramNames`.
 */
export interface ChoiceModelFit extends Omit<CoreFit, 'warnings'> {
  /** Canonical model name and structure. */
  readonly model: ModelStructure;
  /** Estimates on the natural scale, by name. */
  readonly params: Readonly<Record<string, number>>;
  readonly nOptions: number;
  readonly nSessions: number;
  /** Trials without a choice (skipped). */
  readonly nSkipped: number;
  readonly seed: number;
  readonly warnings: readonly ResultWarning[];
}

/**
 * Maximum-likelihood (or, with `priors`, maximum a posteriori) fit of a choice model to one
 * session, or to several sessions of one animal pooled (values and habit strengths reset to 0 at
 * each session start; one parameter set).
 *
 * Minimises NLL = −Σ_t log P(c_t), each term computed as z_c − logsumexp(z), on transformed
 * parameters (logit for bounded, log for half-bounded) with BFGS and a strong-Wolfe line search,
 * from `starts` starts drawn from a seeded generator. The gradient is exact: dQ/dθ and dC/dθ are
 * carried forward through the trials. Standard errors come from the inverse of a central-difference
 * Hessian (of the analytic gradient) on the transformed scale, mapped to the natural scale by the
 * delta method; parameters at a bound get none, and a Hessian that is not positive definite is
 * reported (`hessian`, warning) rather than inverted.
 *
 * With `priors`, the minimised objective is NLL − Σ log p(θ_j), each prior a density on the natural
 * scale (Daw 2011): the estimate is the posterior mode, `se` are posterior SDs of the Laplace
 * approximation, and `nll`, `aic`, `bic` are those of the likelihood at the mode (for model
 * comparison by likelihood, as with ML). Weakly informative priors keep a near-deterministic
 * chooser's β and rates that barely matter off their bounds; they shrink estimates slightly toward
 * the prior's bulk, so report them (`fit.priors`) with the estimates.
 *
 * Trials with choice −1 are skipped: no likelihood term, values unchanged (reported in `warnings`).
 *
 * @param data - A session (`{ choice, reward }`, e.g. a core TrialTable) or an array of sessions.
 * @returns estimates, SEs, NLL, AIC, BIC, start bookkeeping, seed and warnings.
 * @throws {TuningforkError} TF_BAD_VALUE (choice outside the option set), TF_NON_FINITE (a choice
 * with a NaN outcome), TF_TOO_FEW_SAMPLES (a session with one trial; no more choices than
 * parameters), TF_BAD_LIKELIHOOD (likelihood −∞ or NaN from every start, naming the trial),
 * TF_BAD_OPTION / TF_UNKNOWN_OPTION (options).
 *
 * @example
 * ```ts
 * const fit = fitChoiceModel({ choice, reward }, { model: 'q', starts: 20, seed: 1 });
 * fit.params.alpha; fit.se; fit.aic; fit.nAtBest;
 * ```
 *
 * Method: the models of Wilson & Collins (2019) (Q-learning, choice kernel, their combination, WSLS,
 * bias) and their advice on multiple starts; BFGS and the line search follow Nocedal & Wright
 * (2006), Algorithms 6.1, 3.5 and 3.6, with Hager & Zhang's (2005) approximate-Wolfe acceptance once
 * the NLL changes only at rounding level.
 *
 * References
 * - Wilson, R. C. & Collins, A. G. E. (2019). Ten simple rules for the computational modeling of
 *   behavioral data. eLife 8:e49547. doi:10.7554/eLife.49547
 * - Nocedal, J. & Wright, S. J. (2006). Numerical Optimization, 2nd ed. Springer.
 *   doi:10.1007/978-0-387-40065-5
 * - Daw, N. D. (2011). Trial-by-trial data analysis using computational models. In Decision Making,
 *   Affect, and Learning: Attention and Performance XXIII, 3–38. Oxford University Press.
 *   doi:10.1093/acprof:oso/9780199600434.003.0001
 * - Hager, W. W. & Zhang, H. (2005). A new conjugate gradient method with guaranteed descent and an
 *   efficient line search. SIAM J. Optim. 16(1):170–192. doi:10.1137/030601880
 */
export function fitChoiceModel(data: ChoiceData, options: FitChoiceModelOptions = {}): ChoiceModelFit {
  const fn = 'fitChoiceModel';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const m = resolveModel(fn, opts.model);
  const seed = checkInteger(fn, 'seed', opts.seed, 0, Number.MAX_SAFE_INTEGER);
  const d = prepareChoices(fn, data, opts.nOptions);
  checkModelOptions(fn, m, d.nOptions);
  const settings = resolveFitSettings(fn, m, opts);
  const core = fitPrepared(fn, m, d, settings, rng(seed));
  return {
    model: m,
    ...core,
    params: paramRecord(m, core.estimates),
    nOptions: d.nOptions,
    nSessions: d.nSessions,
    nSkipped: d.nSkipped,
    seed,
  };
}

/**
 * Fit the same model to each session separately (values reset per session, one parameter set per
 * session). Same options as {@link fitChoiceModel}; every session uses the same `seed`.
 *
 * @throws {TuningforkError} as fitChoiceModel, naming the session.
 */
export function fitEachSession(sessions: readonly ChoiceSession[], options: FitChoiceModelOptions = {}): ChoiceModelFit[] {
  if (!Array.isArray(sessions)) {
    throw new TuningforkError('TF_BAD_OPTION', 'fitEachSession: sessions must be an array of sessions.', { fn: 'fitEachSession' });
  }
  return sessions.map((s, i) => {
    try {
      return fitChoiceModel(s, options);
    } catch (e) {
      if (e instanceof TuningforkError) {
        throw new TuningforkError(e.code, `fitEachSession: session ${i}: ${e.message}`, { ...e.details, session: i });
      }
      throw e;
    }
  });
}

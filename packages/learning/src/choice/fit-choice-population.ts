import { TuningforkError, checkInteger, checkNonNegative, checkPositive, formatValue, resolveOptions, rng } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { fitPrepared } from '../internal/fit-core.js';
import { resolveFitSettings } from '../internal/fit-settings.js';
import { naturalSummary, runPopulationEm } from '../internal/population-em.js';
import type { EmAgent, EmOutcome, EmSettings, GaussianPhi } from '../internal/population-em.js';
import { prepareChoices } from './data.js';
import type { ChoiceData, PreparedChoices } from './data.js';
import { checkModelOptions, paramRecord, resolveModel } from './model.js';
import type { ChoiceModel, ChoiceParamName, ModelStructure, ParamTransform } from './model.js';
import type { ChoicePriors, ParamPrior } from './priors.js';

type Ranges = Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>;

/**
 * A diagonal Gaussian population prior on the transformed (unbounded) scale φ of each parameter:
 * φ_j ~ N(mean_j, variance_j), keyed by parameter name. φ is the fit's optimisation scale: logit of
 * (θ − lo)/(hi − lo) for a parameter with finite bounds, log(θ − lo) for one finite lower bound, θ
 * for none (see `bounds`).
 */
export interface GaussianPriorSpec {
  readonly mean: Readonly<Partial<Record<ChoiceParamName, number>>>;
  readonly variance: Readonly<Partial<Record<ChoiceParamName, number>>>;
}

/** Options of {@link fitChoicePopulation}. */
export interface FitChoicePopulationOptions {
  /** Model fitted to every agent (preset name or spec). @defaultValue 'q-ck' */
  model?: ChoiceModel;
  /** Number of options; every agent's data must agree (a TrialTable's own `nOptions` counts). @defaultValue 2 */
  nOptions?: number;
  /**
   * Bounds per parameter (natural scale), as in fitChoiceModel. They define the transformed scale on
   * which the population prior is Gaussian. @defaultValue {} (DEFAULT_BOUNDS: rates [0, 1], β [0, 50],
   * β_C [−20, 20], each on a scaled logit)
   */
  bounds?: Ranges;
  /** Ranges of the random starts (natural scale), as in fitChoiceModel. @defaultValue {} (START_RANGES) */
  startRanges?: Ranges;
  /**
   * Random starts per agent, used by the initial fits and by the first E-step (which also starts at
   * the agent's initial estimate); later E-steps start only at the previous mode. @defaultValue 20
   */
  starts?: number;
  /** Seed: agent i's initial fit draws from `rng(seed).stream(i).stream(0)`, its first E-step from `.stream(1)`. @defaultValue 0 */
  seed?: number;
  /**
   * Priors of the per-agent fits that initialise the population prior (see fitChoiceModel `priors`):
   * 'weakly-informative' keeps near-deterministic choosers off the bounds, which would otherwise
   * inflate the initial variance. @defaultValue 'weakly-informative'
   */
  initialPriors?: ChoicePriors;
  /**
   * `'estimate'` fits the population prior by EM; a {@link GaussianPriorSpec} fixes it (no EM: each
   * agent's estimate is its MAP under that prior, e.g. a prior estimated on another cohort).
   * @defaultValue 'estimate'
   */
  prior?: 'estimate' | GaussianPriorSpec;
  /** EM iterations at most (each an E-step and an M-step). @defaultValue 200 */
  maxIterations?: number;
  /** Converged when no population mean or SD (transformed scale) changes by more than this in an iteration … @defaultValue 1e-4 */
  tolerance?: number;
  /** … and the summed Laplace log marginal likelihood changes by at most this (Infinity: ignore). @defaultValue 1e-3 */
  likelihoodTolerance?: number;
  /**
   * Smallest population variance on the transformed scale (σ² ≥ this): keeps the prior proper when
   * agents do not differ detectably in a parameter (reported in `prior.atFloor` and a warning).
   * 1e-3 is an SD of 0.03 on the logit or log scale. @defaultValue 1e-3
   */
  varianceFloor?: number;
  /** BFGS gradient tolerance of every per-agent optimisation (on φ). @defaultValue 1e-6 */
  gradientTolerance?: number;
}

/** Default EM settings (shared with parameterRecovery's 'empirical-bayes' estimator). */
export const EM_DEFAULTS = Object.freeze({
  maxIterations: 200,
  tolerance: 1e-4,
  likelihoodTolerance: 1e-3,
  varianceFloor: 1e-3,
});

const DEFAULTS = Object.freeze({
  model: 'q-ck' as ChoiceModel,
  nOptions: undefined as number | undefined,
  bounds: Object.freeze({}) as Ranges,
  startRanges: Object.freeze({}) as Ranges,
  starts: 20,
  seed: 0,
  initialPriors: 'weakly-informative' as ChoicePriors,
  prior: 'estimate' as 'estimate' | GaussianPriorSpec,
  ...EM_DEFAULTS,
  gradientTolerance: 1e-6,
});

/**
 * A fitted (or given) population prior: Gaussian on the transformed scale, with natural-scale
 * summaries. Arrays follow `paramNames`.
 */
export interface PopulationPrior {
  readonly paramNames: readonly ChoiceParamName[];
  readonly transforms: readonly ParamTransform[];
  readonly bounds: readonly (readonly [number, number])[];
  /** μ_j on the transformed scale. */
  readonly mean: Float64Array;
  /** σ_j² on the transformed scale. */
  readonly variance: Float64Array;
  /** 1 where σ_j² sits at `varianceFloor`. */
  readonly atFloor: Uint8Array;
  /** Natural scale: the population median θ(μ_j). */
  readonly median: Float64Array;
  /** Natural scale: the 2.5 % and 97.5 % population quantiles θ(μ_j ∓ 1.96σ_j). */
  readonly lower: Float64Array;
  readonly upper: Float64Array;
  /** Natural scale: population mean and SD of θ_j (numerical integration over the Gaussian). */
  readonly naturalMean: Float64Array;
  readonly naturalSd: Float64Array;
}

/** Result of {@link fitChoicePopulation}. Matrices are agents × k in `paramNames` order. */
export interface ChoicePopulationFit {
  readonly model: ModelStructure;
  readonly paramNames: readonly ChoiceParamName[];
  /** 'estimated' by EM, or 'given' (option `prior`). */
  readonly priorSource: 'estimated' | 'given';
  readonly prior: PopulationPrior;
  /** The prior the EM started from (mean and variance on the transformed scale). */
  readonly initialPrior: { readonly mean: Float64Array; readonly variance: Float64Array };
  /** Priors of the initial per-agent fits (empty for a given prior). */
  readonly initialPriors: readonly (ParamPrior | null)[];
  /** Per-agent posterior modes under the prior, natural scale. */
  readonly estimates: Matrix;
  /** The same by name, one record per agent. */
  readonly params: readonly Readonly<Record<string, number>>[];
  /** Per-agent posterior SDs (Laplace), natural scale by the delta method. */
  readonly se: Matrix;
  /** Per-agent posterior modes and SDs on the transformed scale. */
  readonly estimatesTransformed: Matrix;
  readonly seTransformed: Matrix;
  /** Per-agent Laplace posterior covariance H⁻¹ on the transformed scale: agents × (k·k), each row a row-major k × k block. */
  readonly covarianceTransformed: Matrix;
  /** Per-agent 1 where the estimate lies at a bound (not expected under a proper prior; flags a very wide prior). */
  readonly atBound: Matrix;
  /** Per-agent log-likelihood ln p(D_i | θ̂_i) at the posterior mode (natural log). */
  readonly logLikelihood: Float64Array;
  /** Per-agent Laplace log marginal likelihood ln ∫ p(D_i | φ) N(φ; μ, σ²) dφ. */
  readonly logMarginal: Float64Array;
  /** Σ_i logMarginal: the log marginal likelihood of all data under the prior. */
  readonly logMarginalLikelihood: number;
  /** Integrated BIC: −2·logMarginalLikelihood + 2k·ln(nChoices) (2k prior parameters). */
  readonly ibic: number;
  /** Modelled choices per agent, and in total. */
  readonly nChoicesPerAgent: Int32Array;
  readonly nChoices: number;
  readonly nAgents: number;
  readonly nOptions: number;
  /** EM iterations run (0 for a given prior). */
  readonly iterations: number;
  /** The EM met both tolerances (true for a given prior: nothing to iterate). */
  readonly converged: boolean;
  /** Per EM iteration: Σ log marginal likelihood under that iteration's prior, and the largest change of μ or σ. */
  readonly trace: { readonly logMarginalLikelihood: Float64Array; readonly change: Float64Array };
  /** Starts per agent in the first E-step (random starts + the initial estimate), and how many reached the best within 1e-6. */
  readonly nStarts: number;
  readonly nAtBest: Int32Array;
  /** Per agent: the final posterior mode met the gradient tolerance. */
  readonly agentConverged: Uint8Array;
  readonly seed: number;
  readonly warnings: readonly ResultWarning[];
}

/** Resolved EM options shared with parameterRecovery. */
export interface PopulationEmOptions {
  readonly maxIterations: unknown;
  readonly tolerance: unknown;
  readonly likelihoodTolerance: unknown;
  readonly varianceFloor: unknown;
}

/** Validate the EM settings. @throws TF_BAD_OPTION */
export function checkEmOptions(fn: string, o: PopulationEmOptions): Omit<EmSettings, 'fit'> {
  const likelihoodTolerance = o.likelihoodTolerance === Infinity ? Infinity : checkPositive(fn, 'likelihoodTolerance', o.likelihoodTolerance);
  return {
    maxIterations: checkInteger(fn, 'maxIterations', o.maxIterations, 0, 1e6),
    tolerance: checkNonNegative(fn, 'tolerance', o.tolerance),
    likelihoodTolerance,
    varianceFloor: checkPositive(fn, 'varianceFloor', o.varianceFloor),
  };
}

function checkGivenPrior(fn: string, m: ModelStructure, p: unknown): GaussianPhi {
  const shape = `{ mean: { ${m.params.map((n) => `${n}: number`).join(', ')} }, variance: { … > 0 } } on the transformed scale`;
  if (typeof p !== 'object' || p === null || Array.isArray(p) || !('mean' in p) || !('variance' in p)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: prior must be 'estimate' or ${shape}, got ${formatValue(p)}.`, { fn, option: 'prior' });
  }
  const rec = p as Record<string, unknown>;
  for (const key of Object.keys(rec)) {
    if (key !== 'mean' && key !== 'variance') throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: unknown key '${key}' in prior (known: mean, variance).`, { fn, option: `prior.${key}` });
  }
  const part = (which: 'mean' | 'variance'): Float64Array => {
    const r = rec[which];
    if (typeof r !== 'object' || r === null || Array.isArray(r)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: prior.${which} must be an object keyed by parameter name (${m.params.join(', ')}), got ${formatValue(r)}.`, { fn, option: `prior.${which}` });
    const vals = r as Record<string, unknown>;
    for (const key of Object.keys(vals)) {
      if (!(m.params as readonly string[]).includes(key)) throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: prior.${which}.${key} is not a parameter of model '${m.name}' (its parameters: ${m.params.join(', ')}).`, { fn, option: `prior.${which}.${key}` });
    }
    return Float64Array.from(m.params, (name) => {
      const v = vals[name];
      const ok = typeof v === 'number' && Number.isFinite(v) && (which === 'mean' || v > 0);
      if (!ok) throw new TuningforkError('TF_BAD_OPTION', `${fn}: prior.${which}.${name} must be a finite number${which === 'variance' ? ' > 0' : ''}, got ${formatValue(v)}.`, { fn, option: `prior.${which}.${name}`, value: v });
      return v;
    });
  };
  return { mean: part('mean'), variance: part('variance') };
}

/** Prepare every agent's data; errors name the agent (`sessions[i]`, details.session = i). */
export function prepareAgents(fn: string, sessions: unknown, nOptions: number | undefined, minAgents: number): PreparedChoices[] {
  if (!Array.isArray(sessions)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: sessions must be an array with one entry per agent (a session, or an array of that agent's sessions), got ${formatValue(sessions)}.`, { fn, option: 'sessions' });
  }
  if (sessions.length < minAgents) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: sessions holds ${sessions.length} agent${sessions.length === 1 ? '' : 's'}; a population prior needs at least ${minAgents} (its variance is estimated across agents).`, { fn, nAgents: sessions.length });
  }
  const out: PreparedChoices[] = [];
  for (const [i, s] of (sessions as unknown[]).entries()) {
    let d: PreparedChoices;
    try {
      d = prepareChoices(fn, s, nOptions);
    } catch (e) {
      if (e instanceof TuningforkError) {
        const inner = e.details.session;
        throw new TuningforkError(e.code, `sessions[${i}]: ${e.message}`, { ...e.details, session: i, ...(inner !== undefined && Array.isArray(s) ? { withinSession: inner } : {}) });
      }
      throw e;
    }
    const first = out[0];
    if (first && d.nOptions !== first.nOptions) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: sessions[${i}] has ${d.nOptions} options but sessions[0] has ${first.nOptions}; one population prior needs one task. Pass options.nOptions, or fit the groups separately.`, { fn, session: i, nOptions: d.nOptions, expected: first.nOptions });
    }
    out.push(d);
  }
  return out;
}

/** Assemble the public prior record. */
export function populationPrior(m: ModelStructure, em: EmOutcome, bounds: readonly (readonly [number, number])[]): PopulationPrior {
  const k = m.params.length;
  const median = new Float64Array(k);
  const lower = new Float64Array(k);
  const upper = new Float64Array(k);
  const naturalMean = new Float64Array(k);
  const naturalSd = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    const s = naturalSummary(em.transforms[j]!, em.prior.mean[j]!, em.prior.variance[j]!);
    median[j] = s.median;
    lower[j] = s.lower;
    upper[j] = s.upper;
    naturalMean[j] = s.mean;
    naturalSd[j] = s.sd;
  }
  return {
    paramNames: m.params,
    transforms: em.transforms.map((t) => t.kind),
    bounds,
    mean: Float64Array.from(em.prior.mean),
    variance: Float64Array.from(em.prior.variance),
    atFloor: em.atFloor,
    median,
    lower,
    upper,
    naturalMean,
    naturalSd,
  };
}

/** Integrated BIC: −2 Σ log p(D_i) + 2k ln N. */
export function integratedBic(em: EmOutcome, k: number): number {
  const n = em.nChoices.reduce((s, x) => s + x, 0);
  return -2 * em.logMarginalLikelihood + 2 * k * Math.log(n);
}

/**
 * Hierarchical (empirical-Bayes) fit of a choice model across agents: a Gaussian population prior
 * on the transformed parameters, estimated by expectation–maximisation, and each agent's posterior
 * mode under it.
 *
 * Each agent i (an entry of `sessions`: one session, or an array of one animal's sessions pooled)
 * has its own parameters φ_i on the transformed scale (logit / log / identity, from `bounds`), drawn
 * from N(μ, diag σ²). The EM alternates an E-step — per agent, the posterior mode φ̂_i of
 * NLL_i(θ(φ)) + ½ Σ_j (φ_j − μ_j)²/σ_j² by BFGS (exact gradient), and the Laplace posterior
 * covariance Σ_i = H_i⁻¹ from a central-difference Hessian of that objective — with an M-step
 * μ_j = mean_i φ̂_ij, σ_j² = mean_i(φ̂_ij² + Σ_i,jj) − μ_j² (floored at `varianceFloor`). It stops
 * when no μ_j or σ_j moves by more than `tolerance` and the summed log marginal likelihood by more
 * than `likelihoodTolerance`, and ends with an E-step under the final prior, so the reported
 * estimates, SDs and marginal likelihood all belong to the reported prior.
 *
 * The prior starts as the mean and variance of φ over per-agent fits with `initialPriors`
 * (`starts` random starts each). The first E-step starts every agent at that fit and at `starts`
 * random points; later E-steps start at the previous mode (warm start), so an iteration costs about
 * one local optimisation per agent. Agent i draws only from `rng(seed).stream(i)`: the same inputs
 * and seed give bit-identical results.
 *
 * The Laplace log marginal likelihood of agent i is −J_i(φ̂_i) − ½ Σ_j ln σ_j² − ½ ln det H_i
 * (J_i the E-step objective); `ibic` = −2 Σ_i of it + 2k·ln N, with 2k prior parameters and N the
 * total number of choices (Huys et al. 2011, who estimate the integral by sampling instead).
 * Per-agent estimates are shrunk toward the population in proportion to how little their own data
 * say; compare models by `ibic` (lower is better), not by per-agent BIC.
 *
 * EM climbs to a local maximum of the (Laplace) marginal likelihood. With few agents, or a
 * parameter the data barely resolve (often α_C), there can be several: one where the population
 * variance of that parameter collapses toward `varianceFloor` (EM then moves slowly, and may stop
 * on `maxIterations`) and one with a broad variance. Compare `logMarginalLikelihood` across
 * `initialPriors` (or a given `prior`) when it matters.
 *
 * @param sessions - One entry per agent or animal: a ChoiceSession (e.g. a TrialTable) or an
 * array of that animal's sessions (values reset per session; one parameter set per animal).
 * @returns the prior (transformed scale and natural-scale summaries), per-agent estimates with
 * posterior SDs, log-likelihoods, log marginal likelihoods, iBIC, iterations, convergence, seed.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (fewer than 2 agents; an agent with a one-trial
 * session or no more choices than parameters), TF_SHAPE_MISMATCH (agents with different numbers of
 * options; unequal columns), TF_BAD_VALUE / TF_NON_FINITE (bad choices or outcomes),
 * TF_BAD_LIKELIHOOD (no finite likelihood), each naming `sessions[i]` (details.session = i);
 * TF_BAD_OPTION / TF_UNKNOWN_OPTION (options, a model without parameters, a malformed `prior`).
 *
 * @example
 * ```ts
 * const pop = fitChoicePopulation(animals, { model: 'q-ck', seed: 1 });
 * pop.prior.median;      // population median of α, β, α_C, β_C (natural scale)
 * pop.params[3].alpha;   // animal 3's α, shrunk toward the population
 * pop.ibic; pop.converged; pop.iterations;
 * ```
 *
 * Method: EM for the Gaussian hyperparameters with Laplace-approximated per-subject posteriors
 * (Huys et al. 2011, Methods, "hierarchical" fitting; Daw 2011, random-effects / empirical-Bayes
 * estimation); M-step as in the EM for a normal mean and variance with latent values (Dempster,
 * Laird & Rubin 1977).
 *
 * References
 * - Huys, Q. J. M., Cools, R., Gölzer, M., Friedel, E., Heinz, A., Dolan, R. J. & Dayan, P. (2011).
 *   Disentangling the roles of approach, activation and valence in instrumental and Pavlovian
 *   responding. PLoS Comput. Biol. 7(4):e1002028. doi:10.1371/journal.pcbi.1002028
 * - Daw, N. D. (2011). Trial-by-trial data analysis using computational models. In Decision Making,
 *   Affect, and Learning: Attention and Performance XXIII, 3–38. Oxford University Press.
 *   doi:10.1093/acprof:oso/9780199600434.003.0001
 * - Dempster, A. P., Laird, N. M. & Rubin, D. B. (1977). Maximum likelihood from incomplete data via
 *   the EM algorithm. J. R. Stat. Soc. B 39(1):1–38. doi:10.1111/j.2517-6161.1977.tb01600.x
 */
export function fitChoicePopulation(sessions: readonly ChoiceData[], options: FitChoicePopulationOptions = {}): ChoicePopulationFit {
  const fn = 'fitChoicePopulation';
  const o = resolveOptions(fn, DEFAULTS, options);
  const m = resolveModel(fn, o.model);
  if (m.params.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: model '${m.name}' has no free parameter, so there is no population prior to fit; pick a model with parameters.`, { fn, option: 'model' });
  }
  const seed = checkInteger(fn, 'seed', o.seed, 0, Number.MAX_SAFE_INTEGER);
  const em = checkEmOptions(fn, o);
  const gradientTolerance = checkPositive(fn, 'gradientTolerance', o.gradientTolerance);
  const given = o.prior === 'estimate' ? null : checkGivenPrior(fn, m, o.prior);
  const data = prepareAgents(fn, sessions, o.nOptions, 2);
  checkModelOptions(fn, m, data[0]!.nOptions);
  const fit = resolveFitSettings(fn, m, {
    bounds: o.bounds,
    startRanges: o.startRanges,
    starts: o.starts,
    gradientTolerance,
    maxIterations: 200,
    bestTolerance: 1e-6,
    hessianStep: 1e-5,
    boundTolerance: 1e-4,
    priors: o.initialPriors,
  });
  const root = rng(seed);
  const agents: EmAgent[] = data.map((d, i) => {
    let initial: Float64Array | null = null;
    if (!given) {
      try {
        initial = fitPrepared(fn, m, d, fit, root.stream(i).stream(0)).estimates;
      } catch (e) {
        if (e instanceof TuningforkError) {
          const inner = e.details.session;
          throw new TuningforkError(e.code, `sessions[${i}]: ${e.message}`, { ...e.details, session: i, ...(inner !== undefined ? { withinSession: inner } : {}) });
        }
        throw e;
      }
    }
    return { data: d, initial, random: root.stream(i).stream(1) };
  });
  const out = runPopulationEm(fn, m, agents, { fit, ...em }, given);
  return assembleFit(m, out, fit.bounds, given !== null, given ? [] : fit.priors, data[0]!.nOptions, seed);
}

function assembleFit(m: ModelStructure, em: EmOutcome, bounds: readonly (readonly [number, number])[], given: boolean, initialPriors: readonly (ParamPrior | null)[], nOptions: number, seed: number): ChoicePopulationFit {
  const k = m.params.length;
  const n = em.nll.length;
  const mat = (data: Float64Array, cols = k): Matrix => ({ data, rows: n, cols });
  const params = Array.from({ length: n }, (_, i) => paramRecord(m, em.estimates.subarray(i * k, (i + 1) * k)));
  const nChoices = em.nChoices.reduce((s, x) => s + x, 0);
  return {
    model: m,
    paramNames: m.params,
    priorSource: given ? 'given' : 'estimated',
    prior: populationPrior(m, em, bounds),
    initialPrior: { mean: Float64Array.from(em.initialPrior.mean), variance: Float64Array.from(em.initialPrior.variance) },
    initialPriors,
    estimates: mat(em.estimates),
    params,
    se: mat(em.se),
    estimatesTransformed: mat(em.phi),
    seTransformed: mat(em.seTransformed),
    covarianceTransformed: mat(em.covariance, k * k),
    atBound: mat(Float64Array.from(em.atBound)),
    logLikelihood: em.nll.map((x) => -x),
    logMarginal: em.logMarginal,
    logMarginalLikelihood: em.logMarginalLikelihood,
    ibic: integratedBic(em, k),
    nChoicesPerAgent: em.nChoices,
    nChoices,
    nAgents: n,
    nOptions,
    iterations: em.iterations,
    converged: em.converged,
    trace: { logMarginalLikelihood: em.traceLogMarginal, change: em.traceChange },
    nStarts: em.nStarts,
    nAtBest: em.nAtBest,
    agentConverged: em.agentConverged,
    seed,
    warnings: em.warnings,
  };
}

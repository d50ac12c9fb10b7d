// Multi-start maximum-likelihood fit of a choice model on prepared data (trusted settings).
import { TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning, Rng } from '@tuningfork/core';
import type { PreparedChoices } from '../choice/data.js';
import { whereRow } from '../choice/data.js';
import type { ChoiceParamName, ModelStructure, ParamTransform } from '../choice/model.js';
import type { ParamPrior } from '../choice/priors.js';
import { bfgs } from './bfgs.js';
import type { BfgsStop, Objective } from './bfgs.js';
import { ChoiceEngine, compileModel } from './choice-engine.js';
import { inverseSpd } from './linalg.js';
import { logPriorSum } from './priors.js';
import { atBound, jacobian, toNatural, toTransformed, transformFor } from './transforms.js';
import type { Transform } from './transforms.js';

/** Fully resolved fitting settings (plain data, so it can cross to a worker thread). */
export interface FitSettings {
  readonly bounds: readonly (readonly [number, number])[];
  readonly startRanges: readonly (readonly [number, number])[];
  readonly starts: number;
  readonly gradientTolerance: number;
  readonly maxIterations: number;
  readonly bestTolerance: number;
  readonly hessianStep: number;
  readonly boundTolerance: number;
  /** Prior per parameter (null = flat); all null → maximum likelihood. */
  readonly priors: readonly (ParamPrior | null)[];
}

/** Per-start record of a multi-start fit. */
export interface FitStarts {
  /** Natural-scale start points, starts × k. */
  readonly initial: Matrix;
  /** Natural-scale end points, starts × k. */
  readonly estimates: Matrix;
  /** NLL at each start's end point (Infinity when the start could not be evaluated). */
  readonly nll: Float64Array;
  /** Minimised objective at each start's end point: the NLL, minus the log prior for MAP fits. */
  readonly objective: Float64Array;
  readonly iterations: Int32Array;
  /** 1 when the start met the gradient tolerance. */
  readonly converged: Uint8Array;
  /** Why each start stopped: 'gradient' (converged), 'max-iterations', 'line-search', 'non-finite-start'. */
  readonly stop: readonly BfgsStop[];
}

/** Core fit result (the public `ChoiceModelFit` adds bookkeeping). Arrays follow `paramNames`. */
export interface CoreFit {
  readonly paramNames: readonly ChoiceParamName[];
  /** 'maximum-likelihood', or 'maximum-a-posteriori' when any parameter has a prior. */
  readonly estimator: 'maximum-likelihood' | 'maximum-a-posteriori';
  /** Prior of each parameter (null = flat), in `paramNames` order. */
  readonly priors: readonly (ParamPrior | null)[];
  /** Maximum-likelihood (or MAP) estimates on the natural scale. */
  readonly estimates: Float64Array;
  /**
   * Standard errors on the natural scale (delta method) from the Hessian of the minimised objective:
   * the NLL (ML), or the negative log posterior (MAP: posterior SDs of a Laplace approximation).
   * NaN at a bound or when the Hessian is not positive definite.
   */
  readonly se: Float64Array;
  /** Standard errors on the transformed (optimisation) scale. */
  readonly seTransformed: Float64Array;
  readonly transforms: readonly ParamTransform[];
  readonly bounds: readonly (readonly [number, number])[];
  /** Natural-scale covariance, k × k (NaN rows/columns for parameters at a bound). */
  readonly covariance: Matrix;
  /** 1 where the estimate is at a bound (or diverging). */
  readonly atBound: Uint8Array;
  /** State of the Hessian of the minimised objective at the optimum (over the parameters not at a bound). */
  readonly hessian: 'positive-definite' | 'not-positive-definite' | 'none';
  /** Negative log-likelihood (natural log) at the estimates: the minimum for ML; at the posterior mode for MAP. */
  readonly nll: number;
  /** Σ log prior density at the estimates (natural scale, over parameters with a prior); 0 for ML. */
  readonly logPrior: number;
  /** The minimised value: nll − logPrior. */
  readonly objective: number;
  /** Number of free parameters. */
  readonly k: number;
  /** Number of modelled choices (trials with a choice). */
  readonly n: number;
  /** 2k + 2·NLL (the likelihood only, also for MAP fits). */
  readonly aic: number;
  /** k·ln n + 2·NLL (the likelihood only, also for MAP fits). */
  readonly bic: number;
  readonly nStarts: number;
  /** Starts whose objective is within `bestTolerance` of the best. */
  readonly nAtBest: number;
  /** The best start met the gradient tolerance. */
  readonly converged: boolean;
  readonly starts: FitStarts;
  readonly warnings: ResultWarning[];
}

/** One start value of parameter `name`, drawn from `range` (β log-uniform), kept strictly inside the bounds. */
export function drawStart(random: Rng, name: ChoiceParamName, range: readonly [number, number], tr: Transform): number {
  const [lo, hi] = range;
  const u = random.uniform();
  let v = name === 'beta' && lo > 0 ? Math.exp(Math.log(lo) + u * (Math.log(hi) - Math.log(lo))) : lo + u * (hi - lo);
  // keep strictly inside the bounds so the transformed start is finite
  const w = Number.isFinite(tr.hi - tr.lo) ? (tr.hi - tr.lo) * 1e-6 : 1e-6;
  if (Number.isFinite(tr.lo) && v <= tr.lo + w) v = tr.lo + w;
  if (Number.isFinite(tr.hi) && v >= tr.hi - w) v = tr.hi - w;
  return v;
}

/**
 * The minimised objective on the transformed scale φ, filling ∂/∂φ: NLL(θ(φ)) for ML, or
 * NLL(θ(φ)) − Σ log p(θ_j(φ_j)) with `priors` (densities on the natural scale, so the mode does not
 * depend on the optimisation transform). Infinity where the likelihood or a prior is not finite.
 */
export function phiObjective(engine: ChoiceEngine, d: PreparedChoices, transforms: readonly Transform[], priors: readonly (ParamPrior | null)[]): Objective {
  const k = transforms.length;
  const theta = new Float64Array(k);
  const gTheta = new Float64Array(k);
  const slope = new Float64Array(k);
  const map = priors.some((p) => p !== null);
  return (phi: Float64Array, g: Float64Array): number => {
    for (let j = 0; j < k; j++) theta[j] = toNatural(transforms[j]!, phi[j]!);
    let f = engine.nll(d, theta, gTheta, null);
    if (!Number.isFinite(f)) return Infinity;
    if (map) {
      slope.fill(0);
      f -= logPriorSum(priors, theta, slope);
      if (!Number.isFinite(f)) return Infinity;
      for (let j = 0; j < k; j++) gTheta[j] = gTheta[j]! - slope[j]!;
    }
    for (let j = 0; j < k; j++) g[j] = gTheta[j]! * jacobian(transforms[j]!, phi[j]!);
    return f;
  };
}

/**
 * Central-difference Hessian (of the analytic gradient) of `objective` at `phi` over the
 * coordinates `free` (kf × kf, row-major, symmetrised), with step `relStep`·max(1, |φ_j|).
 * `finite` is false when an evaluation was not finite.
 */
export function centralHessian(objective: Objective, phi0: Float64Array, free: readonly number[], relStep: number): { hmat: Float64Array; finite: boolean } {
  const k = phi0.length;
  const kf = free.length;
  const hmat = new Float64Array(kf * kf);
  const gp = new Float64Array(k);
  const gm = new Float64Array(k);
  const phi = Float64Array.from(phi0);
  let finite = true;
  for (let b = 0; b < kf; b++) {
    const j = free[b]!;
    const step = relStep * Math.max(1, Math.abs(phi0[j]!));
    phi[j] = phi0[j]! + step;
    const fp = objective(phi, gp);
    phi[j] = phi0[j]! - step;
    const fm = objective(phi, gm);
    phi[j] = phi0[j]!;
    if (!Number.isFinite(fp) || !Number.isFinite(fm)) finite = false;
    for (let a = 0; a < kf; a++) hmat[a * kf + b] = (gp[free[a]!]! - gm[free[a]!]!) / (2 * step);
  }
  for (let a = 0; a < kf; a++) {
    for (let b = 0; b < a; b++) {
      const v = 0.5 * (hmat[a * kf + b]! + hmat[b * kf + a]!);
      hmat[a * kf + b] = v;
      hmat[b * kf + a] = v;
    }
  }
  return { hmat, finite };
}

/**
 * Fit `m` to `d` from `settings.starts` starts drawn from `random.stream(s)`.
 * @throws {TuningforkError} TF_BAD_LIKELIHOOD when no start has a finite likelihood (names the trial),
 * TF_TOO_FEW_SAMPLES when there are no more choices than parameters.
 */
export function fitPrepared(fn: string, m: ModelStructure, d: PreparedChoices, settings: FitSettings, random: Rng): CoreFit {
  const k = m.params.length;
  const n = d.nChoices;
  if (n <= k) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${n} trials with a choice cannot identify the ${k} parameters of model '${m.name}'; need more than ${k}.`, { fn, nChoices: n, k });
  }
  const engine = new ChoiceEngine(compileModel(m), d.nOptions);
  const transforms = settings.bounds.map(([lo, hi]) => transformFor(lo, hi));
  const theta = new Float64Array(k);
  const priors = settings.priors;
  const map = priors.some((p) => p !== null);
  const objective = phiObjective(engine, d, transforms, priors);
  const warnings: ResultWarning[] = [...d.warnings];
  const nStarts = k === 0 ? 1 : settings.starts;
  const initial = new Float64Array(nStarts * k);
  const ends = new Float64Array(nStarts * k);
  const nllStarts = new Float64Array(nStarts);
  const objStarts = new Float64Array(nStarts);
  const iterations = new Int32Array(nStarts);
  const converged = new Uint8Array(nStarts);
  const stops: BfgsStop[] = [];
  let best = -1;
  let bestPhi: Float64Array = new Float64Array(k);
  for (let s = 0; s < nStarts; s++) {
    const r = random.stream(s);
    const phi0 = new Float64Array(k);
    for (let j = 0; j < k; j++) {
      const v = drawStart(r, m.params[j]!, settings.startRanges[j]!, transforms[j]!);
      initial[s * k + j] = v;
      phi0[j] = toTransformed(transforms[j]!, v);
    }
    const out = bfgs(objective, phi0, { gtol: settings.gradientTolerance, maxIterations: settings.maxIterations, maxStep: 5 });
    for (let j = 0; j < k; j++) ends[s * k + j] = toNatural(transforms[j]!, out.x[j]!);
    objStarts[s] = Number.isFinite(out.f) ? out.f : Infinity;
    nllStarts[s] = objStarts[s]!;
    if (map && Number.isFinite(out.f)) {
      for (let j = 0; j < k; j++) theta[j] = ends[s * k + j]!;
      nllStarts[s] = engine.nll(d, theta, null, null);
    }
    iterations[s] = out.iterations;
    converged[s] = out.converged ? 1 : 0;
    stops.push(out.stop);
    if (Number.isFinite(out.f) && (best < 0 || out.f < objStarts[best]!)) {
      best = s;
      bestPhi = out.x;
    }
  }
  if (best < 0) {
    // Name the trial where the likelihood breaks, at the first start.
    const th = new Float64Array(k);
    for (let j = 0; j < k; j++) th[j] = initial[j]!;
    engine.nll(d, th, null, null);
    const row = engine.badRow >= 0 ? engine.badRow : 0;
    const w = whereRow(d, row);
    throw new TuningforkError('TF_BAD_LIKELIHOOD', `${fn}: the log-likelihood of model '${m.name}' is not finite at ${w.text} from every start (choice ${d.choice[row]}, outcome ${d.reward[row]}); check the outcome scale (|reward| very large?) and the parameter bounds.`, { fn, session: w.session, row: w.row, trial: w.trial });
  }
  const nll = nllStarts[best]!;
  const objectiveBest = objStarts[best]!;
  let nAtBest = 0;
  for (let s = 0; s < nStarts; s++) if (objStarts[s]! <= objectiveBest + settings.bestTolerance) nAtBest++;
  const estimates = new Float64Array(k);
  for (let j = 0; j < k; j++) estimates[j] = toNatural(transforms[j]!, bestPhi[j]!);
  const bound = new Uint8Array(k);
  for (let j = 0; j < k; j++) bound[j] = atBound(transforms[j]!, estimates[j]!, settings.boundTolerance) ? 1 : 0;

  // ---- standard errors: central differences of the analytic gradient on the φ scale (free parameters only)
  const free: number[] = [];
  for (let j = 0; j < k; j++) if (!bound[j]) free.push(j);
  const kf = free.length;
  const se = new Float64Array(k).fill(NaN);
  const seT = new Float64Array(k).fill(NaN);
  const cov = new Float64Array(k * k).fill(NaN);
  let hessian: CoreFit['hessian'] = 'none';
  if (kf > 0) {
    const { hmat, finite } = centralHessian(objective, bestPhi, free, settings.hessianStep);
    const inv = finite ? inverseSpd(hmat, kf) : null;
    if (inv === null) {
      hessian = 'not-positive-definite';
      warnings.push({
        code: 'hessian-not-positive-definite',
        message: `${fn}: the Hessian of the ${map ? 'negative log posterior' : 'NLL'} at the best fit of model '${m.name}' is not positive definite: the parameters (${free.map((j) => m.params[j]).join(', ')}) are not identifiable from these data; standard errors are NaN.`,
        details: { params: free.map((j) => m.params[j]) },
      });
    } else {
      hessian = 'positive-definite';
      for (let a = 0; a < kf; a++) {
        const ja = free[a]!;
        const da = jacobian(transforms[ja]!, bestPhi[ja]!);
        seT[ja] = Math.sqrt(inv[a * kf + a]!);
        for (let b = 0; b < kf; b++) {
          const jb = free[b]!;
          const db = jacobian(transforms[jb]!, bestPhi[jb]!);
          cov[ja * k + jb] = da * db * inv[a * kf + b]!; // delta method
        }
        se[ja] = Math.sqrt(cov[ja * k + ja]!);
      }
    }
  }
  const weak = m.params.filter((_, j) => {
    const [lo, hi] = settings.bounds[j]!;
    const limit = Number.isFinite(hi - lo) ? (hi - lo) / 2 : 100 * Math.max(1, Math.abs(estimates[j]!));
    return se[j]! > limit;
  });
  if (weak.length > 0) {
    warnings.push({
      code: 'weakly-identified',
      message: `${fn}: the standard error of ${weak.join(', ')} (model '${m.name}') exceeds half its bounded range (or 100 × its size): the data barely constrain ${weak.length === 1 ? 'it' : 'them'} (e.g. a near-deterministic chooser on a likelihood plateau).`,
      details: { params: weak },
    });
  }
  if (kf < k) {
    const names = m.params.filter((_, j) => bound[j]);
    warnings.push({
      code: 'parameter-at-bound',
      message: `${fn}: ${names.join(', ')} of model '${m.name}' ${names.length === 1 ? 'is' : 'are'} at a bound (or diverging); no standard error is given for ${names.length === 1 ? 'it' : 'them'} and the others are conditional on ${names.length === 1 ? 'its' : 'their'} value.`,
      details: { params: names },
    });
  }
  if (!converged[best]) {
    warnings.push({
      code: 'best-start-not-converged',
      message: `${fn}: the best start stopped by '${stops[best]}' before the gradient fell below ${settings.gradientTolerance}; the estimate may be imprecise.`,
      details: { stop: stops[best] },
    });
  }
  if (nStarts > 1 && nAtBest === 1) {
    warnings.push({
      code: 'single-start-at-best',
      message: `${fn}: only 1 of ${nStarts} starts reached the best ${map ? 'posterior' : 'NLL'} (within ${settings.bestTolerance}); the ${map ? 'posterior' : 'likelihood'} may have several local optima — consider more starts.`,
      details: { nStarts },
    });
  }
  return {
    paramNames: m.params,
    estimator: map ? 'maximum-a-posteriori' : 'maximum-likelihood',
    priors,
    estimates,
    se,
    seTransformed: seT,
    transforms: transforms.map((t) => t.kind),
    bounds: settings.bounds,
    covariance: { data: cov, rows: k, cols: k },
    atBound: bound,
    hessian,
    nll,
    logPrior: map ? logPriorSum(priors, estimates, null) : 0,
    objective: objectiveBest,
    k,
    n,
    aic: 2 * k + 2 * nll,
    bic: k * Math.log(n) + 2 * nll,
    nStarts,
    nAtBest,
    converged: converged[best] === 1,
    starts: {
      initial: { data: initial, rows: nStarts, cols: k },
      estimates: { data: ends, rows: nStarts, cols: k },
      nll: nllStarts,
      objective: objStarts,
      iterations,
      converged,
      stop: stops,
    },
    warnings,
  };
}

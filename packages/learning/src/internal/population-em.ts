// Expectation–maximisation of a Gaussian population prior on the transformed parameter scale φ,
// with Laplace-approximated per-agent posteriors (Huys et al. 2011, Methods; Daw 2011). Shared by
// fitChoicePopulation and parameterRecovery's 'empirical-bayes' estimator. Inputs are trusted.
import { TuningforkError } from '@tuningfork/core';
import type { ResultWarning, Rng } from '@tuningfork/core';
import type { PreparedChoices } from '../choice/data.js';
import { whereRow } from '../choice/data.js';
import type { ModelStructure } from '../choice/model.js';
import { bfgs } from './bfgs.js';
import type { Objective } from './bfgs.js';
import { ChoiceEngine, compileModel } from './choice-engine.js';
import { centralHessian, drawStart, phiObjective } from './fit-core.js';
import type { FitSettings } from './fit-core.js';
import { cholesky, inverseSpd } from './linalg.js';
import { atBound, jacobian, toNatural, toTransformed, transformFor } from './transforms.js';
import type { Transform } from './transforms.js';

/** A diagonal Gaussian on the transformed scale: φ_j ~ N(mean_j, variance_j), independently. */
export interface GaussianPhi {
  readonly mean: Float64Array;
  readonly variance: Float64Array;
}

/** Settings of the EM (plain data). `fit` supplies bounds, start ranges, starts and optimiser settings. */
export interface EmSettings {
  readonly fit: FitSettings;
  /** EM iterations (E-step + M-step) at most; 0 = one E-step under the initial prior. */
  readonly maxIterations: number;
  /** Converged when max_j |Δμ_j| and max_j |Δσ_j| (transformed scale) are ≤ this … */
  readonly tolerance: number;
  /** … and |Δ Σ_i log p(D_i)| between successive E-steps is ≤ this. */
  readonly likelihoodTolerance: number;
  /** Smallest σ_j² the M-step may return. */
  readonly varianceFloor: number;
}

/** Per-agent input: prepared data, the initial estimate (natural scale, or null), the generator of its first-E-step starts. */
export interface EmAgent {
  readonly data: PreparedChoices;
  readonly initial: Float64Array | null;
  readonly random: Rng;
}

/** Outcome of the EM (arrays agents × k row-major; k × k blocks per agent for the covariance). */
export interface EmOutcome {
  readonly transforms: readonly Transform[];
  readonly initialPrior: GaussianPhi;
  readonly prior: GaussianPhi;
  readonly atFloor: Uint8Array;
  /** Posterior modes on the transformed scale, agents × k. */
  readonly phi: Float64Array;
  /** Laplace posterior covariance H⁻¹ on the transformed scale, agents × k × k. */
  readonly covariance: Float64Array;
  /** Posterior modes on the natural scale, agents × k. */
  readonly estimates: Float64Array;
  /** Posterior SDs, natural scale (delta method) and transformed scale, agents × k. */
  readonly se: Float64Array;
  readonly seTransformed: Float64Array;
  readonly atBound: Uint8Array;
  /** NLL at each agent's posterior mode. */
  readonly nll: Float64Array;
  /** Laplace log marginal likelihood of each agent under the final prior. */
  readonly logMarginal: Float64Array;
  readonly logMarginalLikelihood: number;
  /** Choices per agent. */
  readonly nChoices: Int32Array;
  readonly iterations: number;
  readonly converged: boolean;
  /** Per EM iteration: Σ log p(D_i) under the prior of that E-step, and the prior change of the M-step. */
  readonly traceLogMarginal: Float64Array;
  readonly traceChange: Float64Array;
  /** Starts of the first E-step within bestTolerance of the best, per agent. */
  readonly nAtBest: Int32Array;
  /** The final E-step's optimisation met the gradient tolerance, per agent. */
  readonly agentConverged: Uint8Array;
  readonly nStarts: number;
  readonly warnings: ResultWarning[];
}

interface AgentPosterior {
  phi: Float64Array;
  cov: Float64Array;
  logDetH: number;
  nll: number;
  objective: number;
  converged: boolean;
  nAtBest: number;
  hessianOk: boolean;
}

/**
 * Objective of one agent's E-step: J(φ) = NLL(θ(φ)) + ½ Σ_j (φ_j − μ_j)²/σ_j² (the negative log joint up to
 * a constant), with its gradient. `nllOf` reads the NLL part of the last evaluation.
 */
function gaussianObjective(base: Objective, prior: GaussianPhi): { objective: Objective; lastNll: () => number } {
  let last = NaN;
  const k = prior.mean.length;
  const objective: Objective = (phi, g) => {
    const f = base(phi, g);
    last = f;
    if (!Number.isFinite(f)) return Infinity;
    let p = 0;
    for (let j = 0; j < k; j++) {
      const u = phi[j]! - prior.mean[j]!;
      const iv = 1 / prior.variance[j]!;
      p += 0.5 * u * u * iv;
      g[j] = g[j]! + u * iv;
    }
    return f + p;
  };
  return { objective, lastNll: () => last };
}

/** One agent's E-step: the posterior mode from the given starts, the Hessian there and its inverse. */
function eStep(fn: string, m: ModelStructure, agentIndex: number, d: PreparedChoices, base: Objective, prior: GaussianPhi, starts: readonly Float64Array[], fit: FitSettings): AgentPosterior {
  const k = prior.mean.length;
  const { objective, lastNll } = gaussianObjective(base, prior);
  let bestPhi: Float64Array | null = null;
  let bestF = Infinity;
  let bestConverged = false;
  const values: number[] = [];
  for (const x0 of starts) {
    const out = bfgs(objective, x0, { gtol: fit.gradientTolerance, maxIterations: fit.maxIterations, maxStep: 5 });
    const f = Number.isFinite(out.f) ? out.f : Infinity;
    values.push(f);
    if (f < bestF) {
      bestF = f;
      bestPhi = out.x;
      bestConverged = out.converged;
    }
  }
  if (bestPhi === null) {
    const engine = new ChoiceEngine(compileModel(m), d.nOptions);
    const th = new Float64Array(k);
    const transforms = fit.bounds.map(([lo, hi]) => transformFor(lo, hi));
    for (let j = 0; j < k; j++) th[j] = toNatural(transforms[j]!, starts[0]![j]!);
    engine.nll(d, th, null, null);
    const row = engine.badRow >= 0 ? engine.badRow : 0;
    const w = whereRow(d, row);
    throw new TuningforkError('TF_BAD_LIKELIHOOD', `${fn}: sessions[${agentIndex}]: the log-likelihood of model '${m.name}' is not finite at ${w.text} from every start (choice ${d.choice[row]}, outcome ${d.reward[row]}); check the outcome scale and the parameter bounds.`, { fn, session: agentIndex, withinSession: w.session, row: w.row, trial: w.trial });
  }
  let nAtBest = 0;
  for (const v of values) if (v <= bestF + fit.bestTolerance) nAtBest++;
  const g = new Float64Array(k);
  objective(bestPhi, g);
  const nll = lastNll();
  const all = Array.from({ length: k }, (_, j) => j);
  const { hmat, finite } = centralHessian(objective, bestPhi, all, fit.hessianStep);
  const inv = finite ? inverseSpd(hmat, k) : null;
  const chol = Float64Array.from(hmat);
  if (inv === null || !cholesky(chol, k)) {
    // Not positive definite (numerically): fall back to the prior's covariance for this agent (the data
    // contribute no curvature), reported as a warning by the caller.
    const cov = new Float64Array(k * k);
    let logDetH = 0;
    for (let j = 0; j < k; j++) {
      cov[j * k + j] = prior.variance[j]!;
      logDetH -= Math.log(prior.variance[j]!);
    }
    return { phi: bestPhi, cov, logDetH, nll, objective: bestF, converged: bestConverged, nAtBest, hessianOk: false };
  }
  let logDetH = 0;
  for (let j = 0; j < k; j++) logDetH += 2 * Math.log(chol[j * k + j]!);
  return { phi: bestPhi, cov: inv, logDetH, nll, objective: bestF, converged: bestConverged, nAtBest, hessianOk: true };
}

/**
 * Laplace log marginal likelihood of one agent: log ∫ p(D|φ) N(φ; μ, diag σ²) dφ ≈
 * −J(φ̂) − ½ Σ_j log σ_j² − ½ log det H, with J the E-step objective and H its Hessian at the mode φ̂.
 */
function laplaceLogMarginal(post: AgentPosterior, prior: GaussianPhi): number {
  let s = -post.objective - 0.5 * post.logDetH;
  for (let j = 0; j < prior.variance.length; j++) s -= 0.5 * Math.log(prior.variance[j]!);
  return s;
}

/** M-step: μ_j = mean_i φ̂_ij; σ_j² = mean_i((φ̂_ij − μ_j)² + Σ_i,jj), floored. */
function mStep(posts: readonly AgentPosterior[], k: number, floor: number): { prior: GaussianPhi; atFloor: Uint8Array } {
  const n = posts.length;
  const mean = new Float64Array(k);
  const variance = new Float64Array(k);
  const atFloor = new Uint8Array(k);
  for (let j = 0; j < k; j++) {
    let s = 0;
    for (const p of posts) s += p.phi[j]!;
    const mu = s / n;
    let v = 0;
    for (const p of posts) {
      const u = p.phi[j]! - mu;
      v += u * u + p.cov[j * k + j]!;
    }
    v /= n;
    mean[j] = mu;
    if (!(v > floor)) {
      v = floor;
      atFloor[j] = 1;
    }
    variance[j] = v;
  }
  return { prior: { mean, variance }, atFloor };
}

/** Largest change of μ_j or σ_j between two priors. */
function priorChange(a: GaussianPhi, b: GaussianPhi): number {
  let c = 0;
  for (let j = 0; j < a.mean.length; j++) {
    c = Math.max(c, Math.abs(a.mean[j]! - b.mean[j]!), Math.abs(Math.sqrt(a.variance[j]!) - Math.sqrt(b.variance[j]!)));
  }
  return c;
}

/**
 * The initial prior from per-agent initial estimates: mean and variance (divisor n) of φ_i, floored.
 * Estimates at (or beyond) the at-bound threshold are first moved to it, so φ stays finite; returns the
 * indices of the agents moved.
 */
export function initialPriorFrom(initial: readonly Float64Array[], transforms: readonly Transform[], boundTolerance: number, floor: number): { prior: GaussianPhi; phi: Float64Array[]; clamped: number[] } {
  const k = transforms.length;
  const n = initial.length;
  const clamped: number[] = [];
  const phi = initial.map((theta, i) => {
    const out = new Float64Array(k);
    let moved = false;
    for (let j = 0; j < k; j++) {
      const tr = transforms[j]!;
      let v = theta[j]!;
      if (tr.kind === 'logit') {
        const w = (tr.hi - tr.lo) * boundTolerance;
        if (v < tr.lo + w) ((v = tr.lo + w), (moved = true));
        if (v > tr.hi - w) ((v = tr.hi - w), (moved = true));
      } else if (tr.kind === 'log') {
        if (v < tr.lo + boundTolerance) ((v = tr.lo + boundTolerance), (moved = true));
        if (v > tr.lo + 1 / boundTolerance) ((v = tr.lo + 1 / boundTolerance), (moved = true));
      } else if (tr.kind === 'neglog') {
        if (v > tr.hi - boundTolerance) ((v = tr.hi - boundTolerance), (moved = true));
        if (v < tr.hi - 1 / boundTolerance) ((v = tr.hi - 1 / boundTolerance), (moved = true));
      } else if (Math.abs(v) > 1 / boundTolerance) {
        v = Math.sign(v) / boundTolerance;
        moved = true;
      }
      out[j] = toTransformed(tr, v);
    }
    if (moved) clamped.push(i);
    return out;
  });
  const mean = new Float64Array(k);
  const variance = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    let s = 0;
    for (const p of phi) s += p[j]!;
    const mu = s / n;
    let v = 0;
    for (const p of phi) v += (p[j]! - mu) ** 2;
    mean[j] = mu;
    variance[j] = Math.max(v / n, floor);
  }
  return { prior: { mean, variance }, phi, clamped };
}

/**
 * Run the EM. With `given` the prior is fixed (no iteration): one E-step under it, each agent started
 * at the prior mean and at `starts` random points. Otherwise the prior starts from the agents'
 * initial estimates; the first E-step starts each agent at its initial estimate and at `starts`
 * random points (`agent.random.stream(s)`), later E-steps only at the previous mode (warm start), and
 * a last E-step under the final prior gives the reported modes and marginal likelihood.
 */
export function runPopulationEm(fn: string, m: ModelStructure, agents: readonly EmAgent[], settings: EmSettings, given: GaussianPhi | null): EmOutcome {
  const k = m.params.length;
  const n = agents.length;
  const fit = settings.fit;
  const transforms = fit.bounds.map(([lo, hi]) => transformFor(lo, hi));
  const noPriors = m.params.map(() => null);
  const bases = agents.map((a) => phiObjective(new ChoiceEngine(compileModel(m), a.data.nOptions), a.data, transforms, noPriors));
  const warnings: ResultWarning[] = [];
  let prior: GaussianPhi;
  let warm: Float64Array[];
  if (given) {
    prior = given;
    warm = agents.map(() => Float64Array.from(given.mean));
  } else {
    const init = initialPriorFrom(
      agents.map((a) => a.initial!),
      transforms,
      fit.boundTolerance,
      settings.varianceFloor,
    );
    prior = init.prior;
    warm = init.phi;
    if (init.clamped.length > 0) {
      warnings.push({
        code: 'initial-fit-at-bound',
        message: `${fn}: the initial fits of ${init.clamped.length} of ${n} agents (sessions ${init.clamped.slice(0, 10).join(', ')}${init.clamped.length > 10 ? ', …' : ''}) had a parameter at a bound; it was moved to the at-bound threshold before the prior was initialised.`,
        details: { sessions: init.clamped },
      });
    }
  }
  const initialPrior = prior;
  const randomStarts = (a: EmAgent, x0: Float64Array): Float64Array[] => {
    const out = [x0];
    for (let s = 0; s < fit.starts; s++) {
      const r = a.random.stream(s);
      const phi0 = new Float64Array(k);
      for (let j = 0; j < k; j++) phi0[j] = toTransformed(transforms[j]!, drawStart(r, m.params[j]!, fit.startRanges[j]!, transforms[j]!));
      out.push(phi0);
    }
    return out;
  };
  let first = true;
  let nAtBest: Int32Array = new Int32Array(n);
  const runE = (p: GaussianPhi): AgentPosterior[] => {
    const posts = agents.map((a, i) => eStep(fn, m, i, a.data, bases[i]!, p, first ? randomStarts(a, warm[i]!) : [warm[i]!], fit));
    if (first) nAtBest = Int32Array.from(posts, (q) => q.nAtBest);
    first = false;
    warm = posts.map((q) => q.phi);
    return posts;
  };
  const sumLml = (posts: readonly AgentPosterior[], p: GaussianPhi): number => posts.reduce((s, q) => s + laplaceLogMarginal(q, p), 0);

  const traceL: number[] = [];
  const traceC: number[] = [];
  let atFloor: Uint8Array = new Uint8Array(k);
  let converged = given !== null;
  let iterations = 0;
  if (!given) {
    let prevL = NaN;
    for (let it = 0; it < settings.maxIterations; it++) {
      const posts = runE(prior);
      const L = sumLml(posts, prior);
      const next = mStep(posts, k, settings.varianceFloor);
      const change = priorChange(prior, next.prior);
      traceL.push(L);
      traceC.push(change);
      iterations++;
      prior = next.prior;
      atFloor = next.atFloor;
      if (change <= settings.tolerance && Math.abs(L - prevL) <= settings.likelihoodTolerance) {
        converged = true;
        break;
      }
      prevL = L;
    }
  }
  // Final E-step under the reported prior.
  const posts = runE(prior);
  const logMarginal = Float64Array.from(posts, (q) => laplaceLogMarginal(q, prior));
  const phi = new Float64Array(n * k);
  const covariance = new Float64Array(n * k * k);
  const estimates = new Float64Array(n * k);
  const se = new Float64Array(n * k);
  const seT = new Float64Array(n * k);
  const bound = new Uint8Array(n * k);
  const nll = new Float64Array(n);
  const agentConverged = new Uint8Array(n);
  const badHessian: number[] = [];
  posts.forEach((q, i) => {
    phi.set(q.phi, i * k);
    covariance.set(q.cov, i * k * k);
    nll[i] = q.nll;
    agentConverged[i] = q.converged ? 1 : 0;
    if (!q.hessianOk) badHessian.push(i);
    for (let j = 0; j < k; j++) {
      const tr = transforms[j]!;
      const th = toNatural(tr, q.phi[j]!);
      estimates[i * k + j] = th;
      const sd = Math.sqrt(q.cov[j * k + j]!);
      seT[i * k + j] = sd;
      se[i * k + j] = Math.abs(jacobian(tr, q.phi[j]!)) * sd;
      bound[i * k + j] = atBound(tr, th, fit.boundTolerance) ? 1 : 0;
    }
  });
  if (badHessian.length > 0) {
    warnings.push({
      code: 'hessian-not-positive-definite',
      message: `${fn}: the Hessian of the negative log posterior was not positive definite for ${badHessian.length} agent(s) (sessions ${badHessian.slice(0, 10).join(', ')}${badHessian.length > 10 ? ', …' : ''}); their posterior covariance was replaced by the prior's.`,
      details: { sessions: badHessian },
    });
  }
  const nc = n - agentConverged.reduce((s, x) => s + x, 0);
  if (nc > 0) {
    warnings.push({ code: 'fits-not-converged', message: `${fn}: ${nc} of ${n} per-agent posterior modes did not meet the gradient tolerance ${fit.gradientTolerance}.`, details: { count: nc } });
  }
  if (!given && !converged) {
    warnings.push({
      code: 'em-not-converged',
      message: `${fn}: the population prior did not converge in ${settings.maxIterations} EM iterations (last change ${traceC.length > 0 ? traceC[traceC.length - 1]!.toExponential(2) : 'n/a'} vs tolerance ${settings.tolerance}); raise maxIterations or loosen the tolerance.`,
      details: { iterations },
    });
  }
  const floored = m.params.filter((_, j) => atFloor[j]);
  if (floored.length > 0) {
    warnings.push({
      code: 'variance-at-floor',
      message: `${fn}: the population variance of ${floored.join(', ')} reached the floor ${settings.varianceFloor}: the data do not resolve differences between agents in ${floored.length === 1 ? 'it' : 'them'}, and the estimates are shrunk to the population mean.`,
      details: { params: floored },
    });
  }
  for (const [i, a] of agents.entries()) {
    for (const w of a.data.warnings) warnings.push({ ...w, message: `sessions[${i}]: ${w.message}`, details: { ...(w.details ?? {}), session: i } });
  }
  return {
    transforms,
    initialPrior,
    prior,
    atFloor,
    phi,
    covariance,
    estimates,
    se,
    seTransformed: seT,
    atBound: bound,
    nll,
    logMarginal,
    logMarginalLikelihood: logMarginal.reduce((s, x) => s + x, 0),
    nChoices: Int32Array.from(agents, (a) => a.data.nChoices),
    iterations,
    converged,
    traceLogMarginal: Float64Array.from(traceL),
    traceChange: Float64Array.from(traceC),
    nAtBest,
    agentConverged,
    nStarts: fit.starts + 1,
    warnings,
  };
}

const Z975 = 1.959963984540054;

/**
 * Natural-scale summaries of a Gaussian φ ~ N(μ, σ²) mapped through `tr`: median θ(μ), the 2.5 % and
 * 97.5 % quantiles θ(μ ∓ 1.96σ), and mean and SD by the trapezoid rule on z ∈ [−8, 8] (step 0.02), which
 * is exact to rounding for these smooth, Gaussian-weighted integrands.
 */
export function naturalSummary(tr: Transform, mu: number, variance: number): { median: number; lower: number; upper: number; mean: number; sd: number } {
  const sd = Math.sqrt(variance);
  const a = toNatural(tr, mu - Z975 * sd);
  const b = toNatural(tr, mu + Z975 * sd);
  let w = 0;
  let s1 = 0;
  let s2 = 0;
  const h = 0.02;
  for (let i = -400; i <= 400; i++) {
    const z = i * h;
    const c = (i === -400 || i === 400 ? 0.5 : 1) * Math.exp(-0.5 * z * z);
    const th = toNatural(tr, mu + sd * z);
    w += c;
    s1 += c * th;
  }
  const mean = s1 / w;
  for (let i = -400; i <= 400; i++) {
    const z = i * h;
    const c = (i === -400 || i === 400 ? 0.5 : 1) * Math.exp(-0.5 * z * z);
    const u = toNatural(tr, mu + sd * z) - mean;
    s2 += c * u * u;
  }
  return { median: toNatural(tr, mu), lower: Math.min(a, b), upper: Math.max(a, b), mean, sd: Math.sqrt(s2 / w) };
}

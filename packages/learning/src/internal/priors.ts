// Prior log-densities for MAP fitting: validation of the `priors` option and evaluation of
// Σ log p(θ_j) with its gradient. Resolved priors are plain data (they cross to worker threads).
import { TuningforkError, formatValue } from '@tuningfork/core';
import type { ChoiceParamName, ModelStructure } from '../choice/model.js';
import { PARAM_DOMAIN } from '../choice/model.js';
import type { ParamPrior } from '../choice/priors.js';
import { WEAK_PRIORS } from '../choice/priors.js';

const HALF_LOG_2PI = 0.5 * Math.log(2 * Math.PI);

// Lanczos (1964) approximation of ln Γ(x), x > 0, with the g = 7, n = 9 coefficient set in common
// use (P. Godfrey's; from memory), reflection below x = 0.5. Checked against scipy.special.gammaln
// in test/fixtures/scipy/map_fixture.json.
const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/** ln Γ(x) for x > 0. */
export function logGamma(x: number): number {
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  const z = x - 1;
  let a = LANCZOS[0]!;
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += LANCZOS[i]! / (z + i);
  return HALF_LOG_2PI + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** log p(θ) of one prior (−Infinity outside its support). */
export function logPriorDensity(p: ParamPrior, theta: number): number {
  switch (p.dist) {
    case 'beta': {
      if (!(theta >= 0 && theta <= 1)) return -Infinity;
      const la = p.a === 1 ? 0 : (p.a - 1) * Math.log(theta);
      const lb = p.b === 1 ? 0 : (p.b - 1) * Math.log1p(-theta);
      return la + lb - (logGamma(p.a) + logGamma(p.b) - logGamma(p.a + p.b));
    }
    case 'gamma': {
      if (!(theta >= 0)) return -Infinity;
      const lk = p.shape === 1 ? 0 : (p.shape - 1) * Math.log(theta);
      return lk - theta / p.scale - logGamma(p.shape) - p.shape * Math.log(p.scale);
    }
    default: {
      const u = (theta - p.mean) / p.sd;
      return -0.5 * u * u - Math.log(p.sd) - HALF_LOG_2PI;
    }
  }
}

/** d log p(θ)/dθ of one prior (inside its support). */
export function logPriorSlope(p: ParamPrior, theta: number): number {
  switch (p.dist) {
    case 'beta':
      return (p.a === 1 ? 0 : (p.a - 1) / theta) - (p.b === 1 ? 0 : (p.b - 1) / (1 - theta));
    case 'gamma':
      return (p.shape === 1 ? 0 : (p.shape - 1) / theta) - 1 / p.scale;
    default:
      return -(theta - p.mean) / (p.sd * p.sd);
  }
}

/** The distribution family a parameter's domain admits. */
function familyFor(name: ChoiceParamName): ParamPrior['dist'] {
  const [lo, hi] = PARAM_DOMAIN[name];
  if (lo === 0 && hi === 1) return 'beta';
  if (lo === 0 && hi === Infinity) return 'gamma';
  return 'normal';
}

function positiveNumber(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v) && v > 0;
}

function checkPrior(fn: string, name: ChoiceParamName, v: unknown): ParamPrior {
  const option = `priors.${name}`;
  const family = familyFor(name);
  const shape =
    family === 'beta' ? "{ dist: 'beta', a ≥ 1, b ≥ 1 }" : family === 'gamma' ? "{ dist: 'gamma', shape ≥ 1, scale > 0 }" : "{ dist: 'normal', mean, sd > 0 }";
  const bad = (why: string): never => {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${option} must be ${shape} (${why}), got ${typeof v === 'object' && v !== null ? JSON.stringify(v) : formatValue(v)}.`, { fn, option });
  };
  if (typeof v !== 'object' || v === null || Array.isArray(v)) return bad('a prior object');
  const rec = v as Record<string, unknown>;
  if (rec.dist !== family) return bad(`the domain of ${name} is [${PARAM_DOMAIN[name].join(', ')}], which takes a ${family} prior`);
  const keys = family === 'beta' ? ['dist', 'a', 'b'] : family === 'gamma' ? ['dist', 'shape', 'scale'] : ['dist', 'mean', 'sd'];
  for (const k of Object.keys(rec)) {
    if (!keys.includes(k)) throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: unknown key '${k}' in ${option} (a ${family} prior has ${keys.join(', ')}).`, { fn, option: `${option}.${k}` });
  }
  if (family === 'beta') {
    if (!positiveNumber(rec.a) || !positiveNumber(rec.b) || rec.a < 1 || rec.b < 1) return bad('a and b finite and ≥ 1, so the density is bounded and the posterior mode exists');
    return { dist: 'beta', a: rec.a, b: rec.b };
  }
  if (family === 'gamma') {
    if (!positiveNumber(rec.shape) || rec.shape < 1 || !positiveNumber(rec.scale)) return bad('shape finite and ≥ 1, scale finite and > 0');
    return { dist: 'gamma', shape: rec.shape, scale: rec.scale };
  }
  if (typeof rec.mean !== 'number' || !Number.isFinite(rec.mean) || !positiveNumber(rec.sd)) return bad('mean finite, sd finite and > 0');
  return { dist: 'normal', mean: rec.mean, sd: rec.sd };
}

/**
 * Resolve the `priors` option for model `m`: one prior (or null = flat) per parameter, in the
 * model's parameter order. Keys of parameters the model lacks are checked but ignored.
 * @throws TF_BAD_OPTION, TF_UNKNOWN_OPTION
 */
export function resolvePriors(fn: string, m: ModelStructure, priors: unknown): (ParamPrior | null)[] {
  if (priors === 'none') return m.params.map(() => null);
  if (priors === 'weakly-informative') return m.params.map((name) => WEAK_PRIORS[name]);
  if (typeof priors !== 'object' || priors === null || Array.isArray(priors)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: priors must be 'none', 'weakly-informative' or an object of priors keyed by parameter name, got ${formatValue(priors)}.`, { fn, option: 'priors' });
  }
  const rec = priors as Record<string, unknown>;
  const checked: Partial<Record<ChoiceParamName, ParamPrior | null>> = {};
  for (const [key, v] of Object.entries(rec)) {
    if (!(key in PARAM_DOMAIN)) {
      throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: priors.${key} is not a parameter name (known: ${Object.keys(PARAM_DOMAIN).join(', ')}).`, { fn, option: `priors.${key}` });
    }
    checked[key as ChoiceParamName] = v === null || v === undefined ? null : checkPrior(fn, key as ChoiceParamName, v);
  }
  return m.params.map((name) => checked[name] ?? null);
}

/** Σ_j log p_j(θ_j) over the parameters with a prior; adds d/dθ_j into `slope` when given. */
export function logPriorSum(priors: readonly (ParamPrior | null)[], theta: ArrayLike<number>, slope: Float64Array | null): number {
  let s = 0;
  for (let j = 0; j < priors.length; j++) {
    const p = priors[j];
    if (!p) continue;
    s += logPriorDensity(p, theta[j]!);
    if (slope) slope[j] = slope[j]! + logPriorSlope(p, theta[j]!);
  }
  return s;
}

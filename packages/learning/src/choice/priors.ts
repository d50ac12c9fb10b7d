import type { ChoiceParamName } from './model.js';

/**
 * Prior density of one natural-scale parameter, for maximum a posteriori (MAP) fitting:
 * - `{ dist: 'beta', a, b }` on a parameter with domain [0, 1] (rates, forget, epsilon, bias);
 *   density θ^(a−1)(1 − θ)^(b−1)/B(a, b);
 * - `{ dist: 'gamma', shape, scale }` on `beta` (domain [0, ∞)); density
 *   θ^(shape−1)e^(−θ/scale)/(Γ(shape)·scale^shape) — scale, not rate;
 * - `{ dist: 'normal', mean, sd }` on `betaC` (domain ℝ).
 *
 * Beta `a, b` and gamma `shape` must be ≥ 1 so the density stays bounded on the domain and the
 * posterior mode exists. The density is that of the whole domain: fitting bounds narrower than
 * the domain truncate it, which moves no mode but leaves the reported `logPrior` unnormalised.
 */
export type ParamPrior =
  | { readonly dist: 'beta'; readonly a: number; readonly b: number }
  | { readonly dist: 'gamma'; readonly shape: number; readonly scale: number }
  | { readonly dist: 'normal'; readonly mean: number; readonly sd: number };

/** Priors of a fit: a preset name, or a prior per parameter (missing or `null` = flat). */
export type ChoicePriors = 'none' | 'weakly-informative' | Readonly<Partial<Record<ChoiceParamName, ParamPrior | null>>>;

const RATE: ParamPrior = Object.freeze({ dist: 'beta', a: 1.1, b: 1.1 });

/**
 * The `'weakly-informative'` prior set: Beta(1.1, 1.1) on every parameter in [0, 1] (learning
 * rates, α_C, forget, epsilon, bias), Gamma(shape 1.2, scale 5) on the inverse temperature β, and
 * Normal(0, 5) on the choice-kernel weight β_C.
 *
 * Beta(1.1, 1.1) and Gamma(1.2, 5) are the priors Daw (2011) suggests for learning rates and
 * softmax inverse temperatures: nearly flat over the plausible range (the Beta density varies by
 * less than a factor 1.2 over [0.1, 0.9]; the Gamma has mean 6 and 95 % of its mass below 17) but
 * zero at α ∈ {0, 1} and β = 0 and falling off for β ≫ 20, which keeps estimates off the bounds
 * and off the likelihood plateau of a near-deterministic chooser. Normal(0, 5) for β_C is our
 * choice in the same spirit (common practice for a signed weight): zero-centred, 95 % of the mass
 * within ±10, so it only reins in runaway perseveration or alternation weights.
 *
 * References
 * - Daw, N. D. (2011). Trial-by-trial data analysis using computational models. In Delgado, M. R.,
 *   Phelps, E. A. & Robbins, T. W. (eds), Decision Making, Affect, and Learning: Attention and
 *   Performance XXIII, 3–38. Oxford University Press. doi:10.1093/acprof:oso/9780199600434.003.0001
 * - Gershman, S. J. (2016). Empirical priors for reinforcement learning models. J. Math. Psychol.
 *   71:1–6. doi:10.1016/j.jmp.2016.01.006
 */
export const WEAK_PRIORS: Readonly<Record<ChoiceParamName, ParamPrior>> = Object.freeze({
  alpha: RATE,
  alphaPos: RATE,
  alphaNeg: RATE,
  beta: Object.freeze({ dist: 'gamma', shape: 1.2, scale: 5 }),
  forget: RATE,
  alphaC: RATE,
  betaC: Object.freeze({ dist: 'normal', mean: 0, sd: 5 }),
  epsilon: RATE,
  bias: RATE,
});

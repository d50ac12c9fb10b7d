import { TuningforkError, checkInteger, checkRange, formatValue, resolveOptions } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';

/**
 * One episode for {@link tdLambda}: the state at each step as a feature row (`features`,
 * steps × nFeatures) or as a state index (`states`, tabular one-hot), and `rewards[t]`, the
 * reward received on leaving step t (Sutton & Barto's R_{t+1}). The episode ends after its last
 * step in a terminal state of value 0.
 */
export type TdEpisode =
  | { readonly features: Matrix; readonly rewards: ArrayLike<number> }
  | { readonly states: ArrayLike<number>; readonly rewards: ArrayLike<number> };

/** Options of {@link tdLambda}. */
export interface TdLambdaOptions {
  /** Step size α > 0. @defaultValue 0.1 */
  alpha?: number;
  /** Discount γ per step, in [0, 1]. @defaultValue 1 */
  gamma?: number;
  /** Trace decay λ in [0, 1] (0 = TD(0)). @defaultValue 0 */
  lambda?: number;
  /** Number of states for tabular episodes (`states`); ignored for feature episodes. @defaultValue 0 */
  nStates?: number;
  /** Initial weights (length nFeatures); null = zeros. Not modified. @defaultValue null */
  initialWeights?: Float64Array | null;
}

const DEFAULTS = Object.freeze({ alpha: 0.1, gamma: 1, lambda: 0, nStates: 0, initialWeights: null as Float64Array | null });

/** Result of {@link tdLambda}. */
export interface TdLambdaResult {
  /** Weights after the last episode (= state values for tabular episodes). */
  readonly weights: Float64Array;
  /** δ_t of every step, episodes concatenated (episode e: offsets[e] … offsets[e + 1] − 1). */
  readonly delta: Float64Array;
  /** V(S_t) = w·x_t when δ_t was computed (before that step's update). */
  readonly value: Float64Array;
  readonly offsets: Int32Array;
}

/**
 * Online semi-gradient TD(λ) with accumulating eligibility traces on a linear value function
 * V(s) = wᵀx(s), over a sequence of episodes.
 *
 * For each step t: δ_t = R_{t+1} + γ·V(S_{t+1}) − V(S_t) (V = 0 after the last step),
 * z ← γλz + x(S_t), w ← w + α·δ_t·z. Traces reset to 0 at each episode start.
 *
 * @param episodes - Episodes in the order they are experienced.
 * @throws {TuningforkError} TF_BAD_OPTION (α ≤ 0, γ or λ outside [0, 1], a state index outside
 * 0 … nStates − 1, feature widths that differ between episodes), TF_SHAPE_MISMATCH (rewards and
 * steps of different lengths), TF_NON_FINITE (a NaN reward or feature, naming episode and step; or
 * finite inputs on which the recursion diverges until a value or weight overflows — α too large for
 * the features and traces — naming episode and step, `details.diverged: true`).
 *
 * @example
 * ```ts
 * // Random walk A–E (Sutton & Barto 2018, Example 6.2): states 0…4, start 2, reward 1 on the right.
 * const w = tdLambda(episodes, { nStates: 5, alpha: 0.02 }).weights; // ≈ 1/6 … 5/6
 * ```
 *
 * References
 * - Sutton, R. S. & Barto, A. G. (2018). Reinforcement Learning: An Introduction, 2nd ed.,
 *   ch. 6 and 12. MIT Press. ISBN 978-0-262-03924-6
 * - Sutton, R. S. (1988). Learning to predict by the methods of temporal differences. Machine
 *   Learning 3(1):9–44. doi:10.1007/BF00115009
 */
export function tdLambda(episodes: readonly TdEpisode[], options: TdLambdaOptions = {}): TdLambdaResult {
  const fn = 'tdLambda';
  const o = resolveOptions(fn, DEFAULTS, options);
  const alpha = checkRange(fn, 'alpha', o.alpha, Number.MIN_VALUE, Number.MAX_VALUE);
  const gamma = checkRange(fn, 'gamma', o.gamma, 0, 1);
  const lambda = checkRange(fn, 'lambda', o.lambda, 0, 1);
  const nStates = checkInteger(fn, 'nStates', o.nStates, 0, 1e8);
  if (!Array.isArray(episodes)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: episodes must be an array.`, { fn });
  let width = -1;
  let total = 0;
  for (const [e, ep] of episodes.entries()) {
    const steps = 'features' in ep ? ep.features.rows : ep.states.length;
    const w = 'features' in ep ? ep.features.cols : nStates;
    if ('states' in ep && nStates < 1) throw new TuningforkError('TF_BAD_OPTION', `${fn}: episode ${e} gives state indices; pass nStates ≥ 1.`, { fn, option: 'nStates' });
    if ('features' in ep && ep.features.data.length !== ep.features.rows * ep.features.cols) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: episode ${e}: features data length ${ep.features.data.length} ≠ rows × cols.`, { fn, episode: e });
    }
    if (width >= 0 && w !== width) throw new TuningforkError('TF_BAD_OPTION', `${fn}: episode ${e} has ${w} features but earlier episodes have ${width}.`, { fn, episode: e });
    width = w;
    if (ep.rewards.length !== steps) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: episode ${e} has ${steps} steps but ${ep.rewards.length} rewards.`, { fn, episode: e });
    }
    total += steps;
  }
  const nf = Math.max(width, 0);
  const w = new Float64Array(nf);
  if (o.initialWeights !== null) {
    if (!(o.initialWeights instanceof Float64Array) || o.initialWeights.length !== nf) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: initialWeights must be a Float64Array of length ${nf}.`, { fn, option: 'initialWeights' });
    }
    w.set(o.initialWeights);
  }
  const z = new Float64Array(nf);
  const delta = new Float64Array(total);
  const value = new Float64Array(total);
  const offsets = new Int32Array(episodes.length + 1);
  let pos = 0;
  for (const [e, ep] of episodes.entries()) {
    offsets[e] = pos;
    z.fill(0);
    const tabular = 'states' in ep;
    const steps = tabular ? ep.states.length : ep.features.rows;
    const stateAt = (t: number): number => {
      const s = (ep as { states: ArrayLike<number> }).states[t]!;
      if (!Number.isInteger(s) || s < 0 || s >= nf) {
        throw new TuningforkError('TF_BAD_OPTION', `${fn}: episode ${e}, step ${t}: state ${formatValue(s)} is outside 0…${nf - 1}.`, { fn, episode: e, step: t });
      }
      return s;
    };
    const valueAt = (t: number): number => {
      if (t >= steps) return 0;
      if (tabular) return w[stateAt(t)]!;
      const x = ep.features.data;
      let v = 0;
      for (let i = 0, o2 = t * nf; i < nf; i++) v += w[i]! * x[o2 + i]!;
      return v;
    };
    let vNow = valueAt(0);
    for (let t = 0; t < steps; t++, pos++) {
      const r = ep.rewards[t]!;
      const vNext = valueAt(t + 1);
      const d = r + gamma * vNext - vNow;
      if (!Number.isFinite(d)) {
        if (Number.isFinite(r) && rowFinite(ep, t, nf) && rowFinite(ep, t + 1, nf)) throw diverged(fn, e, t, alpha, `δ is ${d}`);
        throw new TuningforkError('TF_NON_FINITE', `${fn}: episode ${e}, step ${t}: δ is ${d} (reward ${formatValue(r)}); rewards and features must be finite.`, { fn, episode: e, step: t });
      }
      delta[pos] = d;
      value[pos] = vNow;
      const gl = gamma * lambda;
      for (let i = 0; i < nf; i++) z[i] = gl * z[i]!;
      if (tabular) {
        const s = stateAt(t);
        z[s] = z[s]! + 1;
      } else {
        const x = ep.features.data;
        for (let i = 0, o2 = t * nf; i < nf; i++) z[i] = z[i]! + x[o2 + i]!;
      }
      let finite = true;
      for (let i = 0; i < nf; i++) {
        w[i] = w[i]! + alpha * d * z[i]!;
        if (!Number.isFinite(w[i]!)) finite = false;
      }
      // The last step's update is not followed by another δ, so an overflow there must be caught here.
      if (!finite) throw diverged(fn, e, t, alpha, 'a weight overflowed');
      vNow = valueAt(t + 1);
    }
  }
  offsets[episodes.length] = pos;
  return { weights: w, delta, value, offsets };
}

/** True when the features of step t of a feature episode are finite (tabular steps and steps past the end: true). */
function rowFinite(ep: TdEpisode, t: number, nf: number): boolean {
  if (!('features' in ep) || t >= ep.features.rows) return true;
  const x = ep.features.data;
  for (let i = t * nf; i < (t + 1) * nf; i++) if (!Number.isFinite(x[i]!)) return false;
  return true;
}

/** TF_NON_FINITE for a run that overflowed on finite inputs (step size too large). */
function diverged(fn: string, e: number, t: number, alpha: number, what: string): TuningforkError {
  return new TuningforkError(
    'TF_NON_FINITE',
    `${fn}: episode ${e}, step ${t}: ${what}: with finite rewards and features, TD(λ) diverged — alpha ${formatValue(alpha)} is too large for these features and traces. Lower alpha (or lambda), or rescale the features.`,
    { fn, episode: e, step: t, diverged: true },
  );
}

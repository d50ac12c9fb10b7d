import { TuningforkError, formatValue } from '@tuningfork/core';

/**
 * Names of the free parameters of the choice models (natural scale):
 * - `alpha` learning rate of Q (0–1); `alphaPos` / `alphaNeg` separate rates for δ ≥ 0 / δ < 0;
 * - `beta` inverse temperature on Q (≥ 0); `forget` decay of unchosen Q toward Q0 = 0 per trial (0–1);
 * - `alphaC` choice-kernel (habit) learning rate (0–1); `betaC` choice-kernel weight (any sign;
 *   negative favours alternation);
 * - `epsilon` choice noise of win-stay/lose-shift (0–1); `bias` probability of option 1 in the
 *   two-option bias model (0–1).
 */
export type ChoiceParamName = 'alpha' | 'alphaPos' | 'alphaNeg' | 'beta' | 'forget' | 'alphaC' | 'betaC' | 'epsilon' | 'bias';

/** Preset model names (Wilson & Collins 2019 numbering in brackets, from memory). */
export type ChoiceModelName =
  | 'random' // uniform choice, no parameter [1, without bias]
  | 'bias' // two options: P(option 1) = bias [1]
  | 'wsls' // noisy win-stay/lose-shift, epsilon [2]: P(a) = ε/K + (1 − ε)·target(a), stay after reward > 0, else shift uniformly
  | 'q' // Q-learning + softmax: alpha, beta [3]
  | 'q-dual' // alphaPos, alphaNeg, beta
  | 'q-forget' // alpha, beta, forget
  | 'ck' // choice kernel only: alphaC, betaC [4]
  | 'q-ck'; // combined: alpha, beta, alphaC, betaC [5]

/**
 * A softmax choice model assembled from parts. Choice follows P(a) ∝ exp(β·Q(a) + β_C·C(a)).
 * `value`: 'none' (no Q), 'single' (one α) or 'dual' (α+ for δ ≥ 0, α− for δ < 0);
 * `forgetting`: unchosen Q decays toward 0; `choiceKernel`: add the habit term β_C·C.
 */
export interface ChoiceModelSpec {
  readonly value: 'none' | 'single' | 'dual';
  readonly forgetting?: boolean;
  readonly choiceKernel?: boolean;
}

/** A model given by preset name, by parts, or as the `model` of a fit result. */
export type ChoiceModel = ChoiceModelName | ChoiceModelSpec | ModelStructure;

/** How a natural parameter maps to the unconstrained optimisation scale φ. */
export type ParamTransform = 'logit' | 'log' | 'neglog' | 'identity';

/** Resolved structure of a model (internal representation, also reported in results). */
export interface ModelStructure {
  /** Canonical name: a preset name, or e.g. 'q-dual-forget-ck' for a spec. */
  readonly name: string;
  readonly kind: 'softmax' | 'wsls' | 'bias' | 'random';
  readonly value: 'none' | 'single' | 'dual';
  readonly forgetting: boolean;
  readonly choiceKernel: boolean;
  readonly params: readonly ChoiceParamName[];
}

/** Admissible domain of each parameter (natural scale). */
export const PARAM_DOMAIN: Readonly<Record<ChoiceParamName, readonly [number, number]>> = Object.freeze({
  alpha: [0, 1],
  alphaPos: [0, 1],
  alphaNeg: [0, 1],
  beta: [0, Infinity],
  forget: [0, 1],
  alphaC: [0, 1],
  betaC: [-Infinity, Infinity],
  epsilon: [0, 1],
  bias: [0, 1],
});

/**
 * Default fitting bounds (natural scale): the domain, with β ∈ [0, 50] and β_C ∈ [−20, 20] so a
 * deterministic or perseverating chooser ends at a reported bound instead of diverging (common
 * practice: β ∈ [0, 20–50], INFERENCE.md §3.5). Pass `bounds: { beta: [0, Infinity] }` for the
 * log-transformed, upper-unbounded β.
 */
export const DEFAULT_BOUNDS: Readonly<Record<ChoiceParamName, readonly [number, number]>> = Object.freeze({
  alpha: [0, 1],
  alphaPos: [0, 1],
  alphaNeg: [0, 1],
  beta: [0, 50],
  forget: [0, 1],
  alphaC: [0, 1],
  betaC: [-20, 20],
  epsilon: [0, 1],
  bias: [0, 1],
});

/** Default ranges from which fitting starts are drawn (uniform; `beta` log-uniform). */
export const START_RANGES: Readonly<Record<ChoiceParamName, readonly [number, number]>> = Object.freeze({
  alpha: [0.05, 0.95],
  alphaPos: [0.05, 0.95],
  alphaNeg: [0.05, 0.95],
  beta: [0.5, 20],
  forget: [0.02, 0.5],
  alphaC: [0.05, 0.95],
  betaC: [-1, 4],
  epsilon: [0.02, 0.5],
  bias: [0.2, 0.8],
});

const PRESETS: Readonly<Record<ChoiceModelName, ModelStructure>> = Object.freeze({
  random: { name: 'random', kind: 'random', value: 'none', forgetting: false, choiceKernel: false, params: [] },
  bias: { name: 'bias', kind: 'bias', value: 'none', forgetting: false, choiceKernel: false, params: ['bias'] },
  wsls: { name: 'wsls', kind: 'wsls', value: 'none', forgetting: false, choiceKernel: false, params: ['epsilon'] },
  q: { name: 'q', kind: 'softmax', value: 'single', forgetting: false, choiceKernel: false, params: ['alpha', 'beta'] },
  'q-dual': { name: 'q-dual', kind: 'softmax', value: 'dual', forgetting: false, choiceKernel: false, params: ['alphaPos', 'alphaNeg', 'beta'] },
  'q-forget': { name: 'q-forget', kind: 'softmax', value: 'single', forgetting: true, choiceKernel: false, params: ['alpha', 'beta', 'forget'] },
  ck: { name: 'ck', kind: 'softmax', value: 'none', forgetting: false, choiceKernel: true, params: ['alphaC', 'betaC'] },
  'q-ck': { name: 'q-ck', kind: 'softmax', value: 'single', forgetting: false, choiceKernel: true, params: ['alpha', 'beta', 'alphaC', 'betaC'] },
});

/** Every preset name. */
export const CHOICE_MODEL_NAMES: readonly ChoiceModelName[] = Object.freeze(Object.keys(PRESETS) as ChoiceModelName[]);

/**
 * Resolve a model name or spec to its structure and parameter list (in the order used by every
 * estimate vector: value learning rates, beta, forget, alphaC, betaC).
 *
 * @throws {TuningforkError} TF_BAD_OPTION for an unknown name or a spec with nothing to fit.
 */
export function resolveModel(fn: string, model: unknown): ModelStructure {
  if (typeof model === 'string') {
    const preset = (PRESETS as Record<string, ModelStructure>)[model];
    if (!preset) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: model must be one of ${CHOICE_MODEL_NAMES.map((n) => `'${n}'`).join(', ')} or a spec { value, forgetting, choiceKernel }, got ${formatValue(model)}.`, { fn, option: 'model', value: model });
    }
    return preset;
  }
  if (typeof model !== 'object' || model === null || Array.isArray(model)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: model must be a preset name or a spec object, got ${formatValue(model)}.`, { fn, option: 'model' });
  }
  if ('kind' in model && 'name' in model && 'params' in model) {
    // A resolved structure (e.g. `fit.model`): resolve again from its parts.
    const st = model as ModelStructure;
    if (typeof st.name === 'string' && st.name in PRESETS) return resolveModel(fn, st.name);
    return resolveModel(fn, { value: st.value, forgetting: st.forgetting, choiceKernel: st.choiceKernel });
  }
  const spec = model as Record<string, unknown>;
  for (const key of Object.keys(spec)) {
    if (key !== 'value' && key !== 'forgetting' && key !== 'choiceKernel') {
      throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: unknown model spec key '${key}'. Known keys: value, forgetting, choiceKernel.`, { fn, option: `model.${key}` });
    }
  }
  const value = spec.value;
  if (value !== 'none' && value !== 'single' && value !== 'dual') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: model.value must be 'none', 'single' or 'dual', got ${formatValue(value)}.`, { fn, option: 'model.value', value });
  }
  const forgetting = spec.forgetting ?? false;
  const choiceKernel = spec.choiceKernel ?? false;
  if (typeof forgetting !== 'boolean' || typeof choiceKernel !== 'boolean') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: model.forgetting and model.choiceKernel must be true or false.`, { fn, option: 'model' });
  }
  if (value === 'none' && forgetting) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: model.forgetting needs a value component; set model.value to 'single' or 'dual'.`, { fn, option: 'model.forgetting' });
  }
  if (value === 'none' && !choiceKernel) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: a model spec with value 'none' and no choice kernel has nothing to fit; use model 'random'.`, { fn, option: 'model' });
  }
  const params: ChoiceParamName[] = [];
  if (value === 'single') params.push('alpha');
  if (value === 'dual') params.push('alphaPos', 'alphaNeg');
  if (value !== 'none') params.push('beta');
  if (forgetting) params.push('forget');
  if (choiceKernel) params.push('alphaC', 'betaC');
  const name = value === 'none' ? 'ck' : `q${value === 'dual' ? '-dual' : ''}${forgetting ? '-forget' : ''}${choiceKernel ? '-ck' : ''}`;
  return { name, kind: 'softmax', value, forgetting, choiceKernel, params };
}

/** Parameter vector of a model from a record, validated against the admissible domain (or `bounds`). */
export function paramVector(
  fn: string,
  m: ModelStructure,
  params: unknown,
  bounds?: Readonly<Partial<Record<ChoiceParamName, readonly [number, number]>>>,
): Float64Array {
  if (typeof params !== 'object' || params === null || Array.isArray(params)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: params must be an object { ${m.params.join(', ')} }, got ${formatValue(params)}.`, { fn, option: 'params' });
  }
  const rec = params as Record<string, unknown>;
  for (const key of Object.keys(rec)) {
    if (!(m.params as readonly string[]).includes(key)) {
      throw new TuningforkError('TF_UNKNOWN_OPTION', `${fn}: parameter '${key}' is not a parameter of model '${m.name}' (its parameters: ${m.params.join(', ') || 'none'}).`, { fn, option: `params.${key}` });
    }
  }
  const out = new Float64Array(m.params.length);
  m.params.forEach((name, i) => {
    const v = rec[name];
    const [lo, hi] = bounds?.[name] ?? PARAM_DOMAIN[name];
    if (typeof v !== 'number' || !Number.isFinite(v) || v < lo || v > hi) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: parameter ${name} of model '${m.name}' must be a finite number in [${lo}, ${hi}], got ${formatValue(v)}.`, { fn, option: `params.${name}`, value: v, bounds: [lo, hi] });
    }
    out[i] = v;
  });
  return out;
}

/** Record form of a parameter vector. */
export function paramRecord(m: ModelStructure, theta: ArrayLike<number>): Record<string, number> {
  const out: Record<string, number> = {};
  m.params.forEach((name, i) => {
    out[name] = theta[i]!;
  });
  return out;
}

/** Model/option-count compatibility. @throws TF_BAD_OPTION */
export function checkModelOptions(fn: string, m: ModelStructure, nOptions: number): void {
  if (m.kind === 'bias' && nOptions !== 2) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: model 'bias' is defined for two options, got nOptions = ${nOptions}; use a softmax model for more options.`, { fn, option: 'model', nOptions });
  }
}

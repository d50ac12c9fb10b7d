// Populations of simulated agents shared by the recovery scripts (recovery-study.ts,
// recovery-replicates.ts). A correlation across agents needs a spread of true parameters, so
// "at the simulator's default parameters" is read as populations centred on them.
import { SIMULATE_DEFAULTS } from '@tuningfork/simulate';
import { RECOVERY_RANGES } from '@tuningfork/learning';
import type { ChoiceParamName } from '@tuningfork/learning';

export const NAMES = ['alpha', 'beta', 'alphaC', 'betaC'] as const;
const D = SIMULATE_DEFAULTS;
export const DEF: Record<(typeof NAMES)[number], number> = { alpha: D.alpha, beta: D.beta, alphaC: D.alphaC, betaC: D.betaC };
export const logit = (x: number) => Math.log(x / (1 - x));
export const logistic = (x: number) => 1 / (1 + Math.exp(-x));
/** The width of RECOVERY_RANGES[name] on its unbounded scale (logit / log / linear), centred on c. */
function recentred(name: (typeof NAMES)[number], c: number): readonly [number, number] {
  const [lo, hi] = RECOVERY_RANGES[name];
  if (name === 'alpha' || name === 'alphaC') {
    const w = (logit(hi) - logit(lo)) / 2;
    return [logistic(logit(c) - w), logistic(logit(c) + w)];
  }
  if (name === 'beta') {
    const w = Math.sqrt(hi / lo);
    return [c / w, c * w];
  }
  return [c - (hi - lo) / 2, c + (hi - lo) / 2];
}
export type Population = { key: string; label: string; why: string; ranges: Partial<Record<ChoiceParamName, readonly [number, number]>>; drawScale: 'natural' | 'unbounded' };
export const POPULATIONS: Population[] = [
  {
    key: 'wide',
    label: 'wide: the library default ranges (RECOVERY_RANGES), uniform',
    why: 'the plausible range the library uses by default (Wilson & Collins 2019, rule 5); centred on α 0.5, β 5.5, not on the simulator defaults',
    ranges: {},
    drawScale: 'natural',
  },
  {
    key: 'centred',
    label: 'centred: the same spread, centred on the simulator defaults',
    why: `RECOVERY_RANGES' width on each parameter's unbounded scale (logit α and α_C ± 2.20, log β × ÷ √10, β_C ± 1.25), centred on the simulator defaults α ${DEF.alpha}, β ${DEF.beta}, α_C ${DEF.alphaC}, β_C ${DEF.betaC}; uniform on that scale (drawScale 'unbounded')`,
    ranges: Object.fromEntries(NAMES.map((n) => [n, recentred(n, DEF[n])])),
    drawScale: 'unbounded',
  },
  {
    key: 'narrow',
    label: 'narrow: the simulator defaults ± 50 %, uniform',
    why: 'a tight population (every parameter within a factor 1.5 of the default): the hardest case for a correlation',
    ranges: Object.fromEntries(NAMES.map((n) => [n, [DEF[n] * 0.5, DEF[n] * 1.5] as const])),
    drawScale: 'natural',
  },
];

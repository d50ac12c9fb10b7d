import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { WEAK_PRIORS } from '../src/index.js';
import type { ParamPrior } from '../src/index.js';
import { logGamma, logPriorDensity } from '../src/internal/priors.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
// Reference: scipy.stats.{beta,gamma,norm}.logpdf and scipy.special.gammaln; see fixtures/scipy/gen_map_fixture.py.
const map = loadFixture('scipy/map_fixture.json', fixtures);

describe('WEAK_PRIORS', () => {
  // Reference: Daw (2011) — Beta(1.1, 1.1) on learning rates, Gamma(shape 1.2, scale 5) on inverse temperatures.
  it('WEAK_PRIORS are Beta(1.1, 1.1) on rates, Gamma(1.2, scale 5) on β and Normal(0, 5) on β_C', () => {
    for (const p of ['alpha', 'alphaPos', 'alphaNeg', 'alphaC', 'forget', 'epsilon', 'bias'] as const) expect(WEAK_PRIORS[p]).toEqual({ dist: 'beta', a: 1.1, b: 1.1 });
    expect(WEAK_PRIORS.beta).toEqual({ dist: 'gamma', shape: 1.2, scale: 5 });
    expect(WEAK_PRIORS.betaC).toEqual({ dist: 'normal', mean: 0, sd: 5 });
    expect(Object.isFrozen(WEAK_PRIORS)).toBe(true);
  });

  // Log densities are closed forms plus ln Γ (Lanczos, ~1e-15 relative): rtol 1e-12 leaves room for the log/log1p terms.
  it('prior log densities equal scipy.stats logpdf (beta, gamma with scale, normal), including a = 1 and shape = 1 at 0', () => {
    const rows = map.densities as { prior: ParamPrior; x: number; logpdf: number }[];
    expect(rows.length).toBeGreaterThanOrEqual(20);
    for (const r of rows) expectAllClose(logPriorDensity(r.prior, r.x), r.logpdf, { rtol: 1e-12, atol: 1e-13, source: map.source, label: `${JSON.stringify(r.prior)} at ${r.x}` });
  });

  it('ln Γ equals scipy.special.gammaln from 0.1 to 171.5', () => {
    for (const g of map.gammaln as { x: number; value: number }[]) expectAllClose(logGamma(g.x), g.value, { rtol: 1e-13, atol: 1e-14, source: map.source, label: `lnΓ(${g.x})` });
  });
});

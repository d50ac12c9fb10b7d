import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { choiceLogLikelihood, fitChoicePopulation, reversalSchedule, simulateChoices } from '../src/index.js';
import type { ChoiceSession } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
// Reference: scipy.optimize reference, script gen_population_em.py (fixtures/scipy/): an independent EM with
// Laplace posteriors (Huys et al. 2011, Methods) on 6 agents × 400 trials of q-ck, stopped at a prior change of
// 1e-10, started like ours from weakly informative MAP fits and reached again from a wide initial prior.
const ref = loadFixture('scipy/population_em.json', fixtures);
const sessions: ChoiceSession[] = (ref.sessions as { choice: Float64Array; reward: Float64Array }[]).map((s) => ({ choice: s.choice, reward: s.reward }));
const flat = (rows: Float64Array[]) => Float64Array.from(rows.flatMap((r) => Array.from(r)));

/** Small simulated population (q-ck, reversal task) for the property tests. */
function population(nAgents: number, nTrials: number, seed: number): ChoiceSession[] {
  return Array.from({ length: nAgents }, (_, i) => {
    const { schedule } = reversalSchedule({ nTrials, seed: seed + i });
    // every parameter differs between agents (a parameter shared by all drives its population variance to the floor)
    const params = { alpha: 0.2 + (0.6 * i) / nAgents, beta: 2 + (5 * ((i * 7) % nAgents)) / nAgents, alphaC: 0.15 + (0.6 * ((i * 5) % nAgents)) / nAgents, betaC: 0.5 + (2.5 * ((i * 3) % nAgents)) / nAgents };
    return simulateChoices(schedule, params, { model: 'q-ck', seed: seed + 100 + i });
  });
}

describe('fitChoicePopulation', () => {
  it('fitChoicePopulation reproduces the scipy EM: population mean and variance, per-agent MAPs, posterior SDs, marginal likelihood, iBIC', () => {
    // Tight tolerances so our fixed point is the reference's: EM converges linearly (rate ≈ 0.8 here), so a
    // last change of 1e-8 leaves the prior within ~5e-8 of the fixed point.
    const fit = fitChoicePopulation(sessions, { model: 'q-ck', starts: 10, seed: 1, tolerance: 1e-8, likelihoodTolerance: 1e-6, gradientTolerance: 1e-8 });
    const em = ref.em;
    expect(fit.converged).toBe(true);
    expect(fit.prior.transforms).toEqual(['logit', 'logit', 'logit', 'logit']); // default bounds, as in the script
    // Same initialisation as the script (weakly informative MAP fits); scipy's used finite-difference gradients,
    // which leave the modes ~1e-6 off, so 1e-4. EM has more than one fixed point here (see the script), so
    // starting from the same prior is what makes the comparison meaningful.
    expectAllClose(fit.initialPrior.mean, em.initialMean, { rtol: 1e-4, atol: 1e-5, source: ref.source, label: 'initial prior mean' });
    expectAllClose(fit.initialPrior.variance, em.initialVariance, { rtol: 1e-4, atol: 1e-6, source: ref.source, label: 'initial prior variance' });
    // Both sides differentiate the exact gradient with the same step (1e-5): the Hessians agree to ~1e-7
    // relative, the M-step variances (φ̂ spread + H⁻¹ diagonal) to ~1e-6; 2e-5 leaves headroom for the
    // EM stopping distance and still catches a wrong M-step (e.g. a missing Σ term changes σ² by ≥ 10 %).
    expectAllClose(fit.prior.mean, em.mean, { rtol: 2e-5, atol: 2e-6, source: ref.source, label: 'population mean μ (transformed scale)' });
    expectAllClose(fit.prior.variance, em.variance, { rtol: 2e-5, atol: 1e-7, source: ref.source, label: 'population variance σ² (transformed scale)' });
    expectAllClose(fit.estimatesTransformed.data, flat(em.phi), { rtol: 2e-5, atol: 2e-6, source: ref.source, label: 'per-agent posterior modes φ̂' });
    expectAllClose(fit.estimates.data, flat(em.estimates), { rtol: 2e-5, atol: 1e-6, source: ref.source, label: 'per-agent MAPs, natural scale' });
    // Posterior SDs √(H⁻¹)_jj: finite-difference Hessians on both sides, ~1e-6 apart.
    expectAllClose(fit.seTransformed.data, flat(em.seTransformed), { rtol: 1e-4, source: ref.source, label: 'posterior SD, transformed scale' });
    expectAllClose(fit.se.data, flat(em.seNatural), { rtol: 1e-4, source: ref.source, label: 'posterior SD, natural scale (delta method)' });
    // Log-likelihoods and Laplace marginals: sums of ~400 terms, so absolute tolerances of 1e-5.
    expectAllClose(fit.logLikelihood, em.logLikelihood, { rtol: 0, atol: 1e-5, source: ref.source, label: 'per-agent log-likelihood at the MAP' });
    expectAllClose(fit.logMarginal, em.logMarginal, { rtol: 0, atol: 1e-5, source: ref.source, label: 'per-agent Laplace log marginal likelihood' });
    expectAllClose(fit.logMarginalLikelihood, em.logMarginalLikelihood, { rtol: 0, atol: 5e-5, source: ref.source, label: 'Σ log marginal likelihood' });
    expectAllClose(fit.ibic, em.ibic, { rtol: 0, atol: 1e-4, source: ref.source, label: 'iBIC' });
    expect(fit.nChoices).toBe(2400);
    expect(fit.nAgents).toBe(6);
    expect(fit.priorSource).toBe('estimated');
    expect(fit.prior.atFloor).toEqual(new Uint8Array(4));
  });

  it('fitChoicePopulation with a given prior returns the per-agent MAPs under it (scipy reference)', () => {
    const g = ref.given;
    const names = ['alpha', 'beta', 'alphaC', 'betaC'] as const;
    const prior = { mean: Object.fromEntries(names.map((n, j) => [n, g.mean[j]])), variance: Object.fromEntries(names.map((n, j) => [n, g.variance[j]])) };
    const fit = fitChoicePopulation(sessions, { prior, starts: 10, seed: 3, gradientTolerance: 1e-8 });
    expect(fit.priorSource).toBe('given');
    expect(fit.iterations).toBe(0);
    expect(Array.from(fit.prior.mean)).toEqual(Array.from(g.mean));
    // One E-step each side: modes to the optimisers' precision (|∇| ≤ 1e-8 → ~1e-8 in φ), SDs to the
    // finite-difference Hessians' (~1e-6), log marginals to 1e-6 (sums of 400 terms).
    expectAllClose(fit.estimatesTransformed.data, flat(g.phi), { rtol: 1e-6, atol: 1e-7, source: ref.source, label: 'MAP under the given prior' });
    expectAllClose(fit.seTransformed.data, flat(g.seTransformed), { rtol: 1e-4, source: ref.source, label: 'posterior SD' });
    expectAllClose(fit.logMarginal, g.logMarginal, { rtol: 0, atol: 1e-6, source: ref.source, label: 'Laplace log marginal likelihood' });
  });

  // (derived here) With a prior of variance σ² → 0 the posterior mode solves ∇NLL(φ) + (φ − μ)/σ² = 0, so
  // φ̂ − μ = −σ²(I + σ²H)⁻¹∇NLL(μ) + O(σ⁴|∇|²) ≈ −σ²·∇NLL(μ) to a relative error σ²‖H‖, and the posterior SD → σ
  // (H = H_NLL + 1/σ²). ∇NLL is taken
  // here by central differences of choiceLogLikelihood on the natural scale, θ = logistic(φ) (α, α_C), 50·logistic(φ)
  // (β) and −20 + 40·logistic(φ) (β_C).
  it('fitChoicePopulation with a very tight given prior puts each agent at the prior mean shifted by −σ²·∇NLL', () => {
    const data = population(3, 120, 40);
    const logistic = (x: number) => 1 / (1 + Math.exp(-x));
    const natural = (phi: readonly number[]) => ({ alpha: logistic(phi[0]!), beta: 50 * logistic(phi[1]!), alphaC: logistic(phi[2]!), betaC: -20 + 40 * logistic(phi[3]!) });
    const nll = (d: ChoiceSession, phi: readonly number[]) => choiceLogLikelihood(d, natural(phi), { model: 'q-ck' }).nll;
    fc.assert(
      fc.property(fc.double({ min: -1.5, max: 1.5, noNaN: true }), fc.double({ min: -3, max: -1, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: 0, max: 0.15, noNaN: true }), (a, b, c, e) => {
        const mu = [a, b, c, e];
        const s2 = 1e-7;
        const prior = { mean: { alpha: a, beta: b, alphaC: c, betaC: e }, variance: { alpha: s2, beta: s2, alphaC: s2, betaC: s2 } };
        const fit = fitChoicePopulation(data, { prior, starts: 1, seed: 1, gradientTolerance: 1e-9 });
        data.forEach((d, i) => {
          const grad = mu.map((_, j) => {
            const h = 1e-5;
            const up = mu.map((v, l) => (l === j ? v + h : v));
            const dn = mu.map((v, l) => (l === j ? v - h : v));
            return (nll(d, up) - nll(d, dn)) / (2 * h);
          });
          const expected = grad.map((gj) => -s2 * gj);
          const shift = mu.map((v, j) => fit.estimatesTransformed.data[i * 4 + j]! - v);
          // NLL curvatures on φ are ≤ ~1e4 here, so σ²‖H‖ ≤ 1e-3: 1 % of the largest shift is headroom that still
          // catches a wrong scale (σ for σ²) or sign.
          const scale = Math.max(...expected.map(Math.abs));
          expectAllClose(shift, expected, { rtol: 0, atol: 1e-2 * scale, label: `agent ${i}: φ̂ − μ = −σ²∇NLL(μ)` });
          // SD ≈ (1/σ² + H_jj)^(−1/2) ≈ σ(1 − σ²H_jj/2): within 1e-3 relative for curvatures H_jj ≤ 2·10⁴.
          expectAllClose(fit.seTransformed.data.subarray(i * 4, i * 4 + 4), [1, 1, 1, 1].map(() => Math.sqrt(s2)), { rtol: 1e-3, label: 'posterior SD → σ' });
        });
      }),
      { seed: 17, numRuns: 6 },
    );
  });

  it('fitChoicePopulation reports per-agent estimates that are the MAPs under its own fitted prior', () => {
    const data = population(8, 200, 7);
    const fit = fitChoicePopulation(data, { starts: 4, seed: 2 });
    const names = fit.paramNames;
    const prior = { mean: Object.fromEntries(names.map((n, j) => [n, fit.prior.mean[j]!])), variance: Object.fromEntries(names.map((n, j) => [n, fit.prior.variance[j]!])) };
    const again = fitChoicePopulation(data, { prior, starts: 4, seed: 2 });
    // Both are posterior modes of the same objective, each found to |∇| ≤ 1e-6 (φ within ~1e-6/curvature).
    expectAllClose(again.estimatesTransformed.data, fit.estimatesTransformed.data, { rtol: 0, atol: 1e-5, label: 'modes under the reported prior' });
    // log det of two finite-difference Hessians at modes ~1e-6 apart: ~1e-7.
    expectAllClose(again.logMarginalLikelihood, fit.logMarginalLikelihood, { rtol: 0, atol: 1e-6, label: 'same marginal likelihood' });
  });

  // Reference (textbook closed forms): for φ ~ N(μ, σ²), θ = φ has mean μ and SD σ; θ = e^φ (lognormal) has median
  // e^μ, mean e^(μ+σ²/2) and SD e^(μ+σ²/2)·√(e^(σ²) − 1) (e.g. Johnson, Kotz & Balakrishnan 1994, Continuous
  // Univariate Distributions vol. 1, ch. 14); a logit-normal rate has median logistic(μ) and 95 % range
  // logistic(μ ± 1.959964σ).
  it('fitChoicePopulation summarises the prior on the natural scale (lognormal and normal closed forms)', () => {
    const data = population(2, 60, 3);
    const prior = { mean: { alpha: 0.4, beta: 1.2, alphaC: -0.5, betaC: 1.5 }, variance: { alpha: 0.8, beta: 0.25, alphaC: 1.1, betaC: 0.36 } };
    const fit = fitChoicePopulation(data, { prior, starts: 1, bounds: { beta: [0, Infinity], betaC: [-Infinity, Infinity] } });
    expect(fit.prior.transforms).toEqual(['logit', 'log', 'logit', 'identity']);
    const logistic = (x: number) => 1 / (1 + Math.exp(-x));
    const z = 1.959963984540054;
    // Trapezoid rule with step 0.02 on [−8, 8] for a Gaussian-weighted smooth integrand: error far below 1e-10.
    expectAllClose([fit.prior.median[1]!, fit.prior.naturalMean[1]!, fit.prior.naturalSd[1]!], [Math.exp(1.2), Math.exp(1.325), Math.exp(1.325) * Math.sqrt(Math.exp(0.25) - 1)], { rtol: 1e-10, label: 'lognormal β' });
    expectAllClose([fit.prior.median[3]!, fit.prior.naturalMean[3]!, fit.prior.naturalSd[3]!], [1.5, 1.5, 0.6], { rtol: 1e-10, label: 'normal β_C' });
    expectAllClose([fit.prior.median[0]!, fit.prior.lower[0]!, fit.prior.upper[0]!], [logistic(0.4), logistic(0.4 - z * Math.sqrt(0.8)), logistic(0.4 + z * Math.sqrt(0.8))], { rtol: 1e-14, label: 'logit-normal α quantiles' });
  });

  it('fitChoicePopulation converges with 12 agents and flags an EM stopped by maxIterations', () => {
    const data = population(12, 300, 11);
    const fit = fitChoicePopulation(data, { starts: 3, seed: 4 });
    expect(fit.converged).toBe(true);
    expect(fit.iterations).toBeLessThan(200);
    expect(fit.trace.change[fit.iterations - 1]!).toBeLessThanOrEqual(1e-4);
    expect(fit.warnings.map((w) => w.code)).not.toContain('em-not-converged');
    const cut = fitChoicePopulation(data, { starts: 3, seed: 4, maxIterations: 2 });
    expect(cut.converged).toBe(false);
    expect(cut.iterations).toBe(2);
    expect(cut.warnings.map((w) => w.code)).toContain('em-not-converged');
  });

  it('fitChoicePopulation is bit-identical for the same seed and reports it', () => {
    const data = population(4, 150, 21);
    const a = fitChoicePopulation(data, { starts: 3, seed: 9, maxIterations: 15 });
    const b = fitChoicePopulation(data, { starts: 3, seed: 9, maxIterations: 15 });
    expect(Array.from(a.estimates.data)).toEqual(Array.from(b.estimates.data));
    expect(Array.from(a.prior.mean)).toEqual(Array.from(b.prior.mean));
    expect(Array.from(a.prior.variance)).toEqual(Array.from(b.prior.variance));
    expect(a.ibic).toBe(b.ibic);
    expect(a.seed).toBe(9);
  });

  it('fitChoicePopulation rejects too few agents, mismatched option counts and bad sessions, naming the session', () => {
    const data = population(3, 40, 5);
    expect(() => fitChoicePopulation([])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => fitChoicePopulation([data[0]!])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => fitChoicePopulation(data[0]! as never)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    const three = { ...data[2]!, nOptions: 3 };
    expect(() => fitChoicePopulation([data[0]!, data[1]!, three])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH', details: expect.objectContaining({ session: 2 }) }));
    const badChoice = { choice: Int32Array.from(data[1]!.choice, (c, t) => (t === 5 ? 4 : c)), reward: data[1]!.reward };
    expect(() => fitChoicePopulation([data[0]!, badChoice, data[2]!])).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE', details: expect.objectContaining({ session: 1, row: 5 }) }));
    expect(() => fitChoicePopulation([data[0]!, [data[1]!, { choice: [0], reward: [1] }]])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES', details: expect.objectContaining({ session: 1, withinSession: 1 }) }));
    expect(() => fitChoicePopulation(data, { model: 'random' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoicePopulation(data, { varianceFloor: 0 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoicePopulation(data, { prior: { mean: { alpha: 0 }, variance: {} } as never })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoicePopulation(data, { model: 'q', prior: { mean: { alpha: 0, beta: 0, gamma: 1 }, variance: { alpha: 1, beta: 1 } } as never })).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
    expect(() => fitChoicePopulation(data, { model: 'q', prior: { mean: { alpha: 0, beta: 0 }, variance: { alpha: 1, beta: -1 } } })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoicePopulation(data, { iterations: 3 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });
});

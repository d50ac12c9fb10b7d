import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { WEAK_PRIORS, fitChoiceModel, fitEachSession } from '../src/index.js';
import type { ChoicePriors } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
// Reference: scipy 1.17 BFGS on (logit α, log β), 50 starts; see fixtures/scipy/gen_mle_fixture.py.
// Same numbers as INFERENCE.md §3.8 "MLE fixture".
const mle = loadFixture('scipy/mle_fixture.json', fixtures);
const data = { choice: mle.choices as Float64Array, reward: mle.rewards as Float64Array };
// Reference: scipy 1.17 BFGS on the negative log posterior (NLL − Σ stats.<dist>.logpdf), 30 starts;
// see fixtures/scipy/gen_map_fixture.py.
const map = loadFixture('scipy/map_fixture.json', fixtures);
type MapCase = { model: string; priors: ChoicePriors; estimates: Float64Array; objective: number; nll: number; logPrior: number; se: Float64Array; aic: number; bic: number; nAtBest: number };
const mapCases = map.cases as Record<string, MapCase>;
const trials300 = { choice: map.trials300.choices as Float64Array, reward: map.trials300.rewards as Float64Array };

describe('fitChoiceModel', () => {
  it('fitChoiceModel reproduces the frozen scipy BFGS fit of INFERENCE.md §3.8 (α̂, β̂, NLL, SE, AIC, BIC)', () => {
    const fit = fitChoiceModel(data, { model: 'q', starts: 20, seed: 1 });
    // Both optimisers stop at |∇| ≲ 1e-8: the NLL agrees to ~1e-12, the estimates (flat valley) to ~1e-7.
    expectAllClose(fit.nll, mle.nll, { rtol: 1e-10, source: mle.source, label: 'NLL' });
    expectAllClose(fit.estimates, [mle.alpha, mle.beta], { rtol: 1e-5, source: mle.source, label: 'α̂, β̂' });
    expectAllClose([fit.params.alpha!, fit.params.beta!], [0.586408, 3.048885], { atol: 5e-7, rtol: 0, label: 'INFERENCE.md §3.8 digits' });
    // Finite-difference Hessians (scipy: NLL second differences; ours: gradient differences + delta
    // method) agree to ~1e-4 relative (INFERENCE.md: "delta method agrees to 1e-4").
    expectAllClose(fit.se, mle.seNatural, { rtol: 2e-4, source: mle.source, label: 'SE natural scale' });
    expectAllClose(fit.seTransformed[0]!, mle.seTransformed[0], { rtol: 2e-4, source: mle.source, label: 'SE logit α' });
    expect(fit.transforms).toEqual(['logit', 'logit']); // default β ∈ [0, 50]; the MLE and natural SEs do not depend on it
    expectAllClose([fit.aic, fit.bic], [mle.aic, mle.bic], { rtol: 1e-10, source: mle.source, label: 'AIC, BIC' });
    expect(fit.hessian).toBe('positive-definite');
    expect(fit.n).toBe(60);
    expect(fit.k).toBe(2);
    // scipy: all 50 of 50 starts reach the best NLL (mle.nAtBest) — a single optimum.
    expect(mle.nAtBest).toBe(50);
    expect(fit.nAtBest).toBe(20);
    expect(fit.converged).toBe(true);
  });

  it('fitChoiceModel with log β (scipy\'s parameterisation) reaches the same optimum, SEs and L-BFGS-B values', () => {
    const fit = fitChoiceModel(data, { model: 'q', starts: 5, seed: 2, bounds: { beta: [0, Infinity] } });
    expect(fit.transforms).toEqual(['logit', 'log']);
    expectAllClose(fit.estimates, [mle.lbfgsb.alpha, mle.lbfgsb.beta], { rtol: 1e-5, source: mle.source });
    expectAllClose(fit.nll, mle.lbfgsb.nll, { rtol: 1e-10, source: mle.source });
    // log β is exactly scipy's scale: SE(log β) = SE(β)/β, compared directly (see the tolerance above).
    expectAllClose(fit.seTransformed, mle.seTransformed, { rtol: 2e-4, source: mle.source });
    expectAllClose(fit.se, mle.seNatural, { rtol: 2e-4, source: mle.source });
  });

  // Reference: INFERENCE.md §3.8 "random-choice NLL 60 ln 2 = 41.5888".
  it("fitChoiceModel with model 'random' gives NLL = n ln 2 and AIC = 2·NLL (k = 0)", () => {
    const fit = fitChoiceModel(data, { model: 'random' });
    expectAllClose(fit.nll, 60 * Math.LN2, { rtol: 1e-14 });
    expectAllClose(fit.nll, mle.randomNll, { rtol: 1e-14, source: mle.source });
    expect(fit.k).toBe(0);
    expect(fit.aic).toBe(2 * fit.nll);
  });

  // Reference: INFERENCE.md §3.8 "Hessian sanity (analytic): Bernoulli with k = 7, n = 20: SE(p̂) = 0.1066536 and
  // SE(logit p̂) = 0.4688072" — SE(p̂) = √(p̂(1 − p̂)/n), SE(logit p̂) = 1/√(n p̂(1 − p̂)).
  it("fitChoiceModel recovers the analytic Bernoulli standard errors with the two-option 'bias' model", () => {
    const choice = Array.from({ length: 20 }, (_, i) => (i % 3 === 0 && i < 21 ? 1 : 0));
    expect(choice.filter((c) => c === 1).length).toBe(7);
    const fit = fitChoiceModel({ choice, reward: new Array(20).fill(0) }, { model: 'bias', seed: 3 });
    // MLE p̂ = 7/20 exactly; the optimiser stops at |∇| ≤ 1e-6 → p̂ within ~1e-8.
    expectAllClose(fit.params.bias!, 0.35, { rtol: 1e-7 });
    // 7 digits given; the gradient-difference Hessian is accurate to ~1e-9.
    expectAllClose(fit.se[0]!, 0.1066536, { atol: 5e-8, rtol: 0, label: 'SE(p̂)' });
    expectAllClose(fit.seTransformed[0]!, 0.4688072, { atol: 5e-8, rtol: 0, label: 'SE(logit p̂)' });
  });

  // (derived here) Values reset per session, so the pooled likelihood of two copies of a session is
  // the square of one copy's: same MLE, NLL × 2. Without the reset the second copy would start from
  // learned values and the NLL would differ.
  it('fitChoiceModel pooled over sessions resets values per session (two copies: same MLE, twice the NLL)', () => {
    const one = fitChoiceModel(data, { model: 'q-ck', starts: 6, seed: 4 });
    const two = fitChoiceModel([data, data], { model: 'q-ck', starts: 6, seed: 4 });
    expectAllClose(two.nll, 2 * one.nll, { rtol: 1e-10 });
    expectAllClose(two.estimates, one.estimates, { rtol: 1e-4, atol: 1e-6 });
    expect(two.n).toBe(120);
    expect(two.nSessions).toBe(2);
    // SEs shrink by √2 with twice the (identical) data: Fisher information doubles.
    expectAllClose(two.se, one.se.map((s) => s / Math.SQRT2), { rtol: 1e-3 });
  });

  it('fitChoiceModel is deterministic for a seed and reports the seed', () => {
    const a = fitChoiceModel(data, { model: 'q-ck', starts: 4, seed: 9 });
    const b = fitChoiceModel(data, { model: 'q-ck', starts: 4, seed: 9 });
    expect(Array.from(a.estimates)).toEqual(Array.from(b.estimates));
    expect(Array.from(a.starts.initial.data)).toEqual(Array.from(b.starts.initial.data));
    expect(a.seed).toBe(9);
    const c = fitChoiceModel(data, { model: 'q-ck', starts: 4, seed: 10 });
    expect(Array.from(c.starts.initial.data)).not.toEqual(Array.from(a.starts.initial.data));
  });

  // (derived here) With every outcome 0, Q stays at 0 whatever α and β, so NLL = n ln 2 is flat: the
  // Hessian is zero — not positive definite — and α, β are not identifiable.
  it('fitChoiceModel reports a Hessian that is not positive definite when the likelihood is flat', () => {
    const fit = fitChoiceModel({ choice: [0, 1, 1, 0, 1, 0, 0, 1], reward: new Array(8).fill(0) }, { model: 'q', starts: 3 });
    expectAllClose(fit.nll, 8 * Math.LN2, { rtol: 1e-14 });
    expect(fit.hessian).toBe('not-positive-definite');
    expect(Number.isNaN(fit.se[0]!) && Number.isNaN(fit.se[1]!)).toBe(true);
    expect(fit.warnings.map((w) => w.code)).toContain('hessian-not-positive-definite');
  });

  // (derived here) Alternating choices while both options always pay: the option just rewarded (higher Q)
  // is always left, so the likelihood wants β < 0 and the MLE sits on the bound β = 0, where α has no
  // effect at all (flat in α). Expect β at its bound without an SE, and α reported as not identifiable.
  it('fitChoiceModel gives no standard error for a parameter at a bound and reports the rest as not identifiable', () => {
    const choice = Array.from({ length: 30 }, (_, i) => i % 2);
    const fit = fitChoiceModel({ choice, reward: new Array(30).fill(1) }, { model: 'q', starts: 3 });
    expect(Array.from(fit.atBound)).toEqual([0, 1]);
    expect(fit.params.beta!).toBeLessThan(1e-4);
    expectAllClose(fit.nll, 30 * Math.LN2, { rtol: 1e-6, label: 'β → 0: every choice at chance' });
    expect(Number.isNaN(fit.se[0]!) && Number.isNaN(fit.se[1]!)).toBe(true);
    expect(fit.hessian).toBe('not-positive-definite');
    expect(fit.warnings.map((w) => w.code)).toEqual(expect.arrayContaining(['parameter-at-bound', 'hessian-not-positive-definite']));
  });

  // (derived here) Always choosing the option that always pays: after trial 1 (P = ½) every choice has
  // P → 1 as β grows, so the NLL falls to ln 2 on a plateau where β is not determined. The fit must
  // say so (warning) and give no usable SE for β (NaN, or wider than its bounded range [0, 50]).
  it('fitChoiceModel flags a deterministic chooser (β on a plateau) instead of reporting a precise β', () => {
    const fit = fitChoiceModel({ choice: new Array(30).fill(0), reward: new Array(30).fill(1) }, { model: 'q', starts: 3 });
    expectAllClose(fit.nll, Math.LN2, { rtol: 1e-6 });
    expect(fit.warnings.map((w) => w.code)).toEqual(expect.arrayContaining([expect.stringMatching(/weakly-identified|parameter-at-bound|hessian-not-positive-definite/)]));
    expect(fit.se[1]! < 50).toBe(false);
  });

  it('fitChoiceModel rejects too few choices for the parameters and a −∞ likelihood from every start', () => {
    expect(() => fitChoiceModel({ choice: [0, 1, 0], reward: [1, 0, 1] }, { model: 'q-ck' })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    // reward 1e308 with α ≥ 0.9, β ≥ 10: β·Q overflows from trial 1 on at every start.
    expect(() => fitChoiceModel({ choice: [0, 1, 0, 1], reward: [1e308, 1, 0, 1] }, { model: 'q', starts: 3, startRanges: { alpha: [0.9, 0.95], beta: [10, 20] } })).toThrow(
      expect.objectContaining({ code: 'TF_BAD_LIKELIHOOD', details: expect.objectContaining({ trial: 1 }) }),
    );
  });

  it('fitChoiceModel rejects bounds outside a parameter domain, unknown models and unknown options', () => {
    expect(() => fitChoiceModel(data, { model: 'q', bounds: { alpha: [0, 2] } })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoiceModel(data, { model: 'q', startRanges: { beta: [30, 40] }, bounds: { beta: [0, 20] } })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoiceModel(data, { model: 'sarsa' as never })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => fitChoiceModel(data, { stars: 3 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });
  // Reference: scipy MAP fits (gen_map_fixture.py). Both optimisers stop at |∇| ≲ 1e-8 on a smooth objective: the
  // objective agrees to ~1e-12 relative (rtol 1e-10), estimates to ~1e-7 (rtol 1e-5, as for the ML fixture). scipy's SEs
  // come from second differences of the objective, ours from differences of the exact gradient + delta method: the
  // two finite-difference Hessians agree to ~1e-4 relative (rtol 2e-4, as for the ML fixture).
  for (const [name, starts] of [['q-weak', 10], ['q-ck-weak', 20], ['q-ck-custom', 20]] as const) {
    it(`fitChoiceModel with priors reproduces the scipy MAP fit '${name}' (estimates, objective, log prior, NLL, SE, AIC, BIC)`, () => {
      const c = mapCases[name]!;
      const d = name === 'q-weak' ? data : trials300;
      const priors = name.endsWith('weak') ? 'weakly-informative' : c.priors;
      const fit = fitChoiceModel(d, { model: c.model as 'q' | 'q-ck', priors, starts, seed: 1 });
      expect(fit.estimator).toBe('maximum-a-posteriori');
      expectAllClose(fit.objective, c.objective, { rtol: 1e-10, source: map.source, label: 'NLL − log prior' });
      expectAllClose(fit.estimates, c.estimates, { rtol: 1e-5, source: map.source, label: 'posterior mode' });
      expectAllClose(fit.logPrior, c.logPrior, { rtol: 1e-7, source: map.source, label: 'Σ log prior at the mode' });
      expectAllClose(fit.nll, c.nll, { rtol: 1e-8, source: map.source, label: 'NLL at the mode' });
      expectAllClose(fit.se, c.se, { rtol: 2e-4, source: map.source, label: 'posterior SD (Laplace)' });
      // AIC/BIC stay defined on the likelihood at the estimates (2k + 2·NLL, k·ln n + 2·NLL).
      expectAllClose([fit.aic, fit.bic], [c.aic, c.bic], { rtol: 1e-8, source: map.source, label: 'AIC, BIC' });
      expect(fit.priors).toEqual(fit.paramNames.map((p) => (c.priors as Record<string, unknown>)[p]));
      // scipy: every one of 30 starts reaches the best objective (a single mode).
      expect(c.nAtBest).toBe(30);
      expect(fit.nAtBest).toBe(starts);
      expect(fit.converged).toBe(true);
    });
  }

  it("fitChoiceModel with priors 'none' is plain maximum likelihood (log prior 0, objective = NLL)", () => {
    const fit = fitChoiceModel(data, { model: 'q', starts: 5, seed: 1, priors: 'none' });
    expect(fit.estimator).toBe('maximum-likelihood');
    expect(fit.priors).toEqual([null, null]);
    expect(fit.logPrior).toBe(0);
    expect(fit.objective).toBe(fit.nll);
    expectAllClose(fit.nll, mle.nll, { rtol: 1e-10, source: mle.source });
  });

  // Reference (textbook): Beta–Bernoulli conjugacy (Gelman et al. 2013, Bayesian Data Analysis, 3rd ed., §2.4). With k
  // ones in n trials and a Beta(a, b) prior the posterior is Beta(k + a, n − k + b), whose mode is
  // (k + a − 1)/(n + a + b − 2); the curvature of −log posterior there gives the Laplace SD √(p(1 − p)/(n + a + b − 2)).
  it("fitChoiceModel's MAP of the 'bias' model equals the Beta–Bernoulli posterior mode and its Laplace SD", () => {
    fc.assert(
      fc.property(fc.integer({ min: 8, max: 60 }), fc.double({ min: 0.1, max: 0.9, noNaN: true }), fc.double({ min: 1, max: 6, noNaN: true }), fc.double({ min: 1, max: 6, noNaN: true }), (n, frac, a, b) => {
        const k = Math.max(1, Math.min(n - 1, Math.round(frac * n)));
        const choice = Array.from({ length: n }, (_, i) => (i < k ? 1 : 0));
        const fit = fitChoiceModel({ choice, reward: new Array(n).fill(0) }, { model: 'bias', starts: 2, seed: 1, priors: { bias: { dist: 'beta', a, b } } });
        const mode = (k + a - 1) / (n + a + b - 2);
        // gradient tolerance 1e-6 on the logit scale → mode within ~1e-7; SE from a 1e-5-step difference → ~1e-6.
        expectAllClose(fit.params.bias!, mode, { rtol: 1e-6, atol: 1e-9, label: 'posterior mode' });
        expectAllClose(fit.se[0]!, Math.sqrt((mode * (1 - mode)) / (n + a + b - 2)), { rtol: 1e-5, label: 'Laplace SD' });
      }),
      { seed: 61, numRuns: 25 },
    );
  });

  // (derived here) The deterministic chooser of the plateau test above: with ML β runs to its bound; the Gamma(1.2, 5)
  // prior makes the posterior proper along β, so the MAP β is interior, finite and has an SE.
  it('fitChoiceModel with weakly informative priors keeps a deterministic chooser\'s β off its bound', () => {
    const det = { choice: new Array(30).fill(0), reward: new Array(30).fill(1) };
    const fit = fitChoiceModel(det, { model: 'q', starts: 3, priors: 'weakly-informative' });
    expect(Array.from(fit.atBound)).toEqual([0, 0]);
    expect(fit.params.beta!).toBeLessThan(50);
    expect(Number.isFinite(fit.se[1]!)).toBe(true);
    expect(fit.priors).toEqual([WEAK_PRIORS.alpha, WEAK_PRIORS.beta]);
  });

  it('fitChoiceModel rejects a prior of the wrong family, improper shapes, unknown keys and unknown parameters', () => {
    const bad = (priors: unknown, code: string) => expect(() => fitChoiceModel(data, { model: 'q', starts: 1, priors: priors as ChoicePriors })).toThrow(expect.objectContaining({ code }));
    bad({ alpha: { dist: 'gamma', shape: 2, scale: 1 } }, 'TF_BAD_OPTION'); // α ∈ [0, 1] takes a beta prior
    bad({ beta: { dist: 'beta', a: 2, b: 2 } }, 'TF_BAD_OPTION');
    bad({ alpha: { dist: 'beta', a: 0.5, b: 2 } }, 'TF_BAD_OPTION'); // a < 1: unbounded density at 0
    bad({ beta: { dist: 'gamma', shape: 2, scale: 0 } }, 'TF_BAD_OPTION');
    bad({ betaC: { dist: 'normal', mean: 0, sd: -1 } }, 'TF_BAD_OPTION');
    bad({ alpha: { dist: 'beta', a: 2, b: 2, c: 1 } }, 'TF_UNKNOWN_OPTION');
    bad({ gamma: { dist: 'beta', a: 2, b: 2 } }, 'TF_UNKNOWN_OPTION');
    bad('flat', 'TF_BAD_OPTION');
  });
});

describe('fitEachSession', () => {
  it('fitEachSession fits each session on its own, equal to fitChoiceModel per session', () => {
    const half = { choice: data.choice.subarray(0, 30), reward: data.reward.subarray(0, 30) };
    const rest = { choice: data.choice.subarray(30), reward: data.reward.subarray(30) };
    const fits = fitEachSession([half, rest], { model: 'q', starts: 4, seed: 5 });
    expect(fits).toHaveLength(2);
    expect(fits[1]!.nll).toBe(fitChoiceModel(rest, { model: 'q', starts: 4, seed: 5 }).nll);
    expect(() => fitEachSession([half, { choice: [0], reward: [1] }], { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES', details: expect.objectContaining({ session: 1 }) }));
  });
});

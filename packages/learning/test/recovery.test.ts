import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { WEAK_PRIORS, modelRecovery, parameterRecovery } from '../src/index.js';

describe('parameterRecovery', () => {
  // Wilson & Collins (2019, parameter-recovery section; from memory): with a few hundred trials and moderate β, Q-learning α
  // and β are recovered with true–fitted correlations near 1 (criterion 0.8 here; the ≥ 50-agent
  // study with the 0.9 criterion is scripts/recovery-study.ts).
  it('parameterRecovery recovers α and β of Q-learning agents (r ≥ 0.8 with 16 agents × 400 trials)', async () => {
    const res = await parameterRecovery({ model: 'q', nAgents: 16, nTrials: 400, starts: 4, seed: 5, ranges: { beta: [0.5, 5] } });
    expect(res.paramNames).toEqual(['alpha', 'beta']);
    expect(res.correlation[0]!).toBeGreaterThanOrEqual(0.8);
    expect(res.correlation[1]!).toBeGreaterThanOrEqual(0.8);
    expect(res.rankCorrelation[1]!).toBeGreaterThanOrEqual(0.8);
    // bias and RMSE follow their definitions
    const k = 2;
    let b = 0;
    for (let a = 0; a < 16; a++) b += res.fitted.data[a * k]! - res.truth.data[a * k]!;
    expectAllClose(res.bias[0]!, b / 16, { rtol: 1e-12 });
    expect(res.fittedCorrelation.data[1]).toBe(res.fittedCorrelation.data[2]); // symmetric α–β entry
    expect(res.seed).toBe(5);
  });

  it('parameterRecovery gives bit-identical results on 2 worker threads and on 1', async () => {
    const opts = { model: 'q', nAgents: 3, nTrials: 150, starts: 2, seed: 9 } as const;
    const serial = await parameterRecovery(opts);
    const parallel = await parameterRecovery({ ...opts, workers: 2 });
    expect(parallel.workersUsed).toBe(2); // the threads really ran (no fallback to this thread)
    expect(parallel.warnings.map((w) => w.code)).not.toContain('workers-unavailable');
    expect(Array.from(parallel.truth.data)).toEqual(Array.from(serial.truth.data));
    expect(Array.from(parallel.fitted.data)).toEqual(Array.from(serial.fitted.data));
    expect(Array.from(parallel.nll)).toEqual(Array.from(serial.nll));
  });

  // Reference (textbook): one-sample Kolmogorov–Smirnov test; the 5 % critical value of D for n = 200 is
  // 1.36/√n = 0.0962 (asymptotic, e.g. Massey 1951, J. Am. Stat. Assoc. 46:68–78, Table 1). Under drawScale
  // 'unbounded' logit α and log β must be uniform between the transformed range ends.
  it("parameterRecovery with drawScale 'unbounded' draws logit α and log β uniformly within the ranges (KS test)", async () => {
    const n = 200;
    const res = await parameterRecovery({ model: 'q', nAgents: n, nTrials: 5, starts: 1, seed: 3, ranges: { alpha: [0.05, 0.8], beta: [0.8, 8] }, drawScale: 'unbounded' });
    expect(res.drawScale).toBe('unbounded');
    const logit = (x: number) => Math.log(x / (1 - x));
    const scaled = [
      Array.from({ length: n }, (_, a) => (logit(res.truth.data[a * 2]!) - logit(0.05)) / (logit(0.8) - logit(0.05))),
      Array.from({ length: n }, (_, a) => Math.log(res.truth.data[a * 2 + 1]! / 0.8) / Math.log(10)),
    ];
    for (const u of scaled) {
      u.sort((x, y) => x - y);
      expect(u[0]!).toBeGreaterThanOrEqual(0);
      expect(u[n - 1]!).toBeLessThanOrEqual(1);
      let d = 0;
      u.forEach((x, i) => (d = Math.max(d, (i + 1) / n - x, x - i / n)));
      expect(d).toBeLessThan(1.36 / Math.sqrt(n));
    }
    await expect(parameterRecovery({ model: 'q', nAgents: 3, ranges: { alpha: [0, 0.5] }, drawScale: 'unbounded' })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
  });

  it("parameterRecovery reports the priors of its refits ('weakly-informative' → WEAK_PRIORS; default: none)", async () => {
    const opts = { model: 'q', nAgents: 3, nTrials: 60, starts: 2, seed: 2 } as const;
    const map = await parameterRecovery({ ...opts, priors: 'weakly-informative' });
    expect(map.priors).toEqual([WEAK_PRIORS.alpha, WEAK_PRIORS.beta]);
    const ml = await parameterRecovery(opts);
    expect(ml.priors).toEqual([null, null]);
    expect(Array.from(ml.truth.data)).toEqual(Array.from(map.truth.data)); // same agents, only the estimator differs
  });

  it("parameterRecovery with estimator 'empirical-bayes' fits a population prior, identically on 2 worker threads and on 1", async () => {
    const opts = { model: 'q', nAgents: 6, nTrials: 200, starts: 3, seed: 4, estimator: 'empirical-bayes' } as const;
    const serial = await parameterRecovery(opts);
    const parallel = await parameterRecovery({ ...opts, workers: 2 });
    expect(parallel.workersUsed).toBe(2);
    expect(serial.estimator).toBe('empirical-bayes');
    expect(serial.population).not.toBeNull();
    expect(serial.population!.converged).toBe(true);
    expect(serial.population!.prior.paramNames).toEqual(['alpha', 'beta']);
    expect(serial.priors).toEqual([WEAK_PRIORS.alpha, WEAK_PRIORS.beta]); // initial fits: weakly informative unless given
    expect(Array.from(parallel.fitted.data)).toEqual(Array.from(serial.fitted.data));
    expect(Array.from(parallel.population!.prior.mean)).toEqual(Array.from(serial.population!.prior.mean));
    expect(parallel.population!.ibic).toBe(serial.population!.ibic);
    // Same simulated agents as the per-agent estimator: only the refit differs.
    const perAgent = await parameterRecovery({ ...opts, estimator: 'per-agent' });
    expect(Array.from(perAgent.truth.data)).toEqual(Array.from(serial.truth.data));
    expect(perAgent.population).toBeNull();
    expect(perAgent.estimator).toBe('per-agent');
  });

  it("parameterRecovery rejects EM settings without estimator 'empirical-bayes' and an unknown estimator", async () => {
    await expect(parameterRecovery({ model: 'q', nAgents: 3, empiricalBayes: { maxIterations: 5 } })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
    await expect(parameterRecovery({ model: 'q', nAgents: 3, estimator: 'hierarchical' as never })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
    await expect(parameterRecovery({ model: 'q', nAgents: 3, estimator: 'empirical-bayes', empiricalBayes: { tol: 1 } as never })).rejects.toMatchObject({ code: 'TF_UNKNOWN_OPTION' });
  });

  // Pearson's r = cov(x, y)/(sd(x)·sd(y)) is undefined when either variable has zero variance (textbook
  // definition; the same for Spearman's r on ranks). A range [0.1, 0.1] fixes α for every agent (allowed:
  // lo ≤ hi), so its recovery correlations must be NaN with a warning, not the rounding residue of the
  // mean (0.1 · 3 / 3 ≠ 0.1 in binary: the centred column is ≈ 1e-17, not 0, which gave r ≈ 0).
  it('parameterRecovery reports NaN and a warning for the correlations of a parameter fixed by its range', async () => {
    const res = await parameterRecovery({ model: 'q', nAgents: 3, nTrials: 60, starts: 1, seed: 1, ranges: { alpha: [0.1, 0.1] } });
    expect(Array.from(res.truth.data).filter((_, i) => i % 2 === 0)).toEqual([0.1, 0.1, 0.1]);
    expect(res.correlation[0]).toBeNaN();
    expect(res.rankCorrelation[0]).toBeNaN();
    expect(res.trueCorrelation.data[1]).toBeNaN(); // α–β among the true values
    expect(res.trueCorrelation.data[2]).toBeNaN();
    expect(Number.isFinite(res.correlation[1]!)).toBe(true); // β still varies: its r is defined
    const w = res.warnings.find((x) => x.code === 'correlation-undefined');
    expect(w).toBeDefined();
    expect(w!.details).toMatchObject({ constantTruth: ['alpha'], constantFitted: [] });
  });

  it('parameterRecovery rejects a draw range outside the parameter domain', async () => {
    await expect(parameterRecovery({ model: 'q', nAgents: 3, ranges: { alpha: [0.5, 1.5] } })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
  });
});

describe('modelRecovery', () => {
  // Wilson & Collins (2019, model-recovery section; from memory): WSLS and Q-learning are well separated by BIC.
  it('modelRecovery separates win-stay/lose-shift from Q-learning (confusion rows sum to 1, accuracy ≥ 0.8)', async () => {
    const res = await modelRecovery({ models: ['wsls', 'q'], agentsPerModel: 5, nTrials: 300, starts: 3, seed: 1 });
    expect(res.models).toEqual(['wsls', 'q']);
    for (let g = 0; g < 2; g++) expectAllClose(res.confusion.data[g * 2]! + res.confusion.data[g * 2 + 1]!, 1, { rtol: 1e-15 });
    expect(res.accuracy).toBeGreaterThanOrEqual(0.8);
    // inversion = confusion normalised by columns (Bayes with equal agents per generator)
    for (let f = 0; f < 2; f++) {
      const col = res.confusion.data[f]! + res.confusion.data[2 + f]!;
      if (col > 0) expectAllClose(res.inversion.data[f]!, res.confusion.data[f]! / col, { rtol: 1e-15 });
    }
  });

  it('modelRecovery rejects a single candidate model', async () => {
    await expect(modelRecovery({ models: ['q'] })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
  });
});

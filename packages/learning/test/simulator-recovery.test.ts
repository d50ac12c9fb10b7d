import { describe, expect, it } from 'vitest';
import { correlation, expectAllClose } from '@tuningfork/test-utils';
import { simulateSession } from '@tuningfork/simulate';
import { choiceRegressors, fitChoiceModel } from '../src/index.js';

describe('fitChoiceModel on the simulator agent', () => {
  // Reference: ground truth of @tuningfork/simulate (agent P ∝ exp(βQ + β_C·C), Q0 = C0 = 0, its default
  // parameters, read back from sim.truth.agent; truth.rpe = r − Q(c), truth.ape = 1 − C(c) before the update).
  // Issue 6 requires per-trial RPE and APE to correlate ≥ 0.95 with the truth (500 trials).
  it('fitChoiceModel + choiceRegressors recover per-trial RPE and APE of a simulated session (r ≥ 0.95)', () => {
    const sim = simulateSession({ durationSec: 5000, photometryRate: 1, nSites: 0, nUnits: 0, accelRate: 20, seed: 3 });
    const trials = sim.session.trials!;
    expect(trials.choice.length).toBeGreaterThanOrEqual(500);
    const fit = fitChoiceModel(trials, { model: 'q-ck', starts: 10, seed: 1 });
    const reg = choiceRegressors(trials, fit.params, { model: fit.model });
    expect(correlation(reg.rpe, sim.truth.rpe)).toBeGreaterThanOrEqual(0.95);
    expect(correlation(reg.ape, sim.truth.ape)).toBeGreaterThanOrEqual(0.95);
    // The fitted parameters lie within 3 SE of the generating ones (asymptotic normality of the MLE).
    const truth = [sim.truth.agent.alpha, sim.truth.agent.beta, sim.truth.agent.alphaC, sim.truth.agent.betaC];
    fit.estimates.forEach((v, j) => expect(Math.abs(v - truth[j]!)).toBeLessThan(3 * fit.se[j]!));
  });

  // Reference: the simulator's own update equations (runTask / agentUpdate: softmax on βQ + β_C·C, Q0 = C0 = 0,
  // RPE and APE before the update, every trial of the table). With the TRUE parameters learning's regressors must
  // be the simulator's truth up to rounding (1e-12): a mismatch in initial values, update order or trial set
  // would show here, not only as a poor fit.
  it('choiceRegressors with the true parameters reproduces the simulator truth exactly (same model, same trials)', () => {
    const sim = simulateSession({ durationSec: 1200, photometryRate: 1, nSites: 0, nUnits: 0, accelRate: 20, seed: 4, alpha: 0.55, beta: 6, alphaC: 0.7, betaC: 1.2 });
    const a = sim.truth.agent;
    const reg = choiceRegressors(sim.session.trials!, { alpha: a.alpha, beta: a.beta, alphaC: a.alphaC, betaC: a.betaC }, { model: 'q-ck' });
    expectAllClose(reg.rpe, sim.truth.rpe, { rtol: 0, atol: 1e-12, label: 'RPE' });
    expectAllClose(reg.ape, sim.truth.ape, { rtol: 0, atol: 1e-12, label: 'APE' });
    expectAllClose(reg.qChosen, sim.truth.qChosen, { rtol: 0, atol: 1e-12, label: 'Q(c)' });
    expectAllClose(reg.pChoice, sim.truth.pChoice, { rtol: 0, atol: 1e-12, label: 'P(choice)' });
  });
});

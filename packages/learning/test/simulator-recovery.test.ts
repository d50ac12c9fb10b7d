import { describe, expect, it } from 'vitest';
import { correlation } from '@tuningfork/test-utils';
import { simulateSession } from '@tuningfork/simulate';
import { choiceRegressors, fitChoiceModel } from '../src/index.js';

describe('fitChoiceModel on the simulator agent', () => {
  // Reference: ground truth of @tuningfork/simulate (agent P ∝ exp(βQ + β_C·C), Q0 = C0 = 0, defaults
  // α 0.4, β 5, α_C 0.3, β_C 1.5; truth.rpe = r − Q(c), truth.ape = 1 − C(c) before the update).
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
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { choiceLogLikelihood } from '../src/index.js';
import type { ChoiceModel, ChoiceSession } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
// Reference: numpy re-implementation, see fixtures/numpy/gen_choice_models.py.
const numpy = loadFixture('numpy/choice_models.json', fixtures);
type NumpyCase = { name: string; model: ChoiceModel; nOptions: number; params: Record<string, number>; sessions: Float64Array[][]; nll: number; logp: Float64Array };
const cases = numpy.cases as NumpyCase[];
const sessionsOf = (c: NumpyCase): ChoiceSession[] => c.sessions.map(([choice, reward]) => ({ choice: choice!, reward: reward!, nOptions: c.nOptions }));

const CH10 = [0, 0, 1, 0, 1, 1, 0, 0, 0, 1];
const RW10 = [1, 0, 1, 1, 0, 1, 1, 0, 1, 0];

describe('choiceLogLikelihood', () => {
  // Reference: INFERENCE.md §3.8 "Q-learning fixture (own, numpy)": NLL 7.455297294853 (α 0.3, β 2),
  // 10 ln 2 at β = 0; RW + choice kernel NLL 8.246754983434. 12 significant digits given → rtol 1e-11.
  it('choiceLogLikelihood reproduces the INFERENCE.md §3.8 Q-learning and RW + choice-kernel NLLs', () => {
    const data = { choice: CH10, reward: RW10 };
    expectAllClose(choiceLogLikelihood(data, { alpha: 0.3, beta: 2 }, { model: 'q' }).nll, 7.455297294853, { rtol: 1e-11 });
    expectAllClose(choiceLogLikelihood(data, { alpha: 0.3, beta: 0 }, { model: 'q' }).nll, 6.931471805599, { rtol: 1e-11, label: '10 ln 2' });
    expectAllClose(choiceLogLikelihood(data, { alpha: 0.3, beta: 2, alphaC: 0.2, betaC: 1.5 }, { model: 'q-ck' }).nll, 8.246754983434, { rtol: 1e-11 });
  });

  for (const c of cases) {
    it(`choiceLogLikelihood matches the numpy reference for '${c.name}' (NLL and per-trial log P)`, () => {
      const res = choiceLogLikelihood(sessionsOf(c), c.params, { model: c.model, nOptions: c.nOptions });
      // Same operations in a different order (numpy logsumexp vs our max-shift): a few ulps per trial.
      expectAllClose(res.nll, c.nll, { rtol: 1e-12, source: numpy.source, label: c.name });
      expectAllClose(res.logp, c.logp, { rtol: 1e-11, atol: 1e-13, source: numpy.source, label: c.name });
    });
  }

  it('choiceLogLikelihood gradient equals central finite differences of the NLL (property, all model parts)', () => {
    const c = cases.find((x) => x.name.startsWith('q-dual-forget-ck'))!;
    const data = sessionsOf(c);
    fc.assert(
      fc.property(
        fc.record({
          alphaPos: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
          alphaNeg: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
          beta: fc.double({ min: 0.1, max: 8, noNaN: true }),
          forget: fc.double({ min: 0.01, max: 0.5, noNaN: true }),
          alphaC: fc.double({ min: 0.05, max: 0.95, noNaN: true }),
          betaC: fc.double({ min: -3, max: 3, noNaN: true }),
        }),
        (p) => {
          const opts = { model: c.model, nOptions: 3 };
          const g = choiceLogLikelihood(data, p, opts).gradient;
          const names = ['alphaPos', 'alphaNeg', 'beta', 'forget', 'alphaC', 'betaC'] as const;
          const fd = names.map((name) => {
            const h = 1e-6;
            const up = choiceLogLikelihood(data, { ...p, [name]: p[name] + h }, opts).nll;
            const dn = choiceLogLikelihood(data, { ...p, [name]: p[name] - h }, opts).nll;
            return (up - dn) / (2 * h);
          });
          // Central differences with h = 1e-6 on an NLL of ~50: truncation ~1e-10, rounding ~1e-9.
          expectAllClose(g, fd, { rtol: 1e-5, atol: 1e-6 });
        },
      ),
      { seed: 3, numRuns: 25 },
    );
  });

  it('choiceLogLikelihood gradient equals central finite differences for the WSLS and bias models', () => {
    for (const [name, param, value] of [['wsls 3 options', 'epsilon', 0.23], ['bias 60 trials', 'bias', 0.41]] as const) {
      const c = cases.find((x) => x.name === name)!;
      const opts = { model: c.model, nOptions: c.nOptions };
      const g = choiceLogLikelihood(sessionsOf(c), { [param]: value }, opts).gradient[0]!;
      const h = 1e-6;
      const fd = (choiceLogLikelihood(sessionsOf(c), { [param]: value + h }, opts).nll - choiceLogLikelihood(sessionsOf(c), { [param]: value - h }, opts).nll) / (2 * h);
      // central differences, h = 1e-6: error ~1e-8 relative
      expectAllClose(g, fd, { rtol: 1e-6, label: name });
    }
  });

  it('choiceLogLikelihood skips trials without a choice: their outcome may be NaN and they add no term', () => {
    const withGap = { choice: [0, -1, 1, 0], reward: [1, NaN, 0, 1] };
    const without = { choice: [0, 1, 0], reward: [1, 0, 1] };
    const a = choiceLogLikelihood(withGap, { alpha: 0.3, beta: 2 }, { model: 'q' });
    const b = choiceLogLikelihood(without, { alpha: 0.3, beta: 2 }, { model: 'q' });
    expect(a.nll).toBe(b.nll); // the same arithmetic, so bit-identical
    expect(a.n).toBe(3);
    expect(Number.isNaN(a.logp[1]!)).toBe(true);
  });

  it('choiceLogLikelihood names the trial of a choice outside the option set (TF_BAD_VALUE)', () => {
    expect(() => choiceLogLikelihood({ choice: [0, 1, 2, 0], reward: [1, 0, 1, 0], trial: [10, 11, 12, 13] }, { alpha: 0.3, beta: 2 }, { model: 'q' })).toThrow(
      expect.objectContaining({ code: 'TF_BAD_VALUE', details: expect.objectContaining({ trial: 12, row: 2 }) }),
    );
    expect(() => choiceLogLikelihood({ choice: [0, 0.5], reward: [1, 0] }, { alpha: 0.3, beta: 2 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
  });

  it('choiceLogLikelihood names the trial of a choice with a missing outcome (TF_NON_FINITE)', () => {
    expect(() => choiceLogLikelihood({ choice: [0, 1, 0], reward: [1, NaN, 0] }, { alpha: 0.3, beta: 2 }, { model: 'q' })).toThrow(
      expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ trial: 1 }) }),
    );
  });

  it('choiceLogLikelihood rejects a session with a single trial (TF_TOO_FEW_SAMPLES)', () => {
    expect(() => choiceLogLikelihood([{ choice: [0, 1], reward: [1, 0] }, { choice: [1], reward: [1] }], { alpha: 0.3, beta: 2 }, { model: 'q' })).toThrow(
      expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES', details: expect.objectContaining({ session: 1 }) }),
    );
  });

  it('choiceLogLikelihood rejects parameters outside their bounds or not in the model', () => {
    const data = { choice: CH10, reward: RW10 };
    expect(() => choiceLogLikelihood(data, { alpha: 1.5, beta: 2 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION', details: expect.objectContaining({ option: 'params.alpha' }) }));
    expect(() => choiceLogLikelihood(data, { alpha: 0.5, beta: -1 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => choiceLogLikelihood(data, { alpha: 0.5 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION', details: expect.objectContaining({ option: 'params.beta' }) }));
    expect(() => choiceLogLikelihood(data, { alpha: 0.5, beta: 1, alphaC: 0.1 }, { model: 'q' })).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });

  it('choiceLogLikelihood reports a −∞ log-likelihood with TF_BAD_LIKELIHOOD naming the trial', () => {
    // P(option 1) = bias = 0 and option 1 chosen on trial 3: log 0 = −∞.
    expect(() => choiceLogLikelihood({ choice: [0, 0, 0, 1], reward: [0, 0, 0, 0] }, { bias: 0 }, { model: 'bias' })).toThrow(
      expect.objectContaining({ code: 'TF_BAD_LIKELIHOOD', details: expect.objectContaining({ trial: 3 }) }),
    );
    // β·Q overflows to +∞ after the first update (reward 1e308, α = 1, β = 10): NaN from trial 1 on.
    expect(() => choiceLogLikelihood({ choice: [0, 0, 1], reward: [1e308, 1, 1] }, { alpha: 1, beta: 10 }, { model: 'q' })).toThrow(
      expect.objectContaining({ code: 'TF_BAD_LIKELIHOOD', details: expect.objectContaining({ trial: 1 }) }),
    );
  });

  it('choiceLogLikelihood rejects the two-option bias model for three options', () => {
    expect(() => choiceLogLikelihood({ choice: [0, 2], reward: [0, 1], nOptions: 3 }, { bias: 0.5 }, { model: 'bias' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

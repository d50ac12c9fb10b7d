import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { choiceRegressors, regressorTable } from '../src/index.js';
import type { ChoiceModel, ChoiceSession } from '../src/index.js';

const fixtures = `${here(import.meta.url)}/fixtures`;
// Reference: numpy re-implementation, see fixtures/numpy/gen_choice_models.py.
const numpy = loadFixture('numpy/choice_models.json', fixtures);
type NumpyCase = {
  name: string; model: ChoiceModel; nOptions: number; params: Record<string, number>; sessions: Float64Array[][];
  nll: number; rpe: Float64Array; ape: Float64Array; q: Float64Array[]; c: Float64Array[]; pChoice: Float64Array; vCue: Float64Array; qChosen: Float64Array;
};
const cases = numpy.cases as NumpyCase[];
const sessionsOf = (c: NumpyCase): ChoiceSession[] => c.sessions.map(([choice, reward]) => ({ choice: choice!, reward: reward!, nOptions: c.nOptions }));
const flat = (rows: Float64Array[]) => Float64Array.from(rows.flatMap((r) => Array.from(r)));

const CH10 = [0, 0, 1, 0, 1, 1, 0, 0, 0, 1];
const RW10 = [1, 0, 1, 1, 0, 1, 1, 0, 1, 0];

describe('choiceRegressors', () => {
  // Reference: INFERENCE.md §3.8 Q-learning fixture (own, numpy): RPE sequence and final Q (6 digits → atol 5e-7).
  it('choiceRegressors gives the INFERENCE.md §3.8 pre-update RPE sequence and final Q of the Q-learning fixture', () => {
    const reg = choiceRegressors({ choice: CH10, reward: RW10 }, { alpha: 0.3, beta: 2 }, { model: 'q' });
    expectAllClose(reg.rpe, [1, -0.3, 1, 0.79, -0.3, 0.79, 0.553, -0.6129, 0.57097, -0.447], { rtol: 1e-12, atol: 1e-15 });
    expectAllClose(reg.finalQ.data, [0.600321, 0.3129], { atol: 5e-7, rtol: 0 });
    expectAllClose(reg.nll, 7.455297294853, { rtol: 1e-11 });
  });

  // Reference: INFERENCE.md §3.8 "RW + choice kernel (α 0.3, β 2, α_C 0.2, β_C 1.5, C0 = 0)": APE per option for
  // trials 1–3 = (1, 0), (0.8, 0), (−0.36, 1); final C = (0.50322678, 0.38939904) (8 digits → atol 5e-9).
  it('choiceRegressors gives the INFERENCE.md §3.8 APEs and final habit strengths of the RW + choice-kernel fixture', () => {
    const reg = choiceRegressors({ choice: CH10, reward: RW10 }, { alpha: 0.3, beta: 2, alphaC: 0.2, betaC: 1.5 }, { model: 'q-ck' });
    const apePerOption: number[] = [];
    for (let t = 0; t < 3; t++) for (let a = 0; a < 2; a++) apePerOption.push((CH10[t] === a ? 1 : 0) - reg.c.data[t * 2 + a]!);
    expectAllClose(apePerOption, [1, 0, 0.8, 0, -0.36, 1], { rtol: 1e-12, atol: 1e-15 });
    expectAllClose(reg.ape.subarray(0, 3), [1, 0.8, 1], { rtol: 1e-12, label: 'APE of the chosen option = 1 − C(c)' });
    expectAllClose(reg.finalC.data, [0.50322678, 0.38939904], { atol: 5e-9, rtol: 0 });
    expectAllClose(reg.nll, 8.246754983434, { rtol: 1e-11 });
  });

  for (const c of cases) {
    it(`choiceRegressors matches the numpy reference per trial for '${c.name}' (Q, C, RPE, APE, P, values)`, () => {
      const reg = choiceRegressors(sessionsOf(c), c.params, { model: c.model, nOptions: c.nOptions });
      // Identical recursions; only summation order differs → 1e-12 relative with a tiny absolute floor for zeros.
      const tol = { rtol: 1e-12, atol: 1e-14, source: numpy.source, label: c.name };
      expectAllClose(reg.q.data, flat(c.q), tol);
      expectAllClose(reg.c.data, flat(c.c), tol);
      expectAllClose(reg.rpe, c.rpe, tol);
      expectAllClose(reg.ape, c.ape, tol);
      expectAllClose(reg.qChosen, c.qChosen, tol);
      expectAllClose(reg.vCue, c.vCue, tol);
      expectAllClose(reg.pChoice, c.pChoice, tol);
      expectAllClose(reg.nll, c.nll, { ...tol, rtol: 1e-12 });
    });
  }

  it('choiceRegressors centres RPE and APE within each session over trials with a choice (INFERENCE.md §3.7)', () => {
    const c = cases.find((x) => x.name.startsWith('q-dual-forget-ck'))!;
    const reg = choiceRegressors(sessionsOf(c), c.params, { model: c.model, nOptions: 3 });
    for (let s = 0; s < reg.nSessions; s++) {
      const rows = [...reg.session.keys()].filter((t) => reg.session[t] === s && reg.choice[t]! >= 0);
      const mean = (x: Float64Array) => rows.reduce((acc, t) => acc + x[t]!, 0) / rows.length;
      const mr = mean(reg.rpe);
      const ma = mean(reg.ape);
      // definition of centring; one subtraction → 1e-12 relative
      expectAllClose(rows.map((t) => reg.rpeCentred[t]!), rows.map((t) => reg.rpe[t]! - mr), { rtol: 1e-12, atol: 1e-15 });
      expectAllClose(rows.map((t) => reg.apeCentred[t]!), rows.map((t) => reg.ape[t]! - ma), { rtol: 1e-12, atol: 1e-15 });
    }
    expect(reg.warnings.map((w) => w.code)).toContain('skipped-trials');
  });

  it('choiceRegressors accepts a core TrialTable and keeps its trial labels', () => {
    const trials = {
      trial: Int32Array.from([5, 6, 7, 8]), cueTime: new Float64Array(4), choiceTime: new Float64Array(4),
      choice: Int32Array.from([0, 1, -1, 1]), outcomeTime: new Float64Array(4), reward: Float64Array.from([1, 0, NaN, 1]), nOptions: 2,
    };
    const reg = choiceRegressors(trials, { alpha: 0.5, beta: 1, alphaC: 0.5, betaC: 1 });
    expect(Array.from(reg.trial)).toEqual([5, 6, 7, 8]);
    expect(Number.isNaN(reg.rpe[2]!)).toBe(true);
    // values unchanged across the skipped trial (policy of prepareChoices)
    expect(reg.q.data[3 * 2 + 1]).toBe(reg.q.data[2 * 2 + 1]);
  });
});

describe('regressorTable', () => {
  it('regressorTable lays the regressors out as a tidy arquero table with one row per trial', () => {
    const reg = choiceRegressors({ choice: CH10, reward: RW10 }, { alpha: 0.3, beta: 2, alphaC: 0.2, betaC: 1.5 }, { model: 'q-ck' });
    const t = regressorTable(reg);
    expect(t.numRows()).toBe(10);
    expect(t.columnNames()).toEqual(['session', 'trial', 'choice', 'outcome', 'q_0', 'q_1', 'c_0', 'c_1', 'rpe', 'rpe_centred', 'q_chosen', 'v_cue', 'ape', 'ape_centred', 'p_choice']);
    expect(Array.from(t.array('rpe', Float64Array) as Float64Array)).toEqual(Array.from(reg.rpe));
    expect(Array.from(t.array('c_1', Float64Array) as Float64Array)).toEqual(Array.from({ length: 10 }, (_, i) => reg.c.data[i * 2 + 1]!));
  });
});

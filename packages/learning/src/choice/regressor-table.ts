import { table } from 'arquero';
import type { ColumnTable } from 'arquero';
import type { ChoiceRegressors } from './choice-regressors.js';

/**
 * The per-trial regressors as an arquero table (tidy: one row per trial).
 *
 * Columns: `session`, `trial`, `choice` (−1 = none), `outcome`, `q_0 … q_{K−1}` (values before
 * the update), `c_0 … c_{K−1}` (habit strengths before the update), `rpe`, `rpe_centred`,
 * `q_chosen` (expected value at choice), `v_cue` (policy-weighted value at the cue), `ape`,
 * `ape_centred`, `p_choice`. RPE and APE are pre-update; the `_centred` columns subtract the
 * session mean over trials with a choice. NaN marks a quantity the model or the row does not have.
 * Columns are the typed arrays of `reg` (no copy for the scalar columns).
 *
 * @example
 * ```ts
 * const reg = choiceRegressors(trials, fit.params, { model: fit.model });
 * const t = regressorTable(reg);         // t.columnNames() → ['session', 'trial', 'choice', …]
 * t.array('rpe', Float64Array);          // back to a typed array
 * ```
 */
export function regressorTable(reg: ChoiceRegressors): ColumnTable {
  const K = reg.nOptions;
  const rows = reg.trial.length;
  const cols: Record<string, Int32Array | Float64Array> = {
    session: reg.session,
    trial: reg.trial,
    choice: reg.choice,
    outcome: reg.outcome,
  };
  for (let a = 0; a < K; a++) {
    const col = new Float64Array(rows);
    for (let t = 0; t < rows; t++) col[t] = reg.q.data[t * K + a]!;
    cols[`q_${a}`] = col;
  }
  for (let a = 0; a < K; a++) {
    const col = new Float64Array(rows);
    for (let t = 0; t < rows; t++) col[t] = reg.c.data[t * K + a]!;
    cols[`c_${a}`] = col;
  }
  cols.rpe = reg.rpe;
  cols.rpe_centred = reg.rpeCentred;
  cols.q_chosen = reg.qChosen;
  cols.v_cue = reg.vCue;
  cols.ape = reg.ape;
  cols.ape_centred = reg.apeCentred;
  cols.p_choice = reg.pChoice;
  return table(cols);
}

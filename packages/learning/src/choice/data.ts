import { TuningforkError, checkInteger, formatValue } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';

/**
 * One session of a choice task, columnar. A core `TrialTable` is a ChoiceSession.
 * `choice[k]` is the chosen option (0 … nOptions − 1) or −1 when no choice was made; `reward[k]`
 * is the outcome (any finite number; NaN allowed only when no choice was made). `trial` labels the
 * rows in messages and outputs (default 0, 1, …). `nOptions` overrides the function option.
 */
export interface ChoiceSession {
  readonly choice: ArrayLike<number>;
  readonly reward: ArrayLike<number>;
  readonly trial?: ArrayLike<number>;
  readonly nOptions?: number;
}

/** One session, or several sessions of one animal (values and habits reset at each session start). */
export type ChoiceData = ChoiceSession | readonly ChoiceSession[];

/** Choice data checked and concatenated across sessions (internal form shared by every model function). */
export interface PreparedChoices {
  readonly nOptions: number;
  readonly nSessions: number;
  /** Row offsets of each session: rows sessionStart[s] … sessionStart[s + 1] − 1. */
  readonly sessionStart: Int32Array;
  readonly session: Int32Array;
  readonly trial: Int32Array;
  readonly choice: Int32Array;
  readonly reward: Float64Array;
  /** Number of rows with a choice (the n of the likelihood, AIC and BIC). */
  readonly nChoices: number;
  /** Number of rows without a choice (skipped: no likelihood term, no update). */
  readonly nSkipped: number;
  readonly warnings: readonly ResultWarning[];
}

function isSessionLike(x: unknown): x is ChoiceSession {
  return typeof x === 'object' && x !== null && 'choice' in x && 'reward' in x;
}

/**
 * Check and concatenate choice data.
 *
 * Policy: a row with choice −1 is skipped (reported in `warnings`); a row with a choice must have a
 * finite outcome. Every session needs at least 2 rows.
 *
 * @throws {TuningforkError} TF_BAD_OPTION (not choice data), TF_SHAPE_MISMATCH (column lengths),
 * TF_TOO_FEW_SAMPLES (a session with fewer than 2 trials), TF_BAD_VALUE (choice outside the option
 * set), TF_NON_FINITE (a choice whose outcome is NaN or infinite), each naming session and trial.
 */
export function prepareChoices(fn: string, data: unknown, nOptionsOption: number | undefined): PreparedChoices {
  const list: readonly unknown[] = Array.isArray(data) ? data : [data];
  if (list.length === 0) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: data holds no session.`, { fn });
  let total = 0;
  const sessions = list.map((s, i) => {
    if (!isSessionLike(s)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: session ${i} must be an object with 'choice' and 'reward' arrays (a TrialTable works), got ${formatValue(s)}.`, { fn, session: i });
    }
    total += s.choice.length;
    return s;
  });
  let nOptions = nOptionsOption;
  for (const [i, s] of sessions.entries()) {
    if (s.nOptions !== undefined) {
      checkInteger(fn, `data[${i}].nOptions`, s.nOptions, 2, 1e6);
      if (nOptions !== undefined && nOptions !== s.nOptions) {
        throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: session ${i} has nOptions ${s.nOptions} but ${nOptionsOption !== undefined ? 'options.nOptions' : 'an earlier session'} says ${nOptions}; all sessions must share one option set.`, { fn, session: i });
      }
      nOptions = s.nOptions;
    }
  }
  nOptions ??= 2;
  checkInteger(fn, 'nOptions', nOptions, 2, 1e6);
  const sessionStart = new Int32Array(sessions.length + 1);
  const session = new Int32Array(total);
  const trial = new Int32Array(total);
  const choice = new Int32Array(total);
  const reward = new Float64Array(total);
  let row = 0;
  let nChoices = 0;
  let nSkipped = 0;
  const skippedWhere: string[] = [];
  for (const [si, s] of sessions.entries()) {
    const n = s.choice.length;
    if (s.reward.length !== n || (s.trial !== undefined && s.trial.length !== n)) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: session ${si} has ${n} choices but ${s.reward.length} rewards${s.trial ? ` and ${s.trial.length} trial labels` : ''}; the columns must have equal lengths.`, { fn, session: si });
    }
    if (n < 2) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: session ${si} has ${n} trial${n === 1 ? '' : 's'}; a learning model needs at least 2 trials per session.`, { fn, session: si, nTrials: n });
    }
    sessionStart[si] = row;
    for (let k = 0; k < n; k++, row++) {
      const label = s.trial ? s.trial[k]! : k;
      const c = s.choice[k]!;
      const r = s.reward[k]!;
      session[row] = si;
      trial[row] = label;
      if (c === -1) {
        choice[row] = -1;
        reward[row] = r;
        nSkipped++;
        if (skippedWhere.length < 10) skippedWhere.push(`session ${si} trial ${label}`);
        continue;
      }
      if (!Number.isInteger(c) || c < 0 || c >= nOptions) {
        throw new TuningforkError('TF_BAD_VALUE', `${fn}: session ${si}, row ${k} (trial ${label}): choice ${formatValue(c)} is outside the option set 0…${nOptions - 1} (−1 marks a trial without a choice).`, { fn, session: si, row: k, trial: label, value: c, nOptions });
      }
      if (!Number.isFinite(r)) {
        throw new TuningforkError('TF_NON_FINITE', `${fn}: session ${si}, row ${k} (trial ${label}): option ${c} was chosen but the outcome is ${formatValue(r)}; a chosen trial needs a finite outcome. Mark the trial as not chosen (choice −1) or drop it.`, { fn, session: si, row: k, trial: label, value: r });
      }
      choice[row] = c;
      reward[row] = r;
      nChoices++;
    }
  }
  sessionStart[sessions.length] = row;
  const warnings: ResultWarning[] = [];
  if (nSkipped > 0) {
    warnings.push({
      code: 'skipped-trials',
      message: `${fn}: ${nSkipped} trial${nSkipped === 1 ? '' : 's'} without a choice (choice −1) ${nSkipped === 1 ? 'was' : 'were'} skipped: no likelihood term and no value update (${skippedWhere.join(', ')}${nSkipped > skippedWhere.length ? ', …' : ''}).`,
      details: { nSkipped },
    });
  }
  return { nOptions, nSessions: sessions.length, sessionStart, session, trial, choice, reward, nChoices, nSkipped, warnings };
}

/** Name a row in a message: "session 0, row 12 (trial 13)". */
export function whereRow(d: PreparedChoices, row: number): { text: string; session: number; row: number; trial: number } {
  const s = d.session[row]!;
  const k = row - d.sessionStart[s]!;
  const trial = d.trial[row]!;
  return { text: `session ${s}, row ${k} (trial ${trial})`, session: s, row: k, trial };
}

import { TuningforkError, checkRange, formatValue, resolveOptions } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';

/** Options of {@link rescorlaWagner}. */
export interface RescorlaWagnerOptions {
  /** Learning rate α in [0, 1], one for all cues or one per cue. @defaultValue 0.1 */
  alpha?: number | readonly number[];
  /** Initial associative strength V0, one for all cues or one per cue. @defaultValue 0 */
  v0?: number | readonly number[];
  /**
   * Cue presence (or intensity ≥ 0) per trial, trials × cues, row-major. `null` means one cue
   * present on every trial. @defaultValue null
   */
  cues?: Matrix | null;
}

const DEFAULTS = Object.freeze({ alpha: 0.1 as number | readonly number[], v0: 0 as number | readonly number[], cues: null as Matrix | null });

/** Result of {@link rescorlaWagner}. */
export interface RescorlaWagnerResult {
  /** Associative strength of each cue before the trial's update, trials × cues. */
  readonly values: Matrix;
  /** Prediction Σ_i x_i·V_i of the cues present, before the update (one per trial). */
  readonly prediction: Float64Array;
  /** Prediction error δ = r − prediction (one per trial). */
  readonly delta: Float64Array;
  /** Strengths after the last trial (one per cue). */
  readonly final: Float64Array;
}

/**
 * Rescorla–Wagner cue–outcome learning: δ = r − Σ_i x_i·V_i over the cues present, then
 * V_i ← V_i + α_i·x_i·δ for each cue (cues presented together share one δ).
 *
 * For a single cue with constant r and V_1 = V0: δ_k = (r − V0)(1 − α)^(k−1).
 *
 * Cue intensities scale the step: on a trial with cues x the error shrinks by the factor
 * 1 − Σ_i α_i·x_i², so the recursion oscillates with growing amplitude when Σ_i α_i·x_i² > 2 on
 * repeated trials (the Widrow–Hoff stability condition; e.g. intensities in dB with α = 0.1). Such a
 * run is reported once it overflows, never returned as ±Infinity or NaN.
 *
 * @param outcomes - Outcome per trial (finite).
 * @returns values and prediction before each update, δ per trial, final strengths.
 * @throws {TuningforkError} TF_NON_FINITE (an outcome that is NaN or infinite, naming the trial; a
 * diverging recursion whose prediction, error or strengths overflow, naming the trial),
 * TF_SHAPE_MISMATCH (cues rows ≠ trials, or per-cue arrays of the wrong length), TF_BAD_OPTION
 * (α outside [0, 1], negative or non-finite cue entries).
 *
 * @example
 * ```ts
 * rescorlaWagner(new Float64Array(10).fill(1), { alpha: 0.1 }).delta[9]; // 0.9^9 = 0.387420489
 * ```
 *
 * References
 * - Rescorla, R. A. & Wagner, A. R. (1972). A theory of Pavlovian conditioning: variations in the
 *   effectiveness of reinforcement and nonreinforcement. In Black, A. H. & Prokasy, W. F. (eds),
 *   Classical Conditioning II: Current Research and Theory, 64–99. Appleton-Century-Crofts.
 * - Widrow, B. & Hoff, M. E. (1960). Adaptive switching circuits. IRE WESCON Convention Record,
 *   part 4, 96–104. (The same delta rule; its step-size stability bound.)
 */
export function rescorlaWagner(outcomes: ArrayLike<number>, options: RescorlaWagnerOptions = {}): RescorlaWagnerResult {
  const fn = 'rescorlaWagner';
  const o = resolveOptions(fn, DEFAULTS, options);
  const n = outcomes.length;
  const cues = o.cues;
  const m = cues === null ? 1 : cues.cols;
  if (cues !== null) {
    if (!cues || !(cues.data instanceof Float64Array) || cues.data.length !== cues.rows * cues.cols || cues.rows !== n || cues.cols < 1) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: cues must be a trials × cues matrix with ${n} rows (one per outcome), got ${cues?.rows} × ${cues?.cols}.`, { fn, option: 'cues' });
    }
    for (let i = 0; i < cues.data.length; i++) {
      const x = cues.data[i]!;
      if (!(x >= 0) || !Number.isFinite(x)) {
        throw new TuningforkError('TF_BAD_OPTION', `${fn}: cues[trial ${Math.floor(i / m)}, cue ${i % m}] must be a finite number ≥ 0, got ${formatValue(x)}.`, { fn, option: 'cues', trial: Math.floor(i / m) });
      }
    }
  }
  const perCue = (name: string, v: number | readonly number[], lo: number, hi: number): Float64Array => {
    if (typeof v === 'number') return new Float64Array(m).fill(checkRange(fn, name, v, lo, hi));
    if (!Array.isArray(v) || v.length !== m) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name} must be a number or an array with one value per cue (${m}), got ${formatValue(v)}.`, { fn, option: name });
    }
    return Float64Array.from(v, (x, i) => checkRange(fn, `${name}[${i}]`, x, lo, hi));
  };
  const alpha = perCue('alpha', o.alpha, 0, 1);
  const v = perCue('v0', o.v0, -Number.MAX_VALUE, Number.MAX_VALUE);
  const values = new Float64Array(n * m);
  const prediction = new Float64Array(n);
  const delta = new Float64Array(n);
  for (let t = 0; t < n; t++) {
    const r = outcomes[t]!;
    if (!Number.isFinite(r)) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: outcome of trial ${t} is ${formatValue(r)}; every trial needs a finite outcome (drop trials without one).`, { fn, trial: t, value: r });
    }
    let pred = 0;
    for (let i = 0; i < m; i++) {
      values[t * m + i] = v[i]!;
      pred += (cues === null ? 1 : cues.data[t * m + i]!) * v[i]!;
    }
    const d = r - pred;
    if (!Number.isFinite(d)) throw diverged(fn, t, d, alpha, cues, m);
    prediction[t] = pred;
    delta[t] = d;
    let finite = true;
    for (let i = 0; i < m; i++) {
      v[i] = v[i]! + alpha[i]! * (cues === null ? 1 : cues.data[t * m + i]!) * d;
      if (!Number.isFinite(v[i]!)) finite = false;
    }
    if (!finite) throw diverged(fn, t, d, alpha, cues, m);
  }
  return { values: { data: values, rows: n, cols: m }, prediction, delta, final: v };
}

/** TF_NON_FINITE for a recursion that overflowed at trial t (finite inputs, unstable step size). */
function diverged(fn: string, t: number, d: number, alpha: Float64Array, cues: Matrix | null, m: number): TuningforkError {
  let gain = 0;
  for (let i = 0; i < m; i++) {
    const x = cues === null ? 1 : cues.data[t * m + i]!;
    gain += alpha[i]! * x * x;
  }
  return new TuningforkError(
    'TF_NON_FINITE',
    `${fn}: trial ${t}: the associative strengths overflowed (prediction error ${formatValue(d)}): the recursion diverges because Σ α_i·x_i² over the cues present (${formatValue(gain)} on this trial) exceeds 2 on repeated trials. Lower alpha or rescale the cue intensities.`,
    { fn, trial: t, gain },
  );
}

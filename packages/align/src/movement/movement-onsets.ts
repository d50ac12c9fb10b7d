import { resolveOptions } from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { examine, nextAbove, peakOf, resolveRule } from '../internal/onset-scan.js';
import { checkSignal } from '../internal/validate.js';

/** Options of {@link movementOnsets} (and the onset rule of {@link firstMovementAfter}). */
export interface MovementOnsetOptions {
  /** Activity level that starts a movement (|signal − baseline| units); 'robust' = robustLevels[0] × robust sd of the activity. @defaultValue 'robust' */
  onThreshold?: 'robust' | number;
  /** Activity level below which the animal is still; 'robust' = robustLevels[1] × robust sd. @defaultValue 'robust' */
  offThreshold?: 'robust' | number;
  /** Multiples of the activity's robust sd (1.4826 × median activity) for 'robust' thresholds [on, off]. @defaultValue [5, 4] */
  robustLevels?: readonly [number, number];
  /** Subtracted before taking |·|: 'none' (velocity, speed), 'median' (accelerometer magnitude: gravity), or a number (e.g. 1 g). @defaultValue 'none' */
  baseline?: 'none' | 'median' | number;
  /** Required stillness (activity < off) before the movement, seconds. @defaultValue 0.2 */
  quietSec?: number;
  /** The activity must stay > off this long from the crossing, seconds. @defaultValue 0.05 */
  holdSec?: number;
  /** Onset refinement: back to the last sample ≤ refineFraction × on ('fraction'), to the last sample < off ('off-threshold'), or the crossing itself ('none'). @defaultValue 'fraction' */
  refine?: 'fraction' | 'off-threshold' | 'none';
  /** Fraction of onThreshold for refine: 'fraction'. @defaultValue 0.1 */
  refineFraction?: number;
}

/** Result of {@link movementOnsets}. */
export interface MovementOnsetsResult {
  /** Onset times (refined), seconds. */
  readonly onsets: Float64Array;
  /** Times of the threshold crossings (first sample > on), seconds. */
  readonly crossings: Float64Array;
  /** End of each movement: first sample of holdSec of stillness, seconds. */
  readonly ends: Float64Array;
  /** Vigour: peak activity from onset to end (signal units, e.g. g above gravity or deg/s). */
  readonly vigour: Float64Array;
  /** Time of the peak, seconds. */
  readonly peakTimes: Float64Array;
  /** Sample index of each onset. */
  readonly onsetIndex: Int32Array;
  /** Thresholds used (activity units) and the baseline subtracted. */
  readonly thresholds: { readonly on: number; readonly off: number; readonly refine: number; readonly baseline: number };
  /** Threshold crossings rejected because the animal was not still for quietSec before them. */
  readonly nNoQuiescence: number;
  readonly warnings: readonly ResultWarning[];
}

export const ONSET_DEFAULTS = Object.freeze({
  onThreshold: 'robust' as 'robust' | number,
  offThreshold: 'robust' as 'robust' | number,
  robustLevels: Object.freeze([5, 4]) as readonly [number, number],
  baseline: 'none' as 'none' | 'median' | number,
  quietSec: 0.2,
  holdSec: 0.05,
  refine: 'fraction' as 'fraction' | 'off-threshold' | 'none',
  refineFraction: 0.1,
});

/**
 * Movement onsets in a continuous movement signal (wheel velocity, running speed, or accelerometer
 * magnitude), each with its vigour.
 *
 * **Method.** Activity is `|x − baseline|`. An onset is a sample where the activity first exceeds
 * `on`, stays above `off` for `holdSec`, and is preceded by stillness: the `quietSec` of samples up
 * to the rise start (the last sample below `off` before the crossing) are all below `off`. The
 * onset is then refined backwards to the last sample with activity ≤ refineFraction × on (wheel
 * rule), or to the rise start ('off-threshold', better for noisy accelerometers), or kept at the
 * crossing ('none'). A movement ends when the activity stays below `off` for `holdSec`; vigour is
 * the peak activity from onset to end. Crossings without stillness before them are not onsets
 * (counted in nNoQuiescence). For an accelerometer magnitude (in g) use `baseline: 'median'` (or 1)
 * so that gravity is removed and vigour is the peak acceleration above gravity.
 * 'robust' thresholds are multiples of 1.4826 × median(activity). Typical values (common practice /
 * from memory): wheel quiescence ≥ 200 ms (International Brain Laboratory 2021), accelerometer
 * threshold quiet median + 3–5 robust sd with 50–100 ms hold.
 *
 * References
 * - International Brain Laboratory et al. (2021). Standardized and reproducible measurement of
 *   decision-making in mice. eLife 10:e63711. doi:10.7554/eLife.63711
 *
 * @param signal - Uniform movement signal (any units).
 * @returns `{ onsets, crossings, ends, vigour, peakTimes, onsetIndex, thresholds, nNoQuiescence, warnings }`.
 * @throws {TuningforkError} TF_NON_FINITE (NaN sample); TF_DEGENERATE_SIGNAL ('robust' thresholds
 *   on a signal whose robust sd is 0); TF_BAD_OPTION (off > on, bad values); TF_UNKNOWN_OPTION.
 *
 * @example
 * ```ts
 * // v = np.interp(t, [0, 1, 1.2, 2, 2.0001, 3], [0, 0, 20, 20, 0, 0]) at 100 Hz
 * movementOnsets(v, { onThreshold: 5.5, offThreshold: 2 }).onsets;  // [1.00]; crossing at 1.06
 * ```
 */
export function movementOnsets(signal: UniformSignal, options: MovementOnsetOptions = {}): MovementOnsetsResult {
  const fn = 'movementOnsets';
  const o = resolveOptions(fn, ONSET_DEFAULTS, options);
  checkSignal(fn, 'signal', signal, 1);
  const { a, rule } = resolveRule(fn, signal, o);
  const rate = signal.sampleRate;
  const t = (i: number) => signal.t0 + i / rate;
  const on: number[] = [];
  const cr: number[] = [];
  const en: number[] = [];
  const vg: number[] = [];
  const pk: number[] = [];
  const idx: number[] = [];
  let noQuiet = 0;
  let i = 0;
  const n = a.length;
  while (i < n) {
    const c = nextAbove(a, i, n, rule.on);
    if (c < 0) break;
    const x = examine(a, c, rule);
    if (x.status === 'no-hold') {
      i = c + 1;
      continue;
    }
    if (x.status === 'no-quiescence') {
      noQuiet++;
      i = Math.max(x.end, c + 1);
      continue;
    }
    const [v, at] = peakOf(a, x.onset, x.end);
    on.push(t(x.onset));
    cr.push(t(c));
    en.push(t(x.end));
    vg.push(v);
    pk.push(t(at));
    idx.push(x.onset);
    i = Math.max(x.end, c + 1);
  }
  const warnings: ResultWarning[] = [];
  if (noQuiet > 0) {
    warnings.push({ code: 'crossings-without-quiescence', message: `${fn}: ${noQuiet} threshold crossing(s) were not preceded by ${o.quietSec} s of stillness and are not onsets.`, details: { crossings: noQuiet } });
  }
  return {
    onsets: Float64Array.from(on), crossings: Float64Array.from(cr), ends: Float64Array.from(en),
    vigour: Float64Array.from(vg), peakTimes: Float64Array.from(pk), onsetIndex: Int32Array.from(idx),
    thresholds: { on: rule.on, off: rule.off, refine: rule.refine === 'fraction' ? rule.refineLevel : rule.refine === 'off-threshold' ? rule.off : rule.on, baseline: rule.baselineValue },
    nNoQuiescence: noQuiet, warnings,
  };
}

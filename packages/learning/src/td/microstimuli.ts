import { checkInteger, checkPositive, resolveOptions } from '@tuningfork/core';
import { checkOpenUnit } from '../internal/checks.js';
import type { Matrix } from '@tuningfork/core';

/** Options of {@link microstimuli}. */
export interface MicrostimuliOptions {
  /** Number of microstimuli m (10–50 across re-implementations). @defaultValue 10 */
  count?: number;
  /** Per-step decay d of the memory trace y(t) = d^t, in (0, 1). @defaultValue 0.985 */
  decay?: number;
  /** Width σ of each basis function on the trace-height axis. @defaultValue 0.08 */
  width?: number;
}

const DEFAULTS = Object.freeze({ count: 10, decay: 0.985, width: 0.08 });

/**
 * Microstimulus features of one stimulus onset, for steps 0 … nSteps − 1 after it.
 *
 * The stimulus starts a decaying memory trace y(t) = d^t (y(0) = 1). Microstimulus i (1 … m) is
 * x_i(t) = y(t)·(2π)^(−1/2)·exp(−(y(t) − i/m)² / (2σ²)): each peaks when the trace passes i/m, so
 * later microstimuli are weaker and broader in time (temporal generalisation).
 *
 * @returns nSteps × m matrix; column i − 1 holds microstimulus i.
 * @throws {TuningforkError} TF_BAD_OPTION for nSteps < 1, count < 1, decay outside (0, 1), width ≤ 0.
 *
 * @example
 * ```ts
 * microstimuli(51).data[50 * 10 + 4]; // t = 50: y = 0.469690, x_5 = 0.174402 (INFERENCE.md §3.8)
 * ```
 *
 * References
 * - Ludvig, E. A., Sutton, R. S. & Kehoe, E. J. (2008). Stimulus representation and the timing of
 *   reward-prediction errors in models of the dopamine system. Neural Computation
 *   20(12):3034–3054. doi:10.1162/neco.2008.11-07-654
 */
export function microstimuli(nSteps: number, options: MicrostimuliOptions = {}): Matrix {
  const fn = 'microstimuli';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkInteger(fn, 'nSteps', nSteps, 1, 1e8);
  const m = checkInteger(fn, 'count', o.count, 1, 10000);
  const d = checkOpenUnit(fn, 'decay', o.decay);
  const sigma = checkPositive(fn, 'width', o.width);
  const out = new Float64Array(nSteps * m);
  const norm = 1 / Math.sqrt(2 * Math.PI);
  for (let t = 0; t < nSteps; t++) {
    const y = Math.pow(d, t);
    for (let i = 1; i <= m; i++) {
      const u = y - i / m;
      // u = 0 exactly (the trace at i/m, e.g. t = 0, i = m): the factor is exp(0) = 1 for every σ, also
      // when 2σ² underflows to 0 (σ ≲ 1e-162), where u²/(2σ²) would be 0/0 = NaN.
      out[t * m + i - 1] = y * norm * (u === 0 ? 1 : Math.exp(-(u * u) / (2 * sigma * sigma)));
    }
  }
  return { data: out, rows: nSteps, cols: m };
}

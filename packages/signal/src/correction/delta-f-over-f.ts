import { TuningforkError } from '@tuningfork/core';
import { asF64 } from '../internal/validate.js';

/** Result of {@link deltaFOverF}. */
export interface DeltaFOverF {
  /** (signal − reference)/reference; NaN where the reference is ≤ 0 or non-finite. */
  readonly values: Float64Array;
  /** Samples whose reference was ≤ 0 (or non-finite) and were set to NaN instead of divided. */
  readonly nonPositiveReference: number;
}

/**
 * ΔF/F = (F − F₀)/F₀ against a reference F₀ (a fitted control a + b·C, or a baseline).
 *
 * `reference` is either an array (F₀ per sample) or a line `{ intercept, slope, control }` giving
 * F₀ = intercept + slope·control without allocating it. A reference ≤ 0 has no meaning for a
 * fluorescence ratio, so those samples are not divided: they become NaN and are counted
 * (check `nonPositiveReference`). NaN inputs propagate.
 *
 * @param signal - Sensor fluorescence F.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH for unequal lengths.
 * @example
 * ```ts
 * deltaFOverF([1.1, 0.9], [1, 1]).values; // [0.1, -0.1] (up to rounding)
 * ```
 *
 * References
 * - Lerner, T. N. et al. (2015). Intact-brain analyses reveal distinct information carried by SNc
 *   dopamine subcircuits. Cell 162(3):635–647. doi:10.1016/j.cell.2015.07.014 (control-fitted ΔF/F)
 */
export function deltaFOverF(
  signal: ArrayLike<number>,
  reference: ArrayLike<number> | { intercept: number; slope: number; control: ArrayLike<number> },
  out?: Float64Array,
): DeltaFOverF {
  const fn = 'deltaFOverF';
  const s = asF64(fn, 'signal', signal);
  const n = s.length;
  const y = out ?? new Float64Array(n);
  if (y.length !== n) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: out has length ${y.length}, expected ${n}.`, { fn });
  let bad = 0;
  if ('control' in (reference as object) && !('length' in (reference as object))) {
    const r = reference as { intercept: number; slope: number; control: ArrayLike<number> };
    const c = asF64(fn, 'reference.control', r.control, n);
    const a = r.intercept;
    const b = r.slope;
    for (let i = 0; i < n; i++) {
      const f0 = a + b * c[i]!;
      if (f0 > 0) y[i] = (s[i]! - f0) / f0;
      else {
        y[i] = NaN;
        if (!Number.isNaN(c[i]!)) bad++;
      }
    }
  } else {
    const f = asF64(fn, 'reference', reference as ArrayLike<number>, n);
    for (let i = 0; i < n; i++) {
      const f0 = f[i]!;
      if (f0 > 0 && f0 < Infinity) y[i] = (s[i]! - f0) / f0;
      else {
        y[i] = NaN;
        if (!Number.isNaN(f0)) bad++;
      }
    }
  }
  return { values: y, nonPositiveReference: bad };
}

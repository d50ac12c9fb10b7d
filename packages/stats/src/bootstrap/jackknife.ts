import { TuningforkError } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { accelerationFrom, accumulateJackknife, FLAG_DEGENERATE } from '../internal/interval-core.js';
import { asRows } from '../internal/rows.js';

/** A statistic of a sample of `rows` observations with `cols` values each (row-major). */
export type SampleStatistic = (sample: Float64Array, rows: number, cols: number) => number;

/** Leave-one-out values of a statistic and what is derived from them. */
export interface JackknifeResult {
  /** θ_(i): the statistic without observation i, i = 0..n−1. */
  readonly values: Float64Array;
  /** Their mean θ̄. */
  readonly mean: number;
  /** Jackknife standard error √((n − 1)/n · Σ(θ_(i) − θ̄)²). */
  readonly standardError: number;
  /** BCa acceleration a = Σd³ / (6(Σd²)^{3/2}), d = θ̄ − θ_(i); 0 when Σd² = 0 (see `zeroSpread`). */
  readonly acceleration: number;
  /** True when all θ_(i) are equal (Σd² = 0), so the acceleration was set to 0. */
  readonly zeroSpread: boolean;
}

/**
 * Jackknife of a statistic: its leave-one-out values, standard error and BCa acceleration.
 *
 * `data` is a vector (one value per observation) or a matrix whose rows are observations kept
 * whole (paired data such as (LSAT, GPA) rows). `statistic` receives a reused scratch buffer
 * holding n − 1 rows; do not keep a reference to it.
 *
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES with fewer than 2 observations; TF_SHAPE_MISMATCH
 *   for a malformed matrix; TF_NON_FINITE when a leave-one-out value is not finite.
 *
 * References
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap, ch. 11 and eq. 14.15.
 *   Chapman & Hall/CRC. doi:10.1201/9780429246593
 */
export function jackknife(data: ArrayLike<number> | Matrix, statistic: SampleStatistic): JackknifeResult {
  const fn = 'jackknife';
  const x = asRows(fn, data);
  const values = jackknifeValues(fn, x.data, x.rows, x.cols, statistic);
  const n = x.rows;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += values[i]!;
  mean /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (values[i]! - mean) ** 2;
  const acc = new Float64Array(2);
  accumulateJackknife(values, n, acc);
  const a = accelerationFrom(acc[0]!, acc[1]!);
  return {
    values, mean, standardError: Math.sqrt(((n - 1) / n) * ss),
    acceleration: a.flags & FLAG_DEGENERATE ? NaN : a.a, zeroSpread: acc[1] === 0,
  };
}

/** θ_(i) for i = 0..n−1 with a reused (n − 1)-row scratch. @throws TF_NON_FINITE */
export function jackknifeValues(fn: string, data: Float64Array, n: number, cols: number, statistic: SampleStatistic): Float64Array {
  const out = new Float64Array(n);
  const scratch = new Float64Array((n - 1) * cols);
  for (let i = 0; i < n; i++) {
    // Rows before i stay in place; rows after i shift up by one.
    scratch.set(data.subarray(0, i * cols), 0);
    scratch.set(data.subarray((i + 1) * cols, n * cols), i * cols);
    const v = statistic(scratch, n - 1, cols);
    if (!Number.isFinite(v)) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: the statistic is ${v} when observation ${i} is left out; the jackknife (and BCa acceleration) needs finite leave-one-out values.`, { fn, row: i, value: v });
    }
    out[i] = v;
  }
  return out;
}

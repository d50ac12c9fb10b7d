import type { EncodingDesign } from '../design/design-matrix.js';

/** A kernel reconstructed in time: the response to one event (per unit modulator) or per unit covariate. */
export interface KernelEstimate {
  readonly term: string;
  readonly group: string;
  readonly kind: 'event' | 'covariate';
  /** Lag of each value relative to the event (or covariate sample), seconds. */
  readonly lagsSec: Float64Array;
  /** Σ_j h_j(lag)·w_j in the units of the fitted signal. */
  readonly estimate: Float64Array;
  /** Standard error per lag (NaN when no replicates). */
  readonly se: Float64Array;
  /** Interval estimate ± t·se (NaN when no replicates). */
  readonly low: Float64Array;
  readonly high: Float64Array;
}

/** Kernel of every term from raw-unit coefficients w (length nCols). */
function kernelValues(design: EncodingDesign, w: Float64Array, ti: number): Float64Array {
  const t = design.terms[ti]!;
  const out = new Float64Array(t.nLags);
  for (let i = 0; i < t.nLags; i++) {
    let s = 0;
    for (let j = 0; j < t.nColumns; j++) s += t.kernels[i * t.nColumns + j]! * w[t.firstColumn + j]!;
    out[i] = s;
  }
  return out;
}

/**
 * Reconstruct every term's kernel in time from coefficients, with delete-one-block jackknife
 * intervals when replicates are given: se² = (J−1)/J·Σ(k_j − k̄)², interval k ± tq·se.
 */
export function reconstructKernels(design: EncodingDesign, w: Float64Array, replicates: readonly Float64Array[], tq: number): KernelEstimate[] {
  const J = replicates.length;
  return design.terms.map((t, ti) => {
    const est = kernelValues(design, w, ti);
    const se = new Float64Array(t.nLags).fill(NaN);
    const low = new Float64Array(t.nLags).fill(NaN);
    const high = new Float64Array(t.nLags).fill(NaN);
    if (J >= 2) {
      const reps = replicates.map((r) => kernelValues(design, r, ti));
      for (let i = 0; i < t.nLags; i++) {
        let m = 0;
        for (const r of reps) m += r[i]!;
        m /= J;
        let s = 0;
        for (const r of reps) s += (r[i]! - m) ** 2;
        const e = Math.sqrt(((J - 1) / J) * s);
        se[i] = e;
        low[i] = est[i]! - tq * e;
        high[i] = est[i]! + tq * e;
      }
    }
    return { term: t.name, group: t.group, kind: t.kind, lagsSec: t.lagsSec, estimate: est, se, low, high };
  });
}

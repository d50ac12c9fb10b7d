import { checkPositive, TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { studentTQuantile } from '../distributions/student-t.js';
import { tieTolerance } from '../internal/permutation-engine.js';
import type { Design } from '../internal/permutation-engine.js';
import { setupPermutation, undefinedTWarning } from './permutation-timecourse.js';
import type { Alternative, PermutationTimecourseOptions } from './permutation-timecourse.js';

export interface ClusterPermutationOptions extends PermutationTimecourseOptions {
  /**
   * Cluster-forming level: samples with |t| > t_{1 − α/2, df} (two-sided; t_{1 − α, df} one-sided)
   * start clusters. Not the inference level. @defaultValue 0.05
   */
  clusterAlpha?: number;
  /** Explicit cluster-forming |t| threshold, overriding `clusterAlpha`. @defaultValue undefined */
  threshold?: number | undefined;
}

/** One supra-threshold cluster of the observed t trace. */
export interface TimeCluster {
  /** First and last column (inclusive). */
  readonly start: number;
  readonly end: number;
  /** Column times (s) of start and end when the input carries offsets, else NaN. */
  readonly startSec: number;
  readonly endSec: number;
  /** +1 for t above the threshold, −1 below its negative. */
  readonly sign: 1 | -1;
  /** Σ t over the cluster (signed). */
  readonly mass: number;
  /** Share of the null maximum cluster mass ≥ |mass| (exact), or (1 + b)/(1 + N). */
  readonly pValue: number;
}

export interface ClusterPermutationResult {
  readonly t: Float64Array;
  readonly threshold: number;
  readonly df: number;
  readonly clusters: readonly TimeCluster[];
  /** Maximum cluster mass (|mass| two-sided) of each null labelling, 0 when it has no cluster. */
  readonly nullDistribution: Float64Array;
  readonly design: Design;
  readonly alternative: Alternative;
  readonly exact: boolean;
  readonly permutations: number;
  readonly seed: number;
  readonly offsets: Float64Array | undefined;
  readonly warnings: readonly ResultWarning[];
}

/**
 * Cluster-based permutation test over time (Maris & Oostenveld 2007) for one condition against
 * 0 or two conditions (paired sign flips or independent label shuffles).
 *
 * **Method.** (1) t per sample; (2) cluster-forming threshold |t| > t_{1−α/2, df} (df = n − 1,
 * or n1 + n2 − 2), see `clusterAlpha`; (3) clusters are maximal runs of same-sign
 * supra-threshold samples, mass = Σt; (4) the null records, per labelling, the largest |mass|
 * (largest mass for 'greater', largest −mass for 'less'); labellings are enumerated when they
 * fit in `permutations` (2ⁿ ≤ N sign flips, or C(n1 + n2, n1) ≤ N), else N random ones;
 * (5) each observed cluster's p is the share of null maxima ≥ its |mass| — exact share with
 * enumeration, (1 + b)/(1 + N) otherwise. A significant cluster says the conditions differ; its
 * extent and onset are descriptive, not estimates of when an effect starts. Non-finite bins
 * break clusters and are reported. Bins with zero spread and a non-zero mean (difference) have
 * t = ±∞ (see `permutationTimecourse`); a cluster holding one has mass ±∞, which ties with the
 * infinite null maxima (the identity and the full flip), so its p is never 0.
 *
 * @param a - Trials × bins.
 * @param b - Second condition (same bins) or null for a one-sample test against 0.
 * @throws {TuningforkError} as `permutationTimecourse`; TF_BAD_OPTION for a bad threshold.
 *
 * @example
 * const r = clusterPermutationTest(rewarded, omitted, { design: 'independent', permutations: 5000, seed: 1 });
 * r.clusters.filter((c) => c.pValue < 0.05);
 *
 * References
 * - Maris, E. & Oostenveld, R. (2007). Nonparametric statistical testing of EEG- and MEG-data.
 *   Journal of Neuroscience Methods 164(1):177–190. doi:10.1016/j.jneumeth.2007.03.024
 * - Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero. Statistical
 *   Applications in Genetics and Molecular Biology 9(1):39. doi:10.2202/1544-6115.1585
 */
export function clusterPermutationTest(a: Matrix, b: Matrix | null = null, options: ClusterPermutationOptions = {}): ClusterPermutationResult {
  const fn = 'clusterPermutationTest';
  const ctx = setupPermutation(fn, a, b, options, { clusterAlpha: 0.05, threshold: undefined });
  const { engine, alternative, offsets } = ctx;
  const clusterAlpha = ctx.options['clusterAlpha'];
  if (typeof clusterAlpha !== 'number' || !(clusterAlpha > 0 && clusterAlpha < 1)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: clusterAlpha must be a number strictly between 0 and 1 (e.g. 0.05), got ${String(clusterAlpha)}.`, { fn, option: 'clusterAlpha' });
  }
  const thrOpt = ctx.options['threshold'];
  const threshold = thrOpt === undefined
    ? studentTQuantile(alternative === 'two-sided' ? 1 - clusterAlpha / 2 : 1 - clusterAlpha, engine.df)
    : checkPositive(fn, 'threshold', thrOpt);
  const T = engine.cols;
  const R = engine.rows;
  const tObs = new Float64Array(T);
  // Running cluster state per labelling.
  const curSign = new Int8Array(R);
  const curMass = new Float64Array(R);
  const best = new Float64Array(R);
  const usePos = alternative !== 'less';
  const useNeg = alternative !== 'greater';
  const close = (r: number) => {
    const m = curMass[r]!;
    const v = curSign[r]! > 0 ? m : -m;
    if (v > best[r]!) best[r] = v;
    curSign[r] = 0;
    curMass[r] = 0;
  };
  engine.forEachBlock((c0, width, t) => {
    for (let jj = 0; jj < width; jj++) {
      const base = jj * R;
      tObs[c0 + jj] = t[base]!;
      for (let r = 0; r < R; r++) {
        const v = t[base + r]!;
        const s = usePos && v > threshold ? 1 : useNeg && v < -threshold ? -1 : 0;
        if (s !== curSign[r]) { if (curSign[r] !== 0) close(r); curSign[r] = s; }
        if (s !== 0) curMass[r]! += v;
      }
    }
  });
  for (let r = 0; r < R; r++) if (curSign[r] !== 0) close(r);

  // Observed clusters (row 0 is the observed labelling).
  const clusters: TimeCluster[] = [];
  const nullStart = engine.exact ? 0 : 1;
  let j = 0;
  while (j < T) {
    const v = tObs[j]!;
    const s = usePos && v > threshold ? 1 : useNeg && v < -threshold ? -1 : 0;
    if (s === 0) { j++; continue; }
    const start = j;
    let mass = 0;
    while (j < T) {
      const w = tObs[j]!;
      if (!(s > 0 ? w > threshold : w < -threshold)) break;
      mass += w;
      j++;
    }
    const stat = Math.abs(mass);
    const tol = tieTolerance(stat);
    let count = 0;
    for (let r = nullStart; r < R; r++) if (best[r]! >= stat - tol) count++;
    const pValue = engine.exact ? count / R : (count + 1) / R;
    clusters.push({
      start, end: j - 1, startSec: offsets ? offsets[start]! : NaN, endSec: offsets ? offsets[j - 1]! : NaN,
      sign: s as 1 | -1, mass, pValue,
    });
  }
  return {
    t: tObs, threshold, df: engine.df, clusters, nullDistribution: best.slice(nullStart), design: engine.design, alternative,
    exact: engine.exact, permutations: engine.exact ? R : R - 1, seed: ctx.seed, offsets,
    warnings: [...ctx.warnings, ...undefinedTWarning(fn, tObs, engine.bad, offsets)],
  };
}

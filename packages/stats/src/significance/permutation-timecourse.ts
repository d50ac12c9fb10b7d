import { checkOneOf, resolveOptions, rng } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import { buildEngine, checkDesign, tieTolerance } from '../internal/permutation-engine.js';
import type { Design } from '../internal/permutation-engine.js';
import { checkMatrix, checkResamples, checkSameCols, checkSeed, describeColumn, firstIndices, matrixOffsets, warn } from '../internal/validate.js';

export type Alternative = 'two-sided' | 'greater' | 'less';

export interface PermutationTimecourseOptions {
  /** With two matrices: sign flips of paired differences or label shuffles. @defaultValue 'independent' */
  design?: 'paired' | 'independent';
  /** Random permutations N when exact enumeration would exceed N. @defaultValue 5000 */
  permutations?: number;
  /** Direction of the alternative, on the t statistic. @defaultValue 'two-sided' */
  alternative?: Alternative;
  /** Seed of the core Rng (stream 0). @defaultValue 0 */
  seed?: number;
}

/** Per-time-bin permutation test result. */
export interface PermutationTimecourseResult {
  /**
   * Observed t per bin (one-sample / paired: mean/(sd/√n); independent: pooled-variance t).
   * ±∞ where the values (or each group) have zero spread but a non-zero mean (difference), e.g.
   * every trial holds 1 spike; NaN where every value is 0 (one-sample / paired) or the pooled
   * bin holds one value only ('zero-variance-columns' warning).
   */
  readonly t: Float64Array;
  /** Permutation p-value per bin (NaN where the bin holds a non-finite cell). */
  readonly pValue: Float64Array;
  readonly df: number;
  readonly design: Design;
  readonly alternative: Alternative;
  /** Whether every labelling was enumerated (p = share of all labellings, identity included). */
  readonly exact: boolean;
  /** Labellings in the null: the enumeration size, or N random ones (+ the observed one). */
  readonly permutations: number;
  readonly seed: number;
  readonly offsets: Float64Array | undefined;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  design: 'independent' as 'paired' | 'independent',
  permutations: 5000,
  alternative: 'two-sided' as Alternative,
  seed: 0,
});

/**
 * Per-sample permutation test of a trials × time matrix against 0, or of two conditions.
 *
 * With `b` omitted the rows of `a` get random sign flips (H0: the response is symmetric about
 * 0); with design 'paired' the rows of a − b are sign-flipped; with 'independent' the pooled
 * rows are relabelled. The statistic is t per bin; every bin shares each labelling. When all
 * labellings fit in `permutations` (2ⁿ ≤ N for sign flips, C(n1 + n2, n1) ≤ N for labels) they
 * are enumerated and p = #{t* at least as extreme}/#labellings (exact); otherwise
 * p = (1 + b)/(1 + N) over N random labellings (Phipson & Smyth 2010), never 0. Two-sided uses
 * |t*| ≥ |t| (equal to 2·min one-sided p for the symmetric sign-flip null). Ties use a relative
 * tolerance of 1e−10. A labelling with zero spread (up to rounding) has t = ±∞, and infinite t
 * values tie with each other: a bin whose n trials all hold the same non-zero value gets the
 * sign-test p = 2·2⁻ⁿ two-sided, the same for every such value. Feed the p-values to `significantRunsFromPValues` for the
 * consecutive-threshold rule, or to `adjustPValues`.
 *
 * @param a - Trials × bins (a core Matrix or PeriEventMatrix).
 * @param b - Second condition (same bins), or null for a one-sample test.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (< 2 trials in a condition), TF_SHAPE_MISMATCH
 *   (bins differ; paired rows differ), TF_BAD_OPTION, TF_UNKNOWN_OPTION.
 *
 * References
 * - Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero. Statistical
 *   Applications in Genetics and Molecular Biology 9(1):39. doi:10.2202/1544-6115.1585
 * - Good, P. (2005). Permutation, Parametric, and Bootstrap Tests of Hypotheses, 3rd ed. Springer.
 *   doi:10.1007/b138696
 */
export function permutationTimecourse(a: Matrix, b: Matrix | null = null, options: PermutationTimecourseOptions = {}): PermutationTimecourseResult {
  const fn = 'permutationTimecourse';
  const ctx = setupPermutation(fn, a, b, options);
  const { engine, alternative } = ctx;
  const T = engine.cols;
  const R = engine.rows;
  const tObs = new Float64Array(T);
  const pValue = new Float64Array(T);
  engine.forEachBlock((c0, width, t) => {
    for (let jj = 0; jj < width; jj++) {
      const j = c0 + jj;
      const base = jj * R;
      const obs = t[base]!;
      tObs[j] = obs;
      if (!(obs === obs)) { pValue[j] = NaN; continue; }
      const tol = tieTolerance(obs);
      let count = 0;
      const start = engine.exact ? 0 : 1;
      for (let r = start; r < R; r++) {
        const v = t[base + r]!;
        if (alternative === 'two-sided' ? Math.abs(v) >= Math.abs(obs) - tol : alternative === 'greater' ? v >= obs - tol : v <= obs + tol) count++;
      }
      pValue[j] = engine.exact ? count / R : (count + 1) / R; // R = N + 1 in Monte Carlo mode
    }
  });
  return {
    t: tObs, pValue, df: engine.df, design: engine.design, alternative, exact: engine.exact,
    permutations: engine.exact ? R : R - 1, seed: ctx.seed, offsets: ctx.offsets, warnings: [...ctx.warnings, ...undefinedTWarning(fn, tObs, engine.bad, ctx.offsets)],
  };
}

/** Warning for finite bins whose observed t is undefined (all values 0, or the pooled bin holds one value). */
export function undefinedTWarning(fn: string, t: Float64Array, bad: Uint8Array, offsets: Float64Array | undefined): ResultWarning[] {
  const isUndef = (j: number) => bad[j] === 0 && !(t[j] === t[j]);
  let k = 0;
  for (let j = 0; j < t.length; j++) if (isUndef(j)) k++;
  if (k === 0) return [];
  const idx = firstIndices(t.length, isUndef);
  return [warn('zero-variance-columns', `${fn}: ${k} bin(s) have zero variance and no mean (difference) to test, so t is undefined (NaN) there (first: ${idx.map((j) => describeColumn(j, offsets)).join(', ')}); their p is NaN and they never join a cluster.`, { columns: k, first: idx })];
}

/** Shared validation and engine construction of the permutation functions. */
export function setupPermutation(fn: string, a: Matrix, b: Matrix | null, options: object, extraDefaults: object = {}) {
  const ma = checkMatrix(fn, 'a', a);
  const mb = b === null || b === undefined ? null : checkMatrix(fn, 'b', b);
  if (mb) checkSameCols(fn, ma, mb);
  const o = resolveOptions(fn, { ...DEFAULTS, ...extraDefaults }, options) as typeof DEFAULTS & Record<string, unknown>;
  const design2 = checkOneOf(fn, 'design', o.design, ['paired', 'independent'] as const);
  const design: Design = mb === null ? 'one-sample' : design2;
  if (mb) checkDesign(fn, design, ma, mb);
  const permutations = checkResamples(fn, 'permutations', o.permutations, 1);
  const alternative = checkOneOf(fn, 'alternative', o.alternative, ['two-sided', 'greater', 'less'] as const);
  const seed = checkSeed(fn, o.seed);
  const engine = buildEngine(design, ma, mb, permutations, rng(seed).stream(0));
  const offsets = matrixOffsets(ma) ?? (mb ? matrixOffsets(mb) : undefined);
  const warnings: ResultWarning[] = [];
  let nBad = 0;
  for (let j = 0; j < engine.cols; j++) nBad += engine.bad[j]!;
  if (nBad > 0) {
    const idx = firstIndices(engine.cols, (j) => engine.bad[j] === 1);
    warnings.push(warn('non-finite-columns', `${fn}: ${nBad} column(s) hold NaN or ±Infinity (first: ${idx.map((j) => describeColumn(j, offsets)).join(', ')}); their t and p are NaN and they never join a cluster.`, { columns: nBad, first: idx }));
  }
  return { engine, alternative, seed, offsets, warnings, options: o };
}

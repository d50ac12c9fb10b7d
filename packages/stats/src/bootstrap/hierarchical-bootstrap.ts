import { resolveOptions, rng, toFloat64, TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning, Rng } from '@tuningfork/core';
import { CountPlan } from '../internal/count-plan.js';
import { MEAN_SPEC, prepareCondition, runTimecourse } from '../internal/timecourse-engine.js';
import { checkConfidence, checkMatrix, checkResamples, checkSameCols, checkSeed, matrixOffsets, resamplesForLevel, warn } from '../internal/validate.js';

/** Trials × time bins with the animal (and optionally session) each trial came from. */
export interface NestedTrials {
  readonly matrix: Matrix;
  /** Animal label of each row (any numbers; equal numbers = same animal). */
  readonly animal: ArrayLike<number>;
  /** Session label of each row, nested within animal (the pair (animal, session) names a session). */
  readonly session?: ArrayLike<number> | undefined;
}

/** A level of the hierarchy that can be resampled with replacement. */
export type NestedLevel = 'animal' | 'session' | 'trial';

export interface HierarchicalBootstrapOptions {
  /**
   * Levels resampled with replacement; the others are kept whole. 'all' resamples every level
   * present (animal, session when labelled, trial), as Saravanan et al. (2020) do. Resampling
   * every level counts within-unit variance again and is conservative; ['animal'] alone is
   * closer to unbiased for the grand mean (INFERENCE.md §1.3). @defaultValue 'all'
   */
  levels?: 'all' | readonly NestedLevel[];
  /** Bootstrap replicates. @defaultValue 10000 */
  resamples?: number;
  /** Two-sided confidence level of the percentile band. @defaultValue 0.95 */
  confidenceLevel?: number;
  /** Seed of the core Rng (group a: stream 0, group b: stream 1). @defaultValue 0 */
  seed?: number;
}

export interface HierarchicalInterval {
  /** Pooled trial mean per bin (difference a − b for the two-group version). */
  readonly estimate: Float64Array;
  readonly low: Float64Array;
  readonly high: Float64Array;
  readonly standardError: Float64Array;
  /**
   * p_boot per bin: share of replicates > 0, i.e. P*(θ*_a > θ*_b) for a difference. Saravanan
   * et al. call a difference significant when p_boot < α/2 or > 1 − α/2.
   */
  readonly pBoot: Float64Array;
  /** Levels actually resampled. */
  readonly levels: readonly NestedLevel[];
  /** Animals, sessions and trials per group. */
  readonly animals: readonly number[];
  readonly sessions: readonly number[];
  readonly trials: readonly number[];
  readonly offsets: Float64Array | undefined;
  readonly confidenceLevel: number;
  readonly resamples: number;
  readonly seed: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  levels: 'all' as 'all' | readonly NestedLevel[],
  resamples: 10000,
  confidenceLevel: 0.95,
  seed: 0,
});

/** Rows grouped animal → session → trial. */
interface Tree {
  /** sessionsOf[a] = indices into `trialsOf`. */
  readonly sessionsOf: number[][];
  /** trialsOf[s] = row indices. */
  readonly trialsOf: Int32Array[];
}

function buildTree(fn: string, name: string, d: NestedTrials, n: number): Tree {
  const animal = d.animal;
  const session = d.session;
  if (animal === undefined || animal === null || typeof animal.length !== 'number' || animal.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name}.animal must give one label per row (${n}), got ${animal === undefined || animal === null ? 'none' : `length ${animal.length}`}.`, { fn, expected: n });
  }
  if (session !== undefined && session.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: ${name}.session must give one label per row (${n}), got length ${session.length}.`, { fn, expected: n });
  }
  const a = toFloat64(animal);
  const s = session === undefined ? null : toFloat64(session);
  const animals = new Map<number, Map<number, number[]>>();
  for (let i = 0; i < n; i++) {
    const la = a[i]!;
    const ls = s ? s[i]! : 0;
    if (!Number.isFinite(la) || !Number.isFinite(ls)) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: ${name} row ${i} has a non-finite ${!Number.isFinite(la) ? 'animal' : 'session'} label.`, { fn, row: i });
    }
    let sm = animals.get(la);
    if (!sm) { sm = new Map(); animals.set(la, sm); }
    let rows = sm.get(ls);
    if (!rows) { rows = []; sm.set(ls, rows); }
    rows.push(i);
  }
  const sessionsOf: number[][] = [];
  const trialsOf: Int32Array[] = [];
  for (const sm of animals.values()) {
    const list: number[] = [];
    for (const rows of sm.values()) { list.push(trialsOf.length); trialsOf.push(Int32Array.from(rows)); }
    sessionsOf.push(list);
  }
  return { sessionsOf, trialsOf };
}

/** Counts of one nested resample of the tree. */
function drawNested(tree: Tree, r: Rng, resA: boolean, resS: boolean, resT: boolean, counts: Int32Array): void {
  counts.fill(0);
  const A = tree.sessionsOf.length;
  for (let k = 0; k < A; k++) {
    const sessions = tree.sessionsOf[resA ? r.int(A) : k]!;
    const S = sessions.length;
    for (let q = 0; q < S; q++) {
      const trials = tree.trialsOf[sessions[resS ? r.int(S) : q]!]!;
      const nt = trials.length;
      if (resT) for (let t = 0; t < nt; t++) counts[trials[r.int(nt)]!]!++;
      else for (let t = 0; t < nt; t++) counts[trials[t]!]!++;
    }
  }
}

function resolveLevels(fn: string, levels: unknown, hasSessions: boolean): NestedLevel[] {
  if (levels === 'all') return hasSessions ? ['animal', 'session', 'trial'] : ['animal', 'trial'];
  const ok = ['animal', 'session', 'trial'];
  if (!Array.isArray(levels) || levels.length === 0 || levels.some((l) => !ok.includes(l as string))) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: levels must be 'all' or a non-empty list of 'animal', 'session', 'trial', got ${JSON.stringify(levels)}.`, { fn, option: 'levels' });
  }
  if (levels.includes('session') && !hasSessions) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: levels include 'session' but no session labels were given; pass session: [...] or drop 'session'.`, { fn, option: 'levels' });
  }
  return ok.filter((l) => (levels as string[]).includes(l)) as NestedLevel[];
}

function run(fn: string, groups: readonly NestedTrials[], options: HierarchicalBootstrapOptions | undefined): HierarchicalInterval {
  const o = resolveOptions(fn, DEFAULTS, options);
  const R = checkResamples(fn, 'resamples', o.resamples, 2);
  const level = checkConfidence(fn, o.confidenceLevel);
  const seed = checkSeed(fn, o.seed);
  const names = groups.length === 1 ? ['data'] : ['a', 'b'];
  const mats = groups.map((g, k) => {
    if (g === null || typeof g !== 'object') throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${names[k]} must be { matrix, animal, session? }.`, { fn });
    return checkMatrix(fn, `${names[k]}.matrix`, g.matrix);
  });
  if (mats.length === 2) checkSameCols(fn, mats[0]!, mats[1]!);
  const trees = groups.map((g, k) => buildTree(fn, names[k]!, g, mats[k]!.rows));
  const hasSessions = groups.every((g) => g.session !== undefined);
  const levels = resolveLevels(fn, o.levels, hasSessions);
  const resA = levels.includes('animal');
  const resS = levels.includes('session');
  const resT = levels.includes('trial');
  const root = rng(seed);
  const conds = groups.map((_, k) => {
    const m = mats[k]!;
    const plan = new CountPlan(R, m.rows);
    const counts = new Int32Array(m.rows);
    const r = root.stream(k);
    for (let b = 0; b < R; b++) {
      drawNested(trees[k]!, r, resA, resS, resT, counts);
      plan.set(b, counts);
    }
    return prepareCondition(fn, `${names[k]}.matrix`, m, MEAN_SPEC, 'propagate', plan);
  });
  const offsets = matrixOffsets(mats[0]!) ?? (mats[1] ? matrixOffsets(mats[1]) : undefined);
  const res = runTimecourse(conds, {
    fn, spec: MEAN_SPEC, bca: false, alpha: (1 - level) / 2, keepReplicates: false, offsets, nan: 'propagate', shareAboveZero: true,
  });
  const animals = trees.map((t) => t.sessionsOf.length);
  const warnings: ResultWarning[] = [...res.warnings, ...resamplesForLevel(fn, R, level)];
  animals.forEach((A, k) => {
    if (A < 5) {
      warnings.push(warn('few-top-level-units', `${fn}: ${names[k]} has ${A} animal(s); with fewer than 5 top-level units no bootstrap interval is reliable (INFERENCE.md §1.3). Report the number of animals with the band.`, { group: names[k], animals: A }));
    }
  });
  return {
    estimate: res.estimate, low: res.low, high: res.high, standardError: res.standardError, pBoot: res.shareAboveZero!,
    levels, animals, sessions: trees.map((t) => t.trialsOf.length), trials: mats.map((m) => m.rows), offsets,
    confidenceLevel: level, resamples: R, seed, warnings,
  };
}

/**
 * Hierarchical (nested) bootstrap band of the pooled trial mean per time bin, for data from
 * several animals (and sessions).
 *
 * **Method** (Saravanan, Berman & Sober 2020). Per replicate: draw animals with replacement;
 * within each drawn animal draw its sessions with replacement; within each drawn session draw
 * its trials with replacement; the statistic is the mean of the pooled resampled trials. The
 * option `levels` chooses which levels are resampled (the others are taken whole). Pitfall
 * (INFERENCE.md §1.3): resampling every level counts the within-unit variance again — for a
 * balanced design with A animals × n trials, Var* = S_b/A + S_w/(An) instead of S_b/A when only
 * animals are resampled — so 'all' is conservative. With fewer than 5 animals no bootstrap
 * interval is reliable: a 'few-top-level-units' warning says so; always report the number of
 * animals (`animals`). The band is the percentile interval (type-7 quantiles); BCa is not
 * offered because a nested jackknife is not defined here. Non-finite bins are NaN with a
 * warning.
 *
 * @param data - `{ matrix, animal, session? }` with one animal (and session) label per row.
 * @throws {TuningforkError} TF_TOO_FEW_SAMPLES (< 2 trials), TF_SHAPE_MISMATCH (label lengths),
 *   TF_NON_FINITE (non-finite labels), TF_BAD_OPTION (levels), TF_UNKNOWN_OPTION.
 *
 * References
 * - Saravanan, V., Berman, G. J. & Sober, S. J. (2020). Application of the hierarchical bootstrap
 *   to multi-level data in neuroscience. Neurons, Behavior, Data analysis, and Theory 3(5).
 *   https://nbdt.scholasticahq.com/article/13927
 * - Davison, A. C. & Hinkley, D. V. (1997). Bootstrap Methods and their Application, §3.8.
 *   Cambridge University Press. doi:10.1017/CBO9780511802843
 */
export function hierarchicalBootstrap(data: NestedTrials, options: HierarchicalBootstrapOptions = {}): HierarchicalInterval {
  return run('hierarchicalBootstrap', [data], options);
}

/**
 * Hierarchical bootstrap band of the difference of pooled means between two groups (a − b),
 * each resampled independently as in `hierarchicalBootstrap`; `pBoot` = P*(θ*_a > θ*_b).
 *
 * @throws {TuningforkError} as `hierarchicalBootstrap`; TF_SHAPE_MISMATCH when the bins differ.
 *
 * References
 * - Saravanan, V., Berman, G. J. & Sober, S. J. (2020). Neurons, Behavior, Data analysis, and
 *   Theory 3(5).
 */
export function hierarchicalBootstrapDifference(a: NestedTrials, b: NestedTrials, options: HierarchicalBootstrapOptions = {}): HierarchicalInterval {
  return run('hierarchicalBootstrapDifference', [a, b], options);
}

import { TuningforkError, checkInteger, resolveOptions, toFloat64 } from '@tuningfork/core';

/** Options of {@link blockedFolds}. */
export interface BlockedFoldsOptions {
  /** Number of contiguous test blocks. @defaultValue 5 */
  nFolds?: number;
  /** Rows left out of training on each side of a test block (one kernel length). @defaultValue 0 */
  gapBins?: number;
  /**
   * Candidate cut rows, ascending (e.g. the bins of trial starts): block edges are moved to the
   * nearest candidate so every block holds whole trials. Empty: cut anywhere. @defaultValue []
   */
  cutCandidates?: ArrayLike<number>;
}

/**
 * Blocked cross-validation layout on rows 0 … nRows − 1. Test block f is rows
 * [testStart[f], testEnd[f]); its training set is every row outside
 * [testStart[f] − gapBins, testEnd[f] + gapBins). Test blocks partition the rows.
 * `cuts` are the sorted segment boundaries (0 and nRows included) that every test block and
 * exclusion zone is a union of; segment s is rows [cuts[s], cuts[s+1]).
 */
export interface FoldLayout {
  readonly nRows: number;
  readonly nFolds: number;
  readonly gapBins: number;
  readonly testStart: Int32Array;
  readonly testEnd: Int32Array;
  readonly cuts: Int32Array;
  /** Segment index range [first, end) of each test block: testSeg[2f], testSeg[2f+1]. */
  readonly testSeg: Int32Array;
  /** Segment index range [first, end) of each exclusion zone (test block ± gap). */
  readonly exclSeg: Int32Array;
}

const DEFAULTS = Object.freeze({ nFolds: 5, gapBins: 0, cutCandidates: [] as ArrayLike<number> });

/**
 * Split rows into contiguous cross-validation blocks with a gap between training and test rows.
 *
 * Blocks are never random samples: photometry and binned spikes are autocorrelated and kernels
 * cross trial boundaries, so neighbouring rows of a test block must not train the model
 * (INFERENCE.md §4.3, common practice). Blocks have near-equal row counts; with
 * `cutCandidates` (trial starts) each edge moves to the nearest candidate so blocks hold whole
 * trials.
 *
 * @throws {TuningforkError} TF_BAD_OPTION (nFolds < 2, negative gap); TF_TOO_FEW_SAMPLES when
 *   there are fewer candidate cuts (trials) than folds need, a block would be empty, or a
 *   training set would have fewer than 2 rows.
 */
export function blockedFolds(nRows: number, options: BlockedFoldsOptions = {}): FoldLayout {
  const fn = 'blockedFolds';
  const o = resolveOptions(fn, DEFAULTS, options);
  const n = checkInteger(fn, 'nRows', nRows, 2);
  const k = checkInteger(fn, 'nFolds', o.nFolds, 2);
  const gap = checkInteger(fn, 'gapBins', o.gapBins, 0);
  const cand = toFloat64(o.cutCandidates);
  const edges = new Int32Array(k + 1);
  edges[k] = n;
  if (cand.length > 0) {
    const inner: number[] = [];
    for (let i = 0; i < cand.length; i++) {
      const c = Math.round(cand[i]!);
      if (c > 0 && c < n && (inner.length === 0 || c > inner[inner.length - 1]!)) inner.push(c);
    }
    if (inner.length < k - 1) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${k} folds of whole trials need at least ${k - 1} trial starts inside the session, got ${inner.length}. Use fewer folds or cut by time (cutCandidates: []).`, { nFolds: k, candidates: inner.length });
    }
    let lo = 0;
    for (let f = 1; f < k; f++) {
      const target = (f * n) / k;
      // nearest candidate not before lo and leaving enough candidates for the remaining cuts
      let best = -1;
      for (let i = lo; i <= inner.length - (k - f); i++) {
        if (best < 0 || Math.abs(inner[i]! - target) < Math.abs(inner[best]! - target)) best = i;
      }
      edges[f] = inner[best]!;
      lo = best + 1;
    }
  } else {
    for (let f = 1; f < k; f++) edges[f] = Math.round((f * n) / k);
  }
  for (let f = 0; f < k; f++) {
    if (!(edges[f + 1]! > edges[f]!)) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: fold ${f} would be empty (${n} rows, ${k} folds).`, { fold: f, nRows: n });
    }
    const trainRows = n - (Math.min(n, edges[f + 1]! + gap) - Math.max(0, edges[f]! - gap));
    if (trainRows < 2) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: fold ${f} leaves ${trainRows} training rows (block ${edges[f]}–${edges[f + 1]} plus a gap of ${gap} bins on each side of ${n} rows). Use more folds or a shorter gap.`, { fold: f, trainRows, gapBins: gap });
    }
  }
  const cutSet = new Set<number>([0, n]);
  for (let f = 0; f <= k; f++) {
    cutSet.add(edges[f]!);
    cutSet.add(Math.max(0, Math.min(n, edges[f]! - gap)));
    cutSet.add(Math.max(0, Math.min(n, edges[f]! + gap)));
  }
  const cuts = Int32Array.from([...cutSet].sort((a, b) => a - b));
  const segOf = (row: number) => cuts.indexOf(row);
  const testSeg = new Int32Array(2 * k);
  const exclSeg = new Int32Array(2 * k);
  for (let f = 0; f < k; f++) {
    testSeg[2 * f] = segOf(edges[f]!);
    testSeg[2 * f + 1] = segOf(edges[f + 1]!);
    exclSeg[2 * f] = segOf(Math.max(0, edges[f]! - gap));
    exclSeg[2 * f + 1] = segOf(Math.min(n, edges[f + 1]! + gap));
  }
  return { nRows: n, nFolds: k, gapBins: gap, testStart: edges.slice(0, k), testEnd: edges.slice(1), cuts, testSeg, exclSeg };
}

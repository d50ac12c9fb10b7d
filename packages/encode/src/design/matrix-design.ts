import { TuningforkError, checkFinite, checkSampleRate, resolveOptions } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import type { DesignTerm, EncodingDesign } from './design-matrix.js';

/** Options of {@link matrixDesign}. */
export interface MatrixDesignOptions {
  /** Group of each column (length = cols). Required. @defaultValue [] */
  columnGroups?: readonly string[];
  /** Name of each column. @defaultValue ['x0', 'x1', …] */
  columnNames?: readonly string[];
  /** Row rate, Hz (row i is at startSec + i / binRate). @defaultValue 1 */
  binRate?: number;
  /** Time of row 0, seconds. @defaultValue 0 */
  startSec?: number;
  /** Kernel length to assume for CV gaps and minimum shifts, rows. @defaultValue 1 */
  kernelBins?: number;
}

const DEFAULTS = Object.freeze({ columnGroups: [] as readonly string[], columnNames: [] as readonly string[], binRate: 1, startSec: 0, kernelBins: 1 });

/**
 * Wrap an arbitrary dense design (rows = time bins) as an {@link EncodingDesign}, so custom
 * regressors can use the cross-validated fits, group contributions and shift nulls. Each column
 * becomes its own single-lag term (stored centred by its mean, which the intercept absorbs).
 * Columns that are constant over all rows (an all-zero event column, an intercept column) carry
 * nothing the intercept does not and are dropped, as in {@link designMatrix}, with a
 * TF_DEGENERATE_SIGNAL warning naming them; the remaining columns keep their names and order.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (groups/names length ≠ cols); TF_NON_FINITE (a
 *   non-finite entry, naming row and column); TF_BAD_OPTION (empty group name);
 *   TF_TOO_FEW_SAMPLES (a group whose columns are all constant: nothing of it could be tested).
 */
export function matrixDesign(x: Matrix, options: MatrixDesignOptions = {}): EncodingDesign {
  const fn = 'matrixDesign';
  const o = resolveOptions(fn, DEFAULTS, options);
  const { rows: n, cols: p, data } = x;
  const rate = checkSampleRate(fn, o.binRate);
  const t0 = checkFinite(fn, 'startSec', o.startSec);
  if (data.length !== n * p) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: data length ${data.length} ≠ rows × cols = ${n} × ${p}.`, { rows: n, cols: p });
  if (o.columnGroups.length !== p) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: columnGroups has ${o.columnGroups.length} entries for ${p} columns; give every column a group.`, { cols: p });
  }
  const names = o.columnNames.length > 0 ? o.columnNames : Array.from({ length: p }, (_, j) => `x${j}`);
  if (names.length !== p) throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: columnNames has ${names.length} entries for ${p} columns.`, { cols: p });
  const groups = [...new Set(o.columnGroups)];
  if (groups.some((g) => typeof g !== 'string' || g.length === 0)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: group names must be non-empty strings.`, {});
  // Columns kept: not constant over the rows. A constant column centres to a constant of
  // rounding size (0.1 − mean(0.1, …) ≈ −7e-16), which standardisation would blow up to a unit
  // column of noise and which makes a Poisson GLM's information singular.
  const keep: number[] = [];
  const dropped: string[] = [];
  for (let j = 0; j < p; j++) {
    let constant = true;
    for (let i = 0; i < n; i++) {
      const v = data[i * p + j]!;
      if (!Number.isFinite(v)) throw new TuningforkError('TF_NON_FINITE', `${fn}: X[${i}, ${j}] is ${v}; mask such rows before building the design.`, { row: i, col: j });
      if (v !== data[j]) constant = false;
    }
    if (constant) dropped.push(names[j]!);
    else keep.push(j);
  }
  for (const g of groups) {
    if (!keep.some((j) => o.columnGroups[j] === g)) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: every column of group '${g}' is constant over the ${n} rows (e.g. an event that never occurs); the group has nothing to test. Remove it from the design.`, { group: g });
    }
  }
  const warnings: ResultWarning[] = [];
  if (dropped.length > 0) {
    warnings.push({ code: 'TF_DEGENERATE_SIGNAL', message: `${fn}: dropped ${dropped.length} constant column(s) (${dropped.join(', ')}): the intercept already holds them.`, details: { dropped } });
  }
  const q = keep.length;
  const terms: DesignTerm[] = [];
  const centred = new Float64Array(n * q);
  keep.forEach((j, jk) => {
    let s = 0;
    for (let i = 0; i < n; i++) s += data[i * p + j]!;
    const mu = s / n;
    const series = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const v = data[i * p + j]! - mu;
      series[i] = v;
      centred[i * q + jk] = v;
    }
    terms.push({
      name: names[j]!, group: o.columnGroups[j]!, kind: 'covariate', firstColumn: jk, nColumns: 1, lagStart: 0, nLags: 1,
      kernels: new Float64Array([1]), lagsSec: new Float64Array([0]), eventBins: new Int32Array(0),
      eventWeights: new Float64Array(0), series, modulatorMean: NaN,
    });
  });
  const rowPtr = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) {
    let c = 0;
    for (let j = 0; j < q; j++) if (centred[i * q + j] !== 0) c++;
    rowPtr[i + 1] = rowPtr[i]! + c;
  }
  const colIdx = new Int32Array(rowPtr[n]!);
  const values = new Float64Array(rowPtr[n]!);
  for (let i = 0, k = 0; i < n; i++) {
    for (let j = 0; j < q; j++) {
      const v = centred[i * q + j]!;
      if (v !== 0) {
        colIdx[k] = j;
        values[k++] = v;
      }
    }
  }
  return {
    nRows: n, nCols: q, t0, binRate: rate, columnNames: keep.map((j) => names[j]!),
    columnGroup: Int32Array.from(keep, (j) => groups.indexOf(o.columnGroups[j]!)), columnTerm: Int32Array.from({ length: q }, (_, j) => j),
    groups, terms, rowPtr, colIdx, values, rowValid: null, nMaskedRows: 0, maxKernelBins: Math.max(1, Math.round(o.kernelBins)), warnings,
  };
}

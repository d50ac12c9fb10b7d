import {
  TuningforkError, checkBoolean, checkFinite, checkInteger, checkSampleRate,
  formatValue, resolveOptions, toFloat64,
} from '@tuningfork/core';
import type { Matrix, ResultWarning, UniformSignal } from '@tuningfork/core';
import { raisedCosineBasis } from '../basis/raised-cosine-basis.js';
import type { RaisedCosineBasisOptions } from '../basis/raised-cosine-basis.js';

/** An event-locked kernel: a raised-cosine basis placed at each event, optionally scaled per event. */
export interface EventRegressor {
  /** Name of the kernel (column names are `name[j]`); unique within a design. */
  readonly name: string;
  /** Variable group, e.g. 'reward' or 'movement'; groups are what ΔR² and nulls test. */
  readonly group: string;
  /** Event times, seconds on the session clock (any order). */
  readonly times: ArrayLike<number>;
  /**
   * Per-event values (same length as `times`): the kernel of each event is scaled by the
   * (centred) value — a parametric modulator such as RPE or APE. NaN values are replaced by the
   * mean (0 after centring) and counted in a warning.
   */
  readonly modulator?: ArrayLike<number>;
  /** Subtract the mean of the modulator over the events used. @defaultValue true */
  readonly centreModulator?: boolean;
  /** Basis options (sampleRate is the design's binRate). @defaultValue 8 bumps over 0–3 s */
  readonly basis?: Omit<RaisedCosineBasisOptions, 'sampleRate'>;
}

/** A continuous covariate (speed, acceleration …) entered with lags. */
export interface CovariateRegressor {
  readonly name: string;
  readonly group: string;
  /** Samples on the design grid: same rate as `binRate`, t0 on a bin of the grid. */
  readonly signal: UniformSignal;
  /**
   * Lag window [from, to] in seconds: the column for lag ℓ holds x(t − ℓ), so positive lags are
   * past covariate values. @defaultValue [0, 0]
   */
  readonly lagsSec?: readonly [number, number];
  /**
   * 0: one column per lag bin; k > 0: k linear raised-cosine bumps across the lag window
   * (interior sum 2). @defaultValue 0
   */
  readonly nBumps?: number;
}

export type Regressor = EventRegressor | CovariateRegressor;

/** Options of {@link designMatrix}: the time grid. */
export interface DesignMatrixOptions {
  /** Start of the grid, seconds (time of row 0). Required. @defaultValue NaN */
  startSec?: number;
  /** End of the grid, seconds; rows are startSec + i/binRate < endSec. Required. @defaultValue NaN */
  endSec?: number;
  /** Bin rate of the grid, Hz. @defaultValue 50 */
  binRate?: number;
}

/**
 * Structure of one regressor inside a design: column j of the term is the convolution of the
 * term's source with kernel h_j: x_j(t) = Σ_ℓ h_j(ℓ)·s(t − ℓ), ℓ = lagStart … lagStart + nLags − 1
 * (bins). Events are impulses at their nearest bin; covariates are their centred series.
 */
export interface DesignTerm {
  readonly name: string;
  readonly group: string;
  readonly kind: 'event' | 'covariate';
  /** Index of the term's first column in the design and number of its columns. */
  readonly firstColumn: number;
  readonly nColumns: number;
  /** First lag (bins, may be negative) and number of lags of the kernels. */
  readonly lagStart: number;
  readonly nLags: number;
  /** nLags × nColumns row-major: kernels[i * nColumns + j] = h_j(lagStart + i). */
  readonly kernels: Float64Array;
  /** Lag of each kernel row, seconds. */
  readonly lagsSec: Float64Array;
  /** Events: bin of each event used (may lie outside [0, nRows) if its kernel reaches in). */
  readonly eventBins: Int32Array;
  /** Events: weight of each event (1, or the centred modulator value). */
  readonly eventWeights: Float64Array;
  /** Covariates: the centred series on the grid (NaN replaced by 0); empty for events. */
  readonly series: Float64Array;
  /** Events: mean subtracted from the modulator (NaN when unmodulated or not centred). */
  readonly modulatorMean: number;
}

/**
 * A design matrix on a uniform time grid, stored sparse (CSR, raw unstandardised values) with
 * the structure needed to reconstruct kernels and to compute shifted cross-products quickly.
 */
export interface EncodingDesign {
  readonly nRows: number;
  readonly nCols: number;
  /** Time of row i is t0 + i / binRate (seconds). */
  readonly t0: number;
  readonly binRate: number;
  readonly columnNames: readonly string[];
  /** Group index of each column (into `groups`). */
  readonly columnGroup: Int32Array;
  /** Term index of each column (into `terms`). */
  readonly columnTerm: Int32Array;
  /** Group names in order of first appearance. */
  readonly groups: readonly string[];
  readonly terms: readonly DesignTerm[];
  /** CSR storage: row r holds colIdx/values[rowPtr[r] … rowPtr[r+1]), column indices ascending. */
  readonly rowPtr: Int32Array;
  readonly colIdx: Int32Array;
  readonly values: Float64Array;
  /** 1 for usable rows, 0 for rows masked because a covariate was NaN; null when all are usable. */
  readonly rowValid: Uint8Array | null;
  readonly nMaskedRows: number;
  /** Longest kernel support over all terms, bins (sets the CV gap and the minimum shift). */
  readonly maxKernelBins: number;
  /** Documented repairs (dropped events, replaced NaN modulators, dropped constant columns …). */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ startSec: NaN, endSec: NaN, binRate: 50 });
const FN = 'designMatrix';

interface Block {
  term: Omit<DesignTerm, 'firstColumn' | 'nColumns' | 'kernels'>;
  kernels: Float64Array;
  nCols: number;
  /** nRows × nCols values of this term, row-major. */
  dense: Float64Array;
  names: string[];
}

function isEvent(r: Regressor): r is EventRegressor {
  return (r as EventRegressor).times !== undefined;
}

/**
 * Build an encoding-model design matrix from event kernels, parametric modulators and lagged
 * continuous covariates on a time grid of `binRate` Hz from `startSec` to `endSec`.
 *
 * Each event regressor places a raised-cosine basis ({@link raisedCosineBasis}) at every event
 * (snapped to the nearest bin, at most half a bin away), scaled by the centred modulator when one
 * is given; list the same events twice — once plain, once modulated — to keep the unscaled kernel
 * too. Events whose kernel never reaches the grid are dropped and counted. Covariates enter as
 * x(t − ℓ) for the lags in `lagsSec` (or a raised-cosine lag basis), centred by their mean and
 * padded with it at the grid edges; rows where a used covariate sample is NaN are masked for
 * every fit and counted. Columns are stored raw: the fitting functions standardise them on
 * training data only. Columns that are constant over usable rows are dropped (warning).
 *
 * @param regressors - Event and covariate regressors; each names its group.
 * @returns An {@link EncodingDesign} (sparse rows, column names and groups, term structure).
 * @throws {TuningforkError} TF_BAD_OPTION (grid missing or invalid, duplicate names, bad lags);
 *   TF_SHAPE_MISMATCH (modulator length ≠ times length, covariate not on the grid);
 *   TF_BAD_EVENTS (non-finite event time, naming its index); TF_WINDOW_OUT_OF_RANGE (a kernel
 *   at least as long as the grid); TF_TOO_FEW_SAMPLES (a group left without any usable column,
 *   e.g. no event inside the session or a constant modulator).
 */
export function designMatrix(regressors: readonly Regressor[], options: DesignMatrixOptions = {}): EncodingDesign {
  const o = resolveOptions(FN, DEFAULTS, options);
  const rate = checkSampleRate(FN, o.binRate);
  const t0 = checkFinite(FN, 'startSec', o.startSec);
  const t1 = checkFinite(FN, 'endSec', o.endSec);
  const n = Math.floor((t1 - t0) * rate + 1e-9);
  if (n < 2) {
    throw new TuningforkError('TF_BAD_OPTION', `${FN}: the grid from startSec=${t0} to endSec=${t1} at ${rate} Hz has ${n} bins; need at least 2.`, { startSec: t0, endSec: t1, binRate: rate });
  }
  if (!Array.isArray(regressors) || regressors.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${FN}: regressors must be a non-empty array, got ${formatValue(regressors)}.`, {});
  }
  const warnings: ResultWarning[] = [];
  const names = new Set<string>();
  const blocks: Block[] = [];
  const rowValid = new Uint8Array(n).fill(1);
  for (let r = 0; r < regressors.length; r++) {
    const reg = regressors[r]!;
    if (typeof reg?.name !== 'string' || reg.name.length === 0 || typeof reg.group !== 'string' || reg.group.length === 0) {
      throw new TuningforkError('TF_BAD_OPTION', `${FN}: regressor ${r} needs a non-empty name and group.`, { index: r });
    }
    if (names.has(reg.name)) throw new TuningforkError('TF_BAD_OPTION', `${FN}: regressor name '${reg.name}' is used twice; names must be unique.`, { name: reg.name });
    names.add(reg.name);
    blocks.push(isEvent(reg) ? eventBlock(reg, n, t0, rate, warnings) : covariateBlock(reg, n, t0, rate, rowValid));
  }
  // Masked rows: zero them so they contribute nothing anywhere.
  let nMasked = 0;
  for (let i = 0; i < n; i++) if (!rowValid[i]) nMasked++;
  if (nMasked > 0) {
    for (const b of blocks) for (let i = 0; i < n; i++) if (!rowValid[i]) b.dense.fill(0, i * b.nCols, (i + 1) * b.nCols);
    warnings.push({ code: 'TF_NON_FINITE', message: `${FN}: ${nMasked} of ${n} rows are masked because a covariate sample they use is NaN.`, details: { nMaskedRows: nMasked } });
  }
  // Drop constant columns (over usable rows).
  const kept: Block[] = [];
  for (const b of blocks) {
    const keep: number[] = [];
    for (let j = 0; j < b.nCols; j++) if (!isConstantColumn(b.dense, b.nCols, j, n, rowValid)) keep.push(j);
    if (keep.length < b.nCols) {
      const dropped = [];
      for (let j = 0; j < b.nCols; j++) if (!keep.includes(j)) dropped.push(b.names[j]!);
      warnings.push({ code: 'TF_DEGENERATE_SIGNAL', message: `${FN}: dropped ${dropped.length} constant column(s) of '${b.term.name}' (${dropped.join(', ')}): no event or covariate variation reaches them on this grid.`, details: { term: b.term.name, dropped } });
      if (keep.length === 0) continue;
      kept.push(selectColumns(b, keep));
    } else {
      kept.push(b);
    }
  }
  const groupsAll = [...new Set(regressors.map((r) => r.group))];
  const groups = groupsAll.filter((g) => kept.some((b) => b.term.group === g));
  for (const g of groupsAll) {
    if (!groups.includes(g)) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${FN}: group '${g}' has no usable column: its events fall outside the grid [${t0}, ${t1}) s, or its modulator/covariate is constant there. Remove the group or check its times.`, { group: g });
    }
  }
  // Assemble CSR.
  const p = kept.reduce((s, b) => s + b.nCols, 0);
  const columnNames: string[] = [];
  const columnGroup = new Int32Array(p);
  const columnTerm = new Int32Array(p);
  const terms: DesignTerm[] = [];
  let first = 0;
  let maxKernelBins = 0;
  kept.forEach((b, ti) => {
    terms.push({ ...b.term, firstColumn: first, nColumns: b.nCols, kernels: b.kernels });
    for (let j = 0; j < b.nCols; j++) {
      columnNames.push(b.names[j]!);
      columnGroup[first + j] = groups.indexOf(b.term.group);
      columnTerm[first + j] = ti;
    }
    maxKernelBins = Math.max(maxKernelBins, b.term.nLags);
    first += b.nCols;
  });
  if (maxKernelBins >= n) {
    const longest = kept.reduce((a, b) => (b.term.nLags > a.term.nLags ? b : a));
    throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${FN}: kernel '${longest.term.name}' spans ${longest.term.nLags} bins (${(longest.term.nLags / rate).toFixed(3)} s) but the grid has only ${n} bins (${(n / rate).toFixed(3)} s). Shorten the kernel or lengthen the session.`, { term: longest.term.name, kernelBins: longest.term.nLags, nRows: n });
  }
  const rowPtr = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) {
    let c = 0;
    for (const b of kept) {
      const base = i * b.nCols;
      for (let j = 0; j < b.nCols; j++) if (b.dense[base + j] !== 0) c++;
    }
    rowPtr[i + 1] = rowPtr[i]! + c;
  }
  const nnz = rowPtr[n]!;
  const colIdx = new Int32Array(nnz);
  const values = new Float64Array(nnz);
  for (let i = 0; i < n; i++) {
    let k = rowPtr[i]!;
    for (let ti = 0; ti < kept.length; ti++) {
      const b = kept[ti]!;
      const base = i * b.nCols;
      const col0 = terms[ti]!.firstColumn;
      for (let j = 0; j < b.nCols; j++) {
        const v = b.dense[base + j]!;
        if (v !== 0) {
          colIdx[k] = col0 + j;
          values[k++] = v;
        }
      }
    }
  }
  return {
    nRows: n, nCols: p, t0, binRate: rate, columnNames, columnGroup, columnTerm, groups, terms,
    rowPtr, colIdx, values, rowValid: nMasked > 0 ? rowValid : null, nMaskedRows: nMasked,
    maxKernelBins, warnings,
  };
}

function isConstantColumn(dense: Float64Array, m: number, j: number, n: number, valid: Uint8Array): boolean {
  let first = NaN;
  for (let i = 0; i < n; i++) {
    if (!valid[i]) continue;
    const v = dense[i * m + j]!;
    if (first !== first) first = v;
    else if (v !== first) return false;
  }
  return true;
}

function selectColumns(b: Block, keep: number[]): Block {
  const m = keep.length;
  const n = b.dense.length / b.nCols;
  const dense = new Float64Array(n * m);
  for (let i = 0; i < n; i++) for (let k = 0; k < m; k++) dense[i * m + k] = b.dense[i * b.nCols + keep[k]!]!;
  const nLags = b.term.nLags;
  const kernels = new Float64Array(nLags * m);
  for (let i = 0; i < nLags; i++) for (let k = 0; k < m; k++) kernels[i * m + k] = b.kernels[i * b.nCols + keep[k]!]!;
  return { term: b.term, kernels, nCols: m, dense, names: keep.map((j) => b.names[j]!) };
}

function eventBlock(reg: EventRegressor, n: number, t0: number, rate: number, warnings: ResultWarning[]): Block {
  const times = toFloat64(reg.times);
  const centre = reg.centreModulator === undefined ? true : checkBoolean(FN, `${reg.name}.centreModulator`, reg.centreModulator);
  for (let e = 0; e < times.length; e++) {
    if (!Number.isFinite(times[e])) {
      throw new TuningforkError('TF_BAD_EVENTS', `${FN}: event ${e} of '${reg.name}' has non-finite time ${times[e]}.`, { term: reg.name, index: e });
    }
  }
  const mod = reg.modulator === undefined ? null : toFloat64(reg.modulator);
  if (mod && mod.length !== times.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${FN}: '${reg.name}' has ${times.length} event times but ${mod.length} modulator values; they must match one to one.`, { term: reg.name, times: times.length, modulator: mod.length });
  }
  const basis = raisedCosineBasis({ ...(reg.basis ?? {}), sampleRate: rate });
  const { lagStart } = basis;
  const nLags = basis.basis.rows;
  const m = basis.basis.cols;
  const h = basis.basis.data;
  // Keep events whose kernel support intersects [0, n).
  const bins: number[] = [];
  const vals: number[] = [];
  let nNaN = 0;
  for (let e = 0; e < times.length; e++) {
    const u = Math.floor((times[e]! - t0) * rate + 0.5);
    if (u + lagStart + nLags - 1 < 0 || u + lagStart >= n) continue;
    bins.push(u);
    let v = mod ? mod[e]! : 1;
    if (mod && !Number.isFinite(v)) {
      nNaN++;
      v = NaN;
    }
    vals.push(v);
  }
  const dropped = times.length - bins.length;
  if (dropped > 0) warnings.push({ code: 'TF_WINDOW_OUT_OF_RANGE', message: `${FN}: ${dropped} of ${times.length} '${reg.name}' events lie too far outside the grid for their kernel to reach it; dropped.`, details: { term: reg.name, dropped } });
  let mean = NaN;
  if (mod) {
    let s = 0;
    let c = 0;
    for (const v of vals) if (v === v) { s += v; c++; }
    const mu = c > 0 ? s / c : 0;
    mean = centre ? mu : NaN;
    for (let k = 0; k < vals.length; k++) {
      const v = vals[k]!;
      vals[k] = v === v ? (centre ? v - mu : v) : (centre ? 0 : mu);
    }
    if (nNaN > 0) warnings.push({ code: 'TF_NON_FINITE', message: `${FN}: ${nNaN} modulator value(s) of '${reg.name}' are NaN; those events get the mean value (0 after centring).`, details: { term: reg.name, nNaN } });
  }
  const dense = new Float64Array(n * m);
  for (let k = 0; k < bins.length; k++) {
    const u = bins[k]!;
    const w = vals[k]!;
    if (w === 0) continue;
    const iLo = Math.max(0, -(u + lagStart));
    const iHi = Math.min(nLags, n - (u + lagStart));
    for (let i = iLo; i < iHi; i++) {
      const row = (u + lagStart + i) * m;
      const hr = i * m;
      for (let j = 0; j < m; j++) dense[row + j] = dense[row + j]! + w * h[hr + j]!;
    }
  }
  const names = Array.from({ length: m }, (_, j) => `${reg.name}[${j}]`);
  return {
    term: {
      name: reg.name, group: reg.group, kind: 'event', lagStart, nLags, lagsSec: basis.lagsSec,
      eventBins: Int32Array.from(bins), eventWeights: Float64Array.from(vals), series: new Float64Array(0), modulatorMean: mean,
    },
    kernels: Float64Array.from(h), nCols: m, dense, names,
  };
}

function covariateBlock(reg: CovariateRegressor, n: number, t0: number, rate: number, rowValid: Uint8Array): Block {
  const s = reg.signal;
  if (!s || !(s.values instanceof Float64Array)) {
    throw new TuningforkError('TF_BAD_OPTION', `${FN}: covariate '${reg.name}' needs a UniformSignal with Float64Array values.`, { term: reg.name });
  }
  checkSampleRate(`${FN} (covariate '${reg.name}')`, s.sampleRate);
  const off = (s.t0 - t0) * rate;
  if (Math.abs(s.sampleRate - rate) > 1e-9 * rate || Math.abs(off - Math.round(off)) > 1e-6) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${FN}: covariate '${reg.name}' is sampled at ${s.sampleRate} Hz from t0=${s.t0} s, but the grid is ${rate} Hz from ${t0} s. Resample it onto the grid first.`, { term: reg.name, sampleRate: s.sampleRate, t0: s.t0 });
  }
  const o = Math.round(off);
  const lags = reg.lagsSec ?? [0, 0];
  const l0 = Math.round(checkFinite(FN, `${reg.name}.lagsSec[0]`, lags[0]) * rate);
  const l1 = Math.round(checkFinite(FN, `${reg.name}.lagsSec[1]`, lags[1]) * rate);
  if (l1 < l0) throw new TuningforkError('TF_BAD_OPTION', `${FN}: covariate '${reg.name}' lagsSec [${lags[0]}, ${lags[1]}] must be increasing.`, { term: reg.name });
  const nBumps = checkInteger(FN, `${reg.name}.nBumps`, reg.nBumps ?? 0, 0);
  const nLags = l1 - l0 + 1;
  // Kernels: identity per lag, or linear raised cosines across the window.
  let m: number;
  let kern: Float64Array;
  if (nBumps === 0 || nLags === 1) {
    m = nLags;
    kern = new Float64Array(nLags * m);
    for (let i = 0; i < nLags; i++) kern[i * m + i] = 1;
  } else {
    m = nBumps;
    kern = new Float64Array(nLags * m);
    const spacing = nBumps > 1 ? (nLags - 1) / (nBumps - 1) : nLags;
    for (let i = 0; i < nLags; i++) {
      for (let j = 0; j < m; j++) {
        const ph = ((i - j * spacing) * Math.PI) / (2 * spacing);
        kern[i * m + j] = ph <= -Math.PI || ph >= Math.PI ? 0 : 0.5 * (1 + Math.cos(ph));
      }
    }
  }
  // Series on the grid (NaN where the signal is missing), centred by its finite mean.
  const series = new Float64Array(n);
  const isNaN_ = new Uint8Array(n);
  let sum = 0;
  let cnt = 0;
  for (let i = 0; i < n; i++) {
    const k = i - o;
    const v = k >= 0 && k < s.values.length ? s.values[k]! : NaN;
    if (Number.isFinite(v)) {
      series[i] = v;
      sum += v;
      cnt++;
    } else {
      isNaN_[i] = 1;
    }
  }
  if (cnt === 0) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${FN}: covariate '${reg.name}' has no finite sample on the grid [${t0}, ${t0 + n / rate}) s.`, { term: reg.name });
  const mean = sum / cnt;
  for (let i = 0; i < n; i++) series[i] = isNaN_[i] ? 0 : series[i]! - mean;
  const dense = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    const row = i * m;
    for (let li = 0; li < nLags; li++) {
      const src = i - (l0 + li);
      if (src < 0 || src >= n) continue; // mean padding (0 after centring)
      if (isNaN_[src]) {
        rowValid[i] = 0;
        continue;
      }
      const v = series[src]!;
      if (v === 0) continue;
      const kr = li * m;
      for (let j = 0; j < m; j++) dense[row + j] = dense[row + j]! + kern[kr + j]! * v;
    }
  }
  const lagsSec = new Float64Array(nLags);
  for (let i = 0; i < nLags; i++) lagsSec[i] = (l0 + i) / rate;
  const names = nBumps === 0 || nLags === 1
    ? Array.from({ length: m }, (_, j) => `${reg.name}[lag ${((l0 + j) / rate).toFixed(3)}s]`)
    : Array.from({ length: m }, (_, j) => `${reg.name}[${j}]`);
  return {
    term: {
      name: reg.name, group: reg.group, kind: 'covariate', lagStart: l0, nLags, lagsSec,
      eventBins: new Int32Array(0), eventWeights: new Float64Array(0), series, modulatorMean: NaN,
    },
    kernels: kern, nCols: m, dense, names,
  };
}

/**
 * The design as a dense row-major matrix (nRows × nCols, raw values; masked rows are zero).
 * For inspection and tests: the fitting functions use the sparse form directly.
 */
export function designToMatrix(design: EncodingDesign): Matrix {
  const { nRows: n, nCols: p } = design;
  const data = new Float64Array(n * p);
  for (let i = 0; i < n; i++) {
    for (let k = design.rowPtr[i]!; k < design.rowPtr[i + 1]!; k++) data[i * p + design.colIdx[k]!] = design.values[k]!;
  }
  return { data, rows: n, cols: p };
}

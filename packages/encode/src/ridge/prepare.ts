/** Internal: validation of cells, fold layout, models and shared ridge plans (one per row mask). */
import { TuningforkError, checkInteger, checkNonNegative, checkPositive, formatValue, toFloat64 } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import type { EncodingDesign } from '../design/design-matrix.js';
import { blockedFolds } from '../cv/blocked-folds.js';
import type { FoldLayout } from '../cv/blocked-folds.js';
import { cellSums, designSums, removeRows } from '../internal/segment-sums.js';
import type { CellSums, DesignSums } from '../internal/segment-sums.js';
import { RidgeCVPlan } from './ridge-plan.js';

/** One neural signal on the design grid (ΔF/F of a site, binned or smoothed counts of a unit). */
export interface CellSignal {
  readonly name: string;
  /** One value per design row; NaN marks a missing sample (masked and counted). */
  readonly values: ArrayLike<number>;
  /** When given, must equal the design's binRate (Hz). */
  readonly sampleRate?: number;
  /** When given, must equal the design's start time (s). */
  readonly t0?: number;
  /** 'counts' for binned spike counts (also fitted by a Poisson GLM in encodeCells). @defaultValue 'continuous' */
  readonly kind?: 'continuous' | 'counts';
}

export interface PatternPlan {
  readonly mask: Uint8Array | null;
  readonly sums: DesignSums;
  readonly plan: RidgeCVPlan;
  readonly cells: number[];
}

export interface Prepared {
  readonly design: EncodingDesign;
  readonly layout: FoldLayout;
  readonly models: Int32Array[];
  /** Indices (into design.groups) of tested groups, and of nuisance groups. */
  readonly tested: number[];
  readonly nuisance: number[];
  readonly penalties: Float64Array;
  readonly names: string[];
  /** Centred values (NaN kept) and the mean subtracted. */
  readonly y: Float64Array[];
  readonly yMean: Float64Array;
  readonly nMissing: Int32Array;
  /** Cells skipped (constant or too few samples): their warning; null when fitted. */
  readonly skipped: (ResultWarning | null)[];
  readonly patterns: PatternPlan[];
  readonly cellPattern: Int32Array;
  readonly sums: CellSums[];
}

export interface PrepareOptions {
  readonly nFolds: number;
  readonly gapSec: number;
  readonly foldCutTimes: ArrayLike<number>;
  readonly penalties: ArrayLike<number>;
  readonly nuisanceGroups: readonly string[];
  readonly contributions: boolean;
}

/** Models: 0 full, 1 nuisance-only baseline, then per tested group g: 2+2g without g, 3+2g nuisance+g. */
export function buildModels(design: EncodingDesign, tested: number[], nuisance: number[], contributions: boolean): Int32Array[] {
  const p = design.nCols;
  const all = Int32Array.from({ length: p }, (_, j) => j);
  const colsOf = (keep: (g: number) => boolean) => {
    const out: number[] = [];
    for (let j = 0; j < p; j++) if (keep(design.columnGroup[j]!)) out.push(j);
    return Int32Array.from(out);
  };
  const models = [all, colsOf((g) => nuisance.includes(g))];
  if (contributions) {
    for (const tg of tested) {
      models.push(colsOf((g) => g !== tg));
      models.push(colsOf((g) => g === tg || nuisance.includes(g)));
    }
  }
  return models;
}

export function prepare(fn: string, design: EncodingDesign, cells: readonly CellSignal[], o: PrepareOptions): Prepared {
  if (!Array.isArray(cells) || cells.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: cells must be a non-empty array of { name, values }, got ${formatValue(cells)}.`, {});
  }
  const n = design.nRows;
  const nFolds = checkInteger(fn, 'nFolds', o.nFolds, 2);
  const gapSec = Number.isNaN(o.gapSec) ? design.maxKernelBins / design.binRate : checkNonNegative(fn, 'gapSec', o.gapSec);
  const gapBins = Math.round(gapSec * design.binRate);
  const pens = toFloat64(o.penalties);
  if (pens.length === 0) throw new TuningforkError('TF_BAD_OPTION', `${fn}: penalties must hold at least one value.`, {});
  for (let i = 0; i < pens.length; i++) checkPositive(fn, `penalties[${i}]`, pens[i]);
  const cutTimes = toFloat64(o.foldCutTimes);
  const cand = new Float64Array(cutTimes.length);
  for (let i = 0; i < cutTimes.length; i++) cand[i] = Math.floor((cutTimes[i]! - design.t0) * design.binRate + 0.5);
  cand.sort();
  const layout = blockedFolds(n, { nFolds, gapBins, cutCandidates: cand });
  const nuisance: number[] = [];
  for (const g of o.nuisanceGroups) {
    const gi = design.groups.indexOf(g);
    if (gi < 0) throw new TuningforkError('TF_BAD_VALUE', `${fn}: nuisance group '${g}' is not a group of the design (${design.groups.join(', ')}).`, { group: g });
    nuisance.push(gi);
  }
  const tested = design.groups.map((_, i) => i).filter((i) => !nuisance.includes(i));
  const models = buildModels(design, tested, nuisance, o.contributions);
  const names: string[] = [];
  const y: Float64Array[] = [];
  const yMean = new Float64Array(cells.length);
  const nMissing = new Int32Array(cells.length);
  const skipped: (ResultWarning | null)[] = [];
  const keyOf = new Map<string, number>();
  const patterns: { mask: Uint8Array | null; rows: Int32Array; cells: number[] }[] = [];
  const cellPattern = new Int32Array(cells.length);
  const minRows = 2 * (design.nCols + 1);
  cells.forEach((cell, ci) => {
    const name = typeof cell?.name === 'string' ? cell.name : `cell${ci}`;
    names.push(name);
    if (cell.sampleRate !== undefined && Math.abs(cell.sampleRate - design.binRate) > 1e-9 * design.binRate) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: cell '${name}' is sampled at ${cell.sampleRate} Hz but the design grid is ${design.binRate} Hz; resample it onto the grid.`, { cell: name });
    }
    if (cell.t0 !== undefined && Math.abs(cell.t0 - design.t0) * design.binRate > 1e-6) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: cell '${name}' starts at t0=${cell.t0} s but the design grid starts at ${design.t0} s.`, { cell: name });
    }
    const v = toFloat64(cell.values);
    if (v.length !== n) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: cell '${name}' has ${v.length} values but the design has ${n} rows.`, { cell: name, length: v.length, rows: n });
    }
    let s = 0;
    let c = 0;
    let lo = Infinity;
    let hi = -Infinity;
    const nanRows: number[] = [];
    for (let i = 0; i < n; i++) {
      if (design.rowValid && !design.rowValid[i]) continue;
      const x = v[i]!;
      if (Number.isFinite(x)) {
        s += x;
        c++;
        if (x < lo) lo = x;
        if (x > hi) hi = x;
      } else {
        nanRows.push(i);
      }
    }
    nMissing[ci] = nanRows.length;
    const mu = c > 0 ? s / c : 0;
    yMean[ci] = mu;
    const yc = new Float64Array(n);
    let ss = 0;
    for (let i = 0; i < n; i++) {
      const x = v[i]!;
      yc[i] = Number.isFinite(x) ? x - mu : NaN;
      if (Number.isFinite(x) && (!design.rowValid || design.rowValid[i])) ss += (x - mu) * (x - mu);
    }
    y.push(yc);
    let skip: ResultWarning | null = null;
    if (c < minRows) skip = { code: 'TF_TOO_FEW_SAMPLES', message: `${fn}: cell '${name}' has ${c} usable samples; at least ${minRows} are needed for ${design.nCols} columns. Skipped.`, details: { cell: name, nUsed: c } };
    // Constancy by value, not by the centred sum of squares: the mean of a constant such as 0.1
    // is not exactly 0.1 in floating point, which leaves ss ≈ 1e-30 > 0 and an R² of ±∞.
    else if (!(ss > 0) || lo === hi) skip = { code: 'TF_DEGENERATE_SIGNAL', message: `${fn}: cell '${name}' is constant over its usable samples (e.g. all-zero counts); nothing to explain. Skipped.`, details: { cell: name } };
    skipped.push(skip);
    const key = nanRows.join(',');
    let pi = keyOf.get(key);
    if (pi === undefined) {
      pi = patterns.length;
      keyOf.set(key, pi);
      let mask: Uint8Array | null = design.rowValid ? Uint8Array.from(design.rowValid) : null;
      if (nanRows.length > 0) {
        mask = mask ?? new Uint8Array(n).fill(1);
        for (const r of nanRows) mask[r] = 0;
      }
      patterns.push({ mask, rows: Int32Array.from(nanRows), cells: [] });
    }
    patterns[pi]!.cells.push(ci);
    cellPattern[ci] = pi;
  });
  const base = designSums(design, layout.cuts, design.rowValid);
  const plans: PatternPlan[] = patterns.map((pt) => {
    const sums = pt.rows.length > 0 ? removeRows(base, design, layout.cuts, pt.rows) : base;
    const plan = new RidgeCVPlan(sums, layout.cuts, layout.testStart, layout.testEnd, layout.gapBins, models);
    return { mask: pt.mask, sums, plan, cells: pt.cells };
  });
  // A cell whose NaN samples leave some test block without any training row (e.g. the recording
  // holds data only around one block) has no cross-validated prediction there: skip it.
  plans.forEach((pl) => {
    const f = pl.plan.folds.findIndex((fd) => fd.nTe > 0 && fd.nTr < 2);
    if (f < 0) return;
    const fd = pl.plan.folds[f]!;
    for (const ci of pl.cells) {
      if (skipped[ci]) continue;
      const name = names[ci]!;
      skipped[ci] = { code: 'TF_TOO_FEW_SAMPLES', message: `${fn}: cell '${name}' has ${fd.nTe} usable samples in test block ${f} (rows ${layout.testStart[f]}–${layout.testEnd[f]}) but ${fd.nTr} usable training rows outside it; its NaN samples leave that block without a model. Skipped.`, details: { cell: name, fold: f, nTrain: fd.nTr, nTest: fd.nTe } };
    }
  });
  const sums = y.map((yc, ci) => cellSums(design, layout.cuts, yc, plans[cellPattern[ci]!]!.mask));
  return { design, layout, models, tested, nuisance, penalties: pens, names, y, yMean, nMissing, skipped, patterns: plans, cellPattern, sums };
}

/** Default penalty grid: 20 values log-spaced from 1e-3 to 1e3 (× n_train; INFERENCE.md §4.2). */
export function defaultPenalties(count = 20, lo = -3, hi = 3): Float64Array {
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) out[i] = 10 ** (lo + ((hi - lo) * i) / (count - 1));
  return out;
}

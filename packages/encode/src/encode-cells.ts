import { checkBoolean, hashInput, makeProvenance, resolveOptions, toFloat64 } from '@tuningfork/core';
import type { Provenance, ResultWarning } from '@tuningfork/core';
import { table } from 'arquero';
import type { ColumnTable } from 'arquero';
import type { EncodingDesign } from './design/design-matrix.js';
import { fitRidgeCV } from './ridge/fit-ridge-cv.js';
import type { FitRidgeCVOptions, RidgeCVResult } from './ridge/fit-ridge-cv.js';
import { defaultPenalties } from './ridge/prepare.js';
import type { CellSignal } from './ridge/prepare.js';
import { shiftNull } from './null/shift-null.js';
import type { ShiftNullOptions, ShiftNullResult } from './null/shift-null.js';
import { classifyCells } from './classify/classify-cells.js';
import type { ClassifyCellsOptions, ClassifyCellsResult } from './classify/classify-cells.js';
import { poissonGLMCV } from './glm/poisson-glm-cv.js';
import type { PoissonGLMCVOptions, PoissonGLMCVResult } from './glm/poisson-glm-cv.js';

/** Options of {@link encodeCells}: the options of each stage, plus whether count cells get a Poisson GLM. */
export interface EncodeCellsOptions {
  /** Options of fitRidgeCV. @defaultValue {} */
  ridge?: FitRidgeCVOptions;
  /** Options of shiftNull. @defaultValue {} */
  null?: ShiftNullOptions;
  /** Options of classifyCells. @defaultValue {} */
  classify?: ClassifyCellsOptions;
  /** Fit Poisson GLMs to cells of kind 'counts' (CV deviance explained, log-gain kernels). @defaultValue true */
  poissonGLM?: boolean;
  /** Options of poissonGLMCV (folds default to the ridge folds' settings). @defaultValue {} */
  poisson?: PoissonGLMCVOptions;
}

/** Everything encodeCells computed, and tidy tables of it. */
export interface EncodeCellsResult {
  readonly fit: RidgeCVResult;
  readonly null: ShiftNullResult;
  readonly classes: ClassifyCellsResult;
  readonly poisson: PoissonGLMCVResult | null;
  /** One row per cell: cell, kind, class, sign, cvR2, pFull, qFull, sharedR2, significantGroups, nUsed, nMissing, cvDevianceExplained, bitsPerSpike. */
  readonly cells: ColumnTable;
  /** One row per cell × tested group: cell, group, role, deltaR2, aloneR2, p, q, significant, class, sign, penalty (relative penalty selected for the model without the group). */
  readonly groups: ColumnTable;
  /** One row per cell × kernel × lag: cell, term, group, model ('ridge' | 'poisson'), lagSec, estimate, se, low, high. */
  readonly kernels: ColumnTable;
  readonly warnings: readonly ResultWarning[];
  /** Version, resolved options, the null's seed and SHA-256 of the design values and of every cell. */
  readonly provenance: Provenance;
}

const DEFAULTS = Object.freeze({ ridge: {} as FitRidgeCVOptions, null: {} as ShiftNullOptions, classify: {} as ClassifyCellsOptions, poissonGLM: true, poisson: {} as PoissonGLMCVOptions });

/**
 * The whole encoding analysis of a session: cross-validated ridge fits with unique and
 * group-alone contributions ({@link fitRidgeCV}), circular-shift nulls ({@link shiftNull}),
 * classification with FDR control ({@link classifyCells}) and, for spike-count cells, Poisson
 * GLMs ({@link poissonGLMCV}); returns tidy arquero tables for reports and files.
 *
 * Count cells are classified from the same linear model of their binned counts as continuous
 * cells (the shift null needs thousands of refits, which is cheap only for the linear model);
 * the Poisson GLM adds cross-validated deviance explained, bits per spike and log-gain kernels.
 *
 * @throws {TuningforkError} As the stages it runs.
 */
export function encodeCells(design: EncodingDesign, cells: readonly CellSignal[], options: EncodeCellsOptions = {}): EncodeCellsResult {
  const fn = 'encodeCells';
  const o = resolveOptions(fn, DEFAULTS, options);
  const wantGlm = checkBoolean(fn, 'poissonGLM', o.poissonGLM);
  const fit = fitRidgeCV(design, cells, { penalties: defaultPenalties(), ...o.ridge });
  const nul = shiftNull(design, fit, o.null);
  const classes = classifyCells(design, fit, nul, o.classify);
  const countIdx = cells.map((c, i) => (c.kind === 'counts' ? i : -1)).filter((i) => i >= 0);
  let poisson: PoissonGLMCVResult | null = null;
  if (wantGlm && countIdx.length > 0) {
    poisson = poissonGLMCV(design, countIdx.map((i) => cells[i]!), {
      nFolds: fit.options.nFolds, gapSec: fit.options.gapSec, foldCutTimes: fit.options.foldCutTimes, ...o.poisson,
    });
  }
  const glmOf = new Map<number, number>();
  if (poisson) countIdx.forEach((ci, k) => glmOf.set(ci, k));
  // cells table
  const C = fit.cells.length;
  const G = fit.groups.length;
  const cellRows = {
    cell: fit.cells.map((c) => c.name),
    kind: cells.map((c) => c.kind ?? 'continuous'),
    class: classes.cells.map((c) => c.class),
    sign: Float64Array.from(classes.cells, (c) => c.sign),
    cvR2: Float64Array.from(fit.cells, (c) => c.cvR2),
    pFull: Float64Array.from(nul.cells, (c) => c.pFull),
    qFull: Float64Array.from(classes.cells, (c) => c.qFull),
    sharedR2: Float64Array.from(fit.cells, (c) => c.sharedR2),
    significantGroups: classes.cells.map((c) => c.significantGroups.join(';')),
    nUsed: Float64Array.from(fit.cells, (c) => c.nUsed),
    nMissing: Float64Array.from(fit.cells, (c) => c.nMissing),
    cvDevianceExplained: Float64Array.from({ length: C }, (_, i) => (glmOf.has(i) ? poisson!.cells[glmOf.get(i)!]!.cvDevianceExplained : NaN)),
    bitsPerSpike: Float64Array.from({ length: C }, (_, i) => (glmOf.has(i) ? poisson!.cells[glmOf.get(i)!]!.bitsPerSpike : NaN)),
  };
  // groups table
  const gr: Record<string, unknown[]> = { cell: [], group: [], role: [], deltaR2: [], aloneR2: [], p: [], q: [], significant: [], class: [], sign: [], penalty: [] };
  for (let c = 0; c < C; c++) {
    for (let g = 0; g < G; g++) {
      const cl = classes.cells[c]!;
      gr.cell!.push(fit.cells[c]!.name);
      gr.group!.push(fit.groups[g]);
      gr.role!.push(classes.roles[g]);
      gr.deltaR2!.push(fit.cells[c]!.deltaR2[g]);
      gr.aloneR2!.push(fit.cells[c]!.aloneR2[g]);
      gr.p!.push(nul.cells[c]!.pGroup[g]);
      gr.q!.push(cl.qGroup[g]);
      gr.significant!.push(cl.significantGroups.includes(fit.groups[g]!));
      gr.class!.push(cl.class);
      gr.sign!.push(cl.sign);
      gr.penalty!.push(fit.cells[c]!.modelPenalty[2 + 2 * g]);
    }
  }
  // kernels table
  const kr: Record<string, unknown[]> = { cell: [], term: [], group: [], model: [], lagSec: [], estimate: [], se: [], low: [], high: [] };
  const pushKernels = (cell: string, model: string, ks: readonly { term: string; group: string; lagsSec: Float64Array; estimate: Float64Array; se: Float64Array; low: Float64Array; high: Float64Array }[]) => {
    for (const k of ks) {
      for (let i = 0; i < k.lagsSec.length; i++) {
        kr.cell!.push(cell); kr.term!.push(k.term); kr.group!.push(k.group); kr.model!.push(model);
        kr.lagSec!.push(k.lagsSec[i]); kr.estimate!.push(k.estimate[i]); kr.se!.push(k.se[i]); kr.low!.push(k.low[i]); kr.high!.push(k.high[i]);
      }
    }
  };
  fit.cells.forEach((c, i) => {
    pushKernels(c.name, 'ridge', c.kernels);
    if (glmOf.has(i)) pushKernels(c.name, 'poisson', poisson!.cells[glmOf.get(i)!]!.kernels);
  });
  const num = (a: unknown[]) => Float64Array.from(a as number[]);
  const warnings: ResultWarning[] = [
    ...fit.warnings, ...fit.cells.flatMap((c) => c.warnings), ...nul.warnings, ...nul.cells.flatMap((c) => c.warnings),
    ...(poisson ? poisson.cells.flatMap((c) => c.warnings) : []),
  ];
  const provenance = makeProvenance('encodeCells', { ...o, design: { nRows: design.nRows, nCols: design.nCols, t0: design.t0, binRate: design.binRate, columns: design.columnNames } }, nul.seed, [
    hashInput('design.values', design.values),
    ...cells.map((c, i) => hashInput(`cell:${fit.cells[i]!.name}`, toFloat64(c.values))),
  ]);
  return {
    provenance,
    fit, null: nul, classes, poisson,
    cells: table(cellRows),
    groups: table({
      cell: gr.cell!, group: gr.group!, role: gr.role!, deltaR2: num(gr.deltaR2!), aloneR2: num(gr.aloneR2!), p: num(gr.p!), q: num(gr.q!),
      significant: gr.significant!, class: gr.class!, sign: num(gr.sign!), penalty: num(gr.penalty!),
    }),
    kernels: table({
      cell: kr.cell!, term: kr.term!, group: kr.group!, model: kr.model!, lagSec: num(kr.lagSec!), estimate: num(kr.estimate!),
      se: num(kr.se!), low: num(kr.low!), high: num(kr.high!),
    }),
    warnings,
  };
}

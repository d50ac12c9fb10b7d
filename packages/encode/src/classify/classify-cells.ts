import { TuningforkError, checkNonNegative, checkOneOf, checkRange, resolveOptions } from '@tuningfork/core';
import { adjustPValues } from '@tuningfork/stats';
import type { EncodingDesign } from '../design/design-matrix.js';
import type { RidgeCVResult } from '../ridge/fit-ridge-cv.js';
import type { ShiftNullResult } from '../null/shift-null.js';

/**
 * Tuning class of a cell. 'unattributed': the full model is significant but no group alone is
 * (collinearity). 'not-fitted': the encoding fit skipped the cell (constant, too few samples, a
 * test block without training data; see the fit's warnings), so nothing was tested — unlike
 * 'none', which is a tested cell without significant tuning.
 */
export type TuningClass = 'reward' | 'movement' | 'mixed' | 'action-prediction' | 'unattributed' | 'none' | 'not-fitted';

/** What a variable group stands for in the classification. */
export type GroupRole = 'reward' | 'movement' | 'action-prediction' | 'other';

/** Options of {@link classifyCells}. */
export interface ClassifyCellsOptions {
  /**
   * Role of each tested group. Groups not listed get their own name as role when it is
   * 'reward', 'movement' or 'action-prediction', else 'other'. @defaultValue {}
   */
  groupRoles?: Readonly<Record<string, GroupRole>>;
  /** FDR level q. @defaultValue 0.05 */
  fdr?: number;
  /** FDR procedure across cells × groups (and across cells for the full model). @defaultValue 'bh' */
  fdrMethod?: 'bh' | 'by';
  /** Smallest unique ΔR² for a group of a continuous cell (ΔF/F) to count as significant. @defaultValue 0.005 */
  minDeltaR2?: number;
  /**
   * Smallest unique ΔR² for a group of a count cell. Binned counts are dominated by Poisson noise,
   * so their R² is small even for strong tuning; by default significance alone decides. @defaultValue 0
   */
  minDeltaR2Counts?: number;
}

/** Classification of one cell. */
export interface CellClassification {
  readonly name: string;
  readonly class: TuningClass;
  /** +1 excitatory, −1 inhibitory (sign of the dominant significant group's response), 0 when none. */
  readonly sign: -1 | 0 | 1;
  /** Tested groups that are significant (q ≤ fdr and ΔR² ≥ minDeltaR2). */
  readonly significantGroups: readonly string[];
  /** BH-adjusted p of the full model (across cells) and of each group (across cells × groups). */
  readonly qFull: number;
  readonly qGroup: Float64Array;
  /** Group whose response gave the sign ('' when none). */
  readonly signGroup: string;
}

export interface ClassifyCellsResult {
  readonly cells: readonly CellClassification[];
  readonly groups: readonly string[];
  readonly roles: readonly GroupRole[];
  readonly fdr: number;
  readonly minDeltaR2: number;
  readonly minDeltaR2Counts: number;
}

const DEFAULTS = Object.freeze({ groupRoles: {} as Readonly<Record<string, GroupRole>>, fdr: 0.05, fdrMethod: 'bh' as 'bh' | 'by', minDeltaR2: 0.005, minDeltaR2Counts: 0 });
const ROLES: readonly GroupRole[] = ['reward', 'movement', 'action-prediction', 'other'];

/**
 * Classify cells as reward, movement, mixed, action-prediction, unattributed, none or not-fitted from their
 * unique contributions and shift-null p-values, with FDR control across cells.
 *
 * Group p-values of all cells × tested groups are adjusted together (Benjamini–Hochberg by
 * default; 'by' for arbitrary dependence); the full-model p-values are adjusted across cells. A
 * group is significant when q ≤ `fdr` and its ΔR² ≥ `minDeltaR2`. Labels (INFERENCE.md §4.7):
 * reward and movement roles both significant → mixed; only reward → reward; only movement →
 * movement; only action-prediction → action-prediction; action-prediction with reward or
 * movement → mixed; no role group significant but the full model significant → unattributed
 * (shared variance that collinear groups cannot split); otherwise none. A cell the fit skipped
 * (cvR² NaN: constant, too few samples; the fit's warnings say why) is 'not-fitted', never
 * counted as untuned. Groups with role 'other'
 * (e.g. cue) never set the label. The sign is that of the dominant significant group's response:
 * the extreme value over its kernels, each scaled by the RMS of its event weights (or covariate SD).
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when fit and null differ in cells or groups;
 *   TF_BAD_OPTION for an unknown role.
 *
 * References
 * - Benjamini, Y. & Hochberg, Y. (1995). JRSS-B 57(1):289–300. doi:10.1111/j.2517-6161.1995.tb02031.x
 * - Engelhard, B. et al. (2019). Specialized coding of sensory, motor and cognitive variables in VTA
 *   dopamine neurons. Nature 570:509–513. doi:10.1038/s41586-019-1261-9
 */
export function classifyCells(design: EncodingDesign, fit: RidgeCVResult, nul: ShiftNullResult, options: ClassifyCellsOptions = {}): ClassifyCellsResult {
  const fn = 'classifyCells';
  const o = resolveOptions(fn, DEFAULTS, options);
  const fdr = checkRange(fn, 'fdr', o.fdr, 0, 1);
  const method = checkOneOf(fn, 'fdrMethod', o.fdrMethod, ['bh', 'by']);
  const minD = checkNonNegative(fn, 'minDeltaR2', o.minDeltaR2);
  const minDC = checkNonNegative(fn, 'minDeltaR2Counts', o.minDeltaR2Counts);
  const groups = fit.groups;
  if (nul.cells.length !== fit.cells.length || nul.groups.length !== groups.length) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: the shift null has ${nul.cells.length} cells and ${nul.groups.length} groups, the fit ${fit.cells.length} and ${groups.length}; pass results of the same analysis.`, {});
  }
  for (const [g, r] of Object.entries(o.groupRoles)) {
    if (!ROLES.includes(r)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: groupRoles['${g}'] is '${String(r)}'; expected one of ${ROLES.join(', ')}.`, { group: g });
  }
  const roles: GroupRole[] = groups.map((g) => o.groupRoles[g] ?? ((ROLES as readonly string[]).includes(g) ? (g as GroupRole) : 'other'));
  const G = groups.length;
  const C = fit.cells.length;
  const pG = new Float64Array(C * G);
  const pF = new Float64Array(C);
  for (let c = 0; c < C; c++) {
    pF[c] = nul.cells[c]!.pFull;
    for (let g = 0; g < G; g++) pG[c * G + g] = nul.cells[c]!.pGroup[g]!;
  }
  const qG = adjustPValues(pG, { method });
  const qF = adjustPValues(pF, { method });
  const cells: CellClassification[] = fit.cells.map((cf, c) => {
    const sig: number[] = [];
    const minCell = cf.kind === 'counts' ? minDC : minD;
    for (let g = 0; g < G; g++) if (qG[c * G + g]! <= fdr && cf.deltaR2[g]! >= minCell) sig.push(g);
    const has = (r: GroupRole) => sig.some((g) => roles[g] === r);
    const rw = has('reward');
    const mv = has('movement');
    const ap = has('action-prediction');
    let cls: TuningClass;
    if (!(cf.cvR2 === cf.cvR2)) cls = 'not-fitted';
    else if ((rw && mv) || (ap && (rw || mv))) cls = 'mixed';
    else if (rw) cls = 'reward';
    else if (mv) cls = 'movement';
    else if (ap) cls = 'action-prediction';
    else if (qF[c]! <= fdr) cls = 'unattributed';
    else cls = 'none';
    let sign: -1 | 0 | 1 = 0;
    let signGroup = '';
    const roleSig = sig.filter((g) => roles[g] !== 'other');
    if (roleSig.length > 0) {
      const g = roleSig.reduce((a, b) => (cf.deltaR2[b]! > cf.deltaR2[a]! ? b : a));
      signGroup = groups[g]!;
      sign = responseSign(design, cf.kernels, groups[g]!);
    }
    return { name: cf.name, class: cls, sign, significantGroups: sig.map((g) => groups[g]!), qFull: qF[c]!, qGroup: qG.slice(c * G, (c + 1) * G), signGroup };
  });
  return { cells, groups, roles, fdr, minDeltaR2: minD, minDeltaR2Counts: minDC };
}

/** Sign of the extreme typical response over a group's kernels (kernel × RMS event weight). */
export function responseSign(design: EncodingDesign, kernels: readonly { term: string; group: string; estimate: Float64Array }[], group: string): -1 | 0 | 1 {
  let best = 0;
  for (const k of kernels) {
    if (k.group !== group) continue;
    const t = design.terms.find((x) => x.name === k.term);
    if (!t) continue;
    let scale = 1;
    if (t.kind === 'event') {
      let s = 0;
      for (let e = 0; e < t.eventWeights.length; e++) s += t.eventWeights[e]! ** 2;
      scale = t.eventWeights.length > 0 ? Math.sqrt(s / t.eventWeights.length) : 0;
    } else {
      let s = 0;
      for (let i = 0; i < t.series.length; i++) s += t.series[i]! ** 2;
      scale = Math.sqrt(s / Math.max(1, t.series.length));
    }
    for (let i = 0; i < k.estimate.length; i++) {
      const v = k.estimate[i]! * scale;
      if (Math.abs(v) > Math.abs(best)) best = v;
    }
  }
  return best > 0 ? 1 : best < 0 ? -1 : 0;
}

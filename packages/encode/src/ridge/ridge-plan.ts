/**
 * Internal engine of blocked-CV ridge on raw segment sums (INFERENCE.md §4.2–4.3).
 *
 * For each fold, training sums = totals − exclusion-zone sums; columns are centred and scaled on
 * the training rows only; one eigendecomposition A = VΛVᵀ of the standardised training Gram per
 * fold and model serves every penalty and every cell. Test-fold error is evaluated from test
 * sums without forming predictions:
 *   SSE(λ) = Σ(y−ȳ_te)² − 2γᵀu + γᵀHγ + n_te(ȳ_te − ȳ_tr − γᵀm)²,  γ = z ⊘ (Λ + λ),
 * with z = VᵀD⁻¹X̃_trᵀỹ_tr, u = VᵀD⁻¹X̃_teᵀỹ_te, H = VᵀD⁻¹X̃_teᵀX̃_teD⁻¹V (test-centred), and
 * m = VᵀD⁻¹(x̄_te − x̄_tr). Penalties are relative: λ = ρ·n_tr = ρ·tr(A)/p.
 */
import { symmetricEigen } from '../linalg/symmetric-eigen.js';
import { congruence, cutIndex, multTransVec, quadForm } from '../internal/dense.js';
import type { CellSums, DesignSums } from '../internal/segment-sums.js';

/** A model fitted on one set of rows: standardisation and eigenbasis. */
export interface TrainedModel {
  readonly cols: Int32Array;
  readonly pm: number;
  readonly n: number;
  readonly xbar: Float64Array;
  readonly dInv: Float64Array;
  readonly vecs: Float64Array;
  readonly lam: Float64Array;
}

interface FoldModel extends TrainedModel {
  readonly h: Float64Array;
  readonly mv: Float64Array;
}

interface FoldPlan {
  readonly nTr: number;
  readonly nTe: number;
  readonly teSeg: readonly [number, number];
  readonly exSeg: readonly [number, number];
  readonly sTr: Float64Array;
  readonly sTe: Float64Array;
  readonly models: FoldModel[];
}

/** Sum segments [a, b) of sums: counts, column sums and (optionally) Gram. */
export function aggregate(sums: DesignSums, a: number, b: number, withGram: boolean): { n: number; s: Float64Array; g: Float64Array | null } {
  const p = sums.p;
  const s = new Float64Array(p);
  const g = withGram ? new Float64Array(p * p) : null;
  let n = 0;
  for (let seg = a; seg < b; seg++) {
    n += sums.cnt[seg]!;
    const so = seg * p;
    for (let j = 0; j < p; j++) s[j] = s[j]! + sums.s[so + j]!;
    if (g) {
      const go = seg * p * p;
      for (let k = 0; k < p * p; k++) g[k] = g[k]! + sums.g[go + k]!;
    }
  }
  return { n, s, g };
}

/** Standardise the columns `cols` on rows with Gram g, sums s, count n; eigendecompose. */
export function trainModel(g: Float64Array, s: Float64Array, n: number, p: number, cols: Int32Array): TrainedModel {
  const pm = cols.length;
  const xbar = new Float64Array(pm);
  const dInv = new Float64Array(pm);
  for (let k = 0; k < pm; k++) {
    const j = cols[k]!;
    const mu = s[j]! / n;
    xbar[k] = mu;
    const raw2 = g[j * p + j]! / n;
    const v = raw2 - mu * mu;
    dInv[k] = v > 1e-12 * raw2 && v > 0 ? 1 / Math.sqrt(v) : 0;
  }
  const a = new Float64Array(pm * pm);
  for (let r = 0; r < pm; r++) {
    const jr = cols[r]!;
    for (let c = r; c < pm; c++) {
      const jc = cols[c]!;
      const val = (g[jr * p + jc]! - (s[jr]! * s[jc]!) / n) * dInv[r]! * dInv[c]!;
      a[r * pm + c] = val;
      a[c * pm + r] = val;
    }
  }
  const e = symmetricEigen(a, pm);
  const lam = e.values;
  for (let k = 0; k < pm; k++) if (lam[k]! < 0) lam[k] = 0;
  return { cols, pm, n, xbar, dInv, vecs: e.vectors, lam };
}

/** Blocked-CV ridge plan for one row mask: shared by every cell with that mask. */
export class RidgeCVPlan {
  readonly p: number;
  readonly models: readonly Int32Array[];
  readonly folds: readonly FoldPlan[];
  readonly nTot: number;
  readonly sTot: Float64Array;
  private readonly nSeg: number;

  constructor(sums: DesignSums, cuts: Int32Array, testStart: Int32Array, testEnd: Int32Array, gap: number, models: readonly Int32Array[]) {
    this.p = sums.p;
    this.nSeg = sums.nSeg;
    this.models = models;
    const p = sums.p;
    const nRows = cuts[cuts.length - 1]!;
    const tot = aggregate(sums, 0, sums.nSeg, true);
    this.nTot = tot.n;
    this.sTot = tot.s;
    const folds: FoldPlan[] = [];
    for (let f = 0; f < testStart.length; f++) {
      const teSeg: [number, number] = [cutIndex(cuts, testStart[f]!), cutIndex(cuts, testEnd[f]!)];
      const exSeg: [number, number] = [cutIndex(cuts, Math.max(0, testStart[f]! - gap)), cutIndex(cuts, Math.min(nRows, testEnd[f]! + gap))];
      const te = aggregate(sums, teSeg[0], teSeg[1], true);
      const ex = aggregate(sums, exSeg[0], exSeg[1], true);
      const nTr = tot.n - ex.n;
      const sTr = new Float64Array(p);
      const gTr = new Float64Array(p * p);
      for (let j = 0; j < p; j++) sTr[j] = tot.s[j]! - ex.s[j]!;
      for (let k = 0; k < p * p; k++) gTr[k] = tot.g![k]! - ex.g![k]!;
      // test Gram centred on the test mean
      const gTe = te.g!;
      if (te.n > 0) for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) gTe[i * p + j] = gTe[i * p + j]! - (te.s[i]! * te.s[j]!) / te.n;
      const fms: FoldModel[] = [];
      for (const cols of models) {
        const tm = trainModel(gTr, sTr, nTr, p, cols);
        const pm = tm.pm;
        const sub = new Float64Array(pm * pm);
        for (let r = 0; r < pm; r++) for (let c = 0; c < pm; c++) sub[r * pm + c] = gTe[cols[r]! * p + cols[c]!]! * tm.dInv[r]! * tm.dInv[c]!;
        const h = congruence(tm.vecs, sub, pm);
        const dm = new Float64Array(pm);
        for (let k = 0; k < pm; k++) dm[k] = (te.n > 0 ? te.s[cols[k]!]! / te.n - tm.xbar[k]! : 0) * tm.dInv[k]!;
        const mv = multTransVec(tm.vecs, pm, dm, new Float64Array(pm));
        fms.push({ ...tm, h, mv });
      }
      folds.push({ nTr, nTe: te.n, teSeg, exSeg, sTr, sTe: te.s, models: fms });
    }
    this.folds = folds;
  }

  /**
   * Sum over folds of the test SSE for every model and relative penalty, and the total sum of
   * squares about the overall mean (for cvR² = 1 − SSE/SST). `rho` is per model when
   * `perModel` is set (one penalty each), else a grid applied to every model.
   */
  score(cell: CellSums, rho: Float64Array, perModel = false): { sse: Float64Array; sst: number } {
    const p = this.p;
    const nL = perModel ? 1 : rho.length;
    const M = this.models.length;
    const sse = new Float64Array(M * nL);
    const cTot = new Float64Array(p);
    let ysTot = 0;
    let yyTot = 0;
    for (let seg = 0; seg < this.nSeg; seg++) {
      ysTot += cell.ysum[seg]!;
      yyTot += cell.yy[seg]!;
      for (let j = 0; j < p; j++) cTot[j] = cTot[j]! + cell.c[seg * p + j]!;
    }
    const sst = yyTot - (ysTot * ysTot) / this.nTot;
    const ccTr = new Float64Array(p);
    const ccTe = new Float64Array(p);
    const tmp = new Float64Array(p);
    const z = new Float64Array(p);
    const u = new Float64Array(p);
    const gam = new Float64Array(p);
    for (const fold of this.folds) {
      if (fold.nTe === 0) continue;
      let ysEx = 0;
      let ysTe = 0;
      let yyTe = 0;
      ccTr.set(cTot);
      ccTe.fill(0);
      for (let seg = fold.exSeg[0]; seg < fold.exSeg[1]; seg++) {
        ysEx += cell.ysum[seg]!;
        for (let j = 0; j < p; j++) ccTr[j] = ccTr[j]! - cell.c[seg * p + j]!;
      }
      for (let seg = fold.teSeg[0]; seg < fold.teSeg[1]; seg++) {
        ysTe += cell.ysum[seg]!;
        yyTe += cell.yy[seg]!;
        for (let j = 0; j < p; j++) ccTe[j] = ccTe[j]! + cell.c[seg * p + j]!;
      }
      const ybTr = (ysTot - ysEx) / fold.nTr;
      const ybTe = ysTe / fold.nTe;
      const dy = ybTe - ybTr;
      const yycTe = yyTe - (ysTe * ysTe) / fold.nTe;
      for (let j = 0; j < p; j++) {
        ccTr[j] = ccTr[j]! - fold.sTr[j]! * ybTr;
        ccTe[j] = ccTe[j]! - fold.sTe[j]! * ybTe;
      }
      for (let mi = 0; mi < M; mi++) {
        const fm = fold.models[mi]!;
        const pm = fm.pm;
        for (let k = 0; k < pm; k++) tmp[k] = ccTr[fm.cols[k]!]! * fm.dInv[k]!;
        multTransVec(fm.vecs, pm, tmp, z);
        for (let k = 0; k < pm; k++) tmp[k] = ccTe[fm.cols[k]!]! * fm.dInv[k]!;
        multTransVec(fm.vecs, pm, tmp, u);
        for (let l = 0; l < nL; l++) {
          const lam = (perModel ? rho[mi]! : rho[l]!) * fold.nTr;
          let gu = 0;
          let gm = 0;
          for (let k = 0; k < pm; k++) {
            const gk = z[k]! / (fm.lam[k]! + lam);
            gam[k] = gk;
            gu += gk * u[k]!;
            gm += gk * fm.mv[k]!;
          }
          const q = pm > 0 ? quadForm(fm.h, pm, gam) : 0;
          const off = dy - gm;
          sse[mi * nL + l] = sse[mi * nL + l]! + yycTe - 2 * gu + q + fold.nTe * off * off;
        }
      }
    }
    return { sse, sst };
  }
}

/** Raw-unit coefficients w and intercept of a trained model at relative penalty rho. */
export function coefficients(tm: TrainedModel, c: Float64Array, ysum: number, rho: number): { w: Float64Array; intercept: number } {
  const pm = tm.pm;
  const ybar = ysum / tm.n;
  const tmp = new Float64Array(pm);
  for (let k = 0; k < pm; k++) tmp[k] = (c[tm.cols[k]!]! - tm.xbar[k]! * tm.n * ybar) * tm.dInv[k]!;
  const z = multTransVec(tm.vecs, pm, tmp, new Float64Array(pm));
  const lam = rho * tm.n;
  for (let k = 0; k < pm; k++) z[k] = tm.lam[k]! + lam > 0 ? z[k]! / (tm.lam[k]! + lam) : 0;
  const w = new Float64Array(pm);
  for (let i = 0; i < pm; i++) {
    let s = 0;
    const row = i * pm;
    for (let k = 0; k < pm; k++) s += tm.vecs[row + k]! * z[k]!;
    w[i] = s * tm.dInv[i]!;
  }
  let icpt = ybar;
  for (let k = 0; k < pm; k++) icpt -= tm.xbar[k]! * w[k]!;
  return { w, intercept: icpt };
}

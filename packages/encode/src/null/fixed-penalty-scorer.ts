/**
 * Internal: test-fold SSE of selected models at fixed penalties, for many right-hand sides
 * (circular shifts). Per fold and model, w̃ = V·diag(1/(Λ+λ))·Vᵀ·D⁻¹c̃_tr (standardised
 * coefficients) and SSE = Σ(y−ȳ_te)² − 2w̃ᵀD⁻¹c̃_te + w̃ᵀKw̃ + n_te(ȳ_te − ȳ_tr − w̃ᵀD⁻¹Δx̄)², with
 * K = V·H·Vᵀ the standardised test Gram; 2·p_m² operations per fold and model.
 */
import type { CellSums } from '../internal/segment-sums.js';
import type { RidgeCVPlan } from '../ridge/ridge-plan.js';
import { ScorerKernel } from './scorer-kernel.js';

interface Item {
  readonly cols: Int32Array;
  readonly pm: number;
  readonly dInv: Float64Array;
  readonly s: Float64Array;
  readonly k: Float64Array;
  readonly dm: Float64Array;
}

/** K = V·H·Vᵀ and dm = V·mv per fold and model (independent of the cell); cached per plan. */
const kCache = new WeakMap<RidgeCVPlan, Map<number, { k: Float64Array; dm: Float64Array }[]>>();

function foldK(plan: RidgeCVPlan, model: number): { k: Float64Array; dm: Float64Array }[] {
  let byModel = kCache.get(plan);
  if (!byModel) {
    byModel = new Map();
    kCache.set(plan, byModel);
  }
  let out = byModel.get(model);
  if (out) return out;
  out = plan.folds.map((fold) => {
    const fm = fold.models[model]!;
    const pm = fm.pm;
    const v = fm.vecs;
    // VH then (VH)Vᵀ
    const vh = new Float64Array(pm * pm);
    for (let i = 0; i < pm; i++) for (let l = 0; l < pm; l++) {
      const vil = v[i * pm + l]!;
      if (vil === 0) continue;
      for (let j = 0; j < pm; j++) vh[i * pm + j] = vh[i * pm + j]! + vil * fm.h[l * pm + j]!;
    }
    const k = new Float64Array(pm * pm);
    for (let i = 0; i < pm; i++) for (let j = i; j < pm; j++) {
      let s = 0;
      for (let l = 0; l < pm; l++) s += vh[i * pm + l]! * v[j * pm + l]!;
      k[i * pm + j] = s;
      k[j * pm + i] = s;
    }
    const dm = new Float64Array(pm);
    for (let i = 0; i < pm; i++) {
      let s = 0;
      for (let l = 0; l < pm; l++) s += v[i * pm + l]! * fm.mv[l]!;
      dm[i] = s;
    }
    return { k, dm };
  });
  byModel.set(model, out);
  return out;
}

export class FixedPenaltyScorer {
  private readonly items: Item[][];
  private readonly plan: RidgeCVPlan;
  /** The dense steps in WebAssembly SIMD (same bits), or null: the JavaScript loops below. */
  private readonly kernel: ScorerKernel | null;
  readonly nModels: number;

  /** `models` index plan.models; `rho` is the relative penalty of each; `wasm: false` keeps the JavaScript loops (tests). */
  constructor(plan: RidgeCVPlan, models: readonly number[], rho: readonly number[], wasm = true) {
    this.plan = plan;
    this.nModels = models.length;
    this.items = plan.folds.map((fold, f) => models.map((mi, q) => {
      const fm = fold.models[mi]!;
      const pm = fm.pm;
      const lam = rho[q]! * fold.nTr;
      const v = fm.vecs;
      // S = V·diag(1/(Λ + λ))·Vᵀ, from the scaled rows u_i = V_i / (Λ + λ).
      const inv = new Float64Array(pm);
      for (let l = 0; l < pm; l++) inv[l] = 1 / (fm.lam[l]! + lam);
      const u = new Float64Array(pm * pm);
      for (let i = 0; i < pm * pm; i++) u[i] = v[i]! * inv[i % pm]!;
      const s = new Float64Array(pm * pm);
      for (let i = 0; i < pm; i++) {
        const ui = i * pm;
        for (let j = i; j < pm; j++) {
          const vj = j * pm;
          let acc = 0;
          for (let l = 0; l < pm; l++) acc += u[ui + l]! * v[vj + l]!;
          s[ui + j] = acc;
          s[vj + i] = acc;
        }
      }
      const kd = foldK(plan, mi)[f]!;
      return { cols: fm.cols, pm, dInv: fm.dInv, s, k: kd.k, dm: kd.dm };
    }));
    this.kernel = wasm ? ScorerKernel.create(this.items.flat()) : null;
  }

  /**
   * Score up to four cells at once (shared loads of the fold matrices). For each b < count:
   * out[b] receives the SSE of every model, and sst[b] the total sum of squares.
   */
  scoreBatch(cells: readonly CellSums[], count: number, out: readonly Float64Array[], sst: Float64Array): void {
    const plan = this.plan;
    const p = plan.p;
    const nSeg = cells[0]!.ysum.length;
    const B = count;
    const cTot: Float64Array[] = [];
    const ysTot = new Float64Array(B);
    const yyTot = new Float64Array(B);
    for (let b = 0; b < B; b++) {
      const cell = cells[b]!;
      out[b]!.fill(0);
      const ct = new Float64Array(p);
      for (let seg = 0; seg < nSeg; seg++) {
        ysTot[b] = ysTot[b]! + cell.ysum[seg]!;
        yyTot[b] = yyTot[b]! + cell.yy[seg]!;
        const co = seg * p;
        for (let j = 0; j < p; j++) ct[j] = ct[j]! + cell.c[co + j]!;
      }
      cTot.push(ct);
      sst[b] = yyTot[b]! - (ysTot[b]! * ysTot[b]!) / plan.nTot;
    }
    const ccTr = Array.from({ length: 4 }, () => new Float64Array(p));
    const ccTe = Array.from({ length: 4 }, () => new Float64Array(p));
    const v = Array.from({ length: 4 }, () => new Float64Array(p));
    const w = Array.from({ length: 4 }, () => new Float64Array(p));
    const dy = new Float64Array(4);
    const yyc = new Float64Array(4);
    plan.folds.forEach((fold, f) => {
      if (fold.nTe === 0) return;
      for (let b = 0; b < B; b++) {
        const cell = cells[b]!;
        let ysEx = 0;
        let ysTe = 0;
        let yyTe = 0;
        const tr = ccTr[b]!;
        const te = ccTe[b]!;
        tr.set(cTot[b]!);
        te.fill(0);
        for (let seg = fold.exSeg[0]; seg < fold.exSeg[1]; seg++) {
          ysEx += cell.ysum[seg]!;
          const co = seg * p;
          for (let j = 0; j < p; j++) tr[j] = tr[j]! - cell.c[co + j]!;
        }
        for (let seg = fold.teSeg[0]; seg < fold.teSeg[1]; seg++) {
          ysTe += cell.ysum[seg]!;
          yyTe += cell.yy[seg]!;
          const co = seg * p;
          for (let j = 0; j < p; j++) te[j] = te[j]! + cell.c[co + j]!;
        }
        const ybTr = (ysTot[b]! - ysEx) / fold.nTr;
        const ybTe = ysTe / fold.nTe;
        dy[b] = ybTe - ybTr;
        yyc[b] = yyTe - (ysTe * ysTe) / fold.nTe;
        for (let j = 0; j < p; j++) {
          tr[j] = tr[j]! - fold.sTr[j]! * ybTr;
          te[j] = te[j]! - fold.sTe[j]! * ybTe;
        }
      }
      const items = this.items[f]!;
      const kern = this.kernel;
      for (let q = 0; q < items.length; q++) {
        const it = items[q]!;
        const pm = it.pm;
        const cols = it.cols;
        const dInv = it.dInv;
        const S = it.s;
        const K = it.k;
        const dm = it.dm;
        const quads = kern ? this.denseWasm(kern, f * items.length + q, pm, cols, dInv, ccTr, B, w) : denseJs(S, K, pm, cols, dInv, ccTr, B, v, w);
        for (let b = 0; b < B; b++) {
          const wb = w[b]!;
          const te = ccTe[b]!;
          let a = 0;
          let gm = 0;
          for (let i = 0; i < pm; i++) {
            a += wb[i]! * te[cols[i]!]! * dInv[i]!;
            gm += wb[i]! * dm[i]!;
          }
          const off = dy[b]! - gm;
          const o = out[b]!;
          o[q] = o[q]! + yyc[b]! - 2 * a + 2 * quads[b]! + fold.nTe * off * off;
        }
      }
    });
  }

  /** The dense steps of item `item` in the kernel; w_b copied out to `w`, the forms returned. */
  private denseWasm(kern: ScorerKernel, item: number, pm: number, cols: Int32Array, dInv: Float64Array, ccTr: readonly Float64Array[], B: number, w: readonly Float64Array[]): number[] {
    const kv = kern.v;
    const kw = kern.w;
    for (let b = 0; b < 4; b++) {
      const tr = ccTr[b]!;
      if (b < B) for (let i = 0; i < pm; i++) kv[4 * i + b] = tr[cols[i]!]! * dInv[i]!;
      else for (let i = 0; i < pm; i++) kv[4 * i + b] = 0;
    }
    kern.apply(item);
    for (let b = 0; b < B; b++) {
      const wb = w[b]!;
      for (let i = 0; i < pm; i++) wb[i] = kw[4 * i + b]!;
    }
    return [kern.q[0]!, kern.q[1]!, kern.q[2]!, kern.q[3]!];
  }
}

/** The dense steps in JavaScript: w_b = S·v_b into `w` and the forms w_bᵀKw_b, four at once. */
function denseJs(S: Float64Array, K: Float64Array, pm: number, cols: Int32Array, dInv: Float64Array, ccTr: readonly Float64Array[], B: number, v: readonly Float64Array[], w: readonly Float64Array[]): number[] {
  const v0 = v[0]!, v1 = v[1]!, v2 = v[2]!, v3 = v[3]!;
  const w0 = w[0]!, w1 = w[1]!, w2 = w[2]!, w3 = w[3]!;
  for (let b = 0; b < B; b++) {
    const vb = v[b]!;
    const tr = ccTr[b]!;
    for (let i = 0; i < pm; i++) vb[i] = tr[cols[i]!]! * dInv[i]!;
  }
  for (let b = B; b < 4; b++) v[b]!.fill(0, 0, pm);
  // w_b = S·v_b for four vectors at once
  for (let i = 0; i < pm; i++) {
    const row = i * pm;
    let a0 = 0, a1 = 0, a2 = 0, a3 = 0;
    for (let j = 0; j < pm; j++) {
      const sij = S[row + j]!;
      a0 += sij * v0[j]!;
      a1 += sij * v1[j]!;
      a2 += sij * v2[j]!;
      a3 += sij * v3[j]!;
    }
    w0[i] = a0; w1[i] = a1; w2[i] = a2; w3[i] = a3;
  }
  // quadratic forms w_bᵀKw_b by the upper triangle
  let q0 = 0, q1 = 0, q2 = 0, q3 = 0;
  for (let i = 0; i < pm; i++) {
    const row = i * pm;
    const kii = 0.5 * K[row + i]!;
    let a0 = kii * w0[i]!, a1 = kii * w1[i]!, a2 = kii * w2[i]!, a3 = kii * w3[i]!;
    for (let j = i + 1; j < pm; j++) {
      const kij = K[row + j]!;
      a0 += kij * w0[j]!;
      a1 += kij * w1[j]!;
      a2 += kij * w2[j]!;
      a3 += kij * w3[j]!;
    }
    q0 += w0[i]! * a0; q1 += w1[i]! * a1; q2 += w2[i]! * a2; q3 += w3[i]! * a3;
  }
  return [q0, q1, q2, q3];
}

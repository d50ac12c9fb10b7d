/**
 * Internal: the linear predictor Xβ and the score Xᵀr of a design through its convolution
 * structure (plus a dense block for covariate columns that are non-zero on most rows). An event term's columns are x_j(t) = Σ_e w_e·h_j(t − b_e − lagStart), so
 *   (Xβ)(t) = Σ_e w_e·K(t − b_e − lagStart),  K(i) = Σ_j h_j(i)·β_j            (#events × #lags)
 *   (Xᵀr)_j = Σ_i h_j(i)·C(i),                C(i) = Σ_e w_e·r(b_e + lagStart + i)
 * instead of one multiply-add per stored non-zero (the raised cosines overlap, so a CSR row of an
 * event term holds 2–3 entries per event). Terms where that is not cheaper (dense event trains,
 * covariates) stay in a residual CSR. Only the order of floating-point additions differs from the
 * CSR products; the structure is checked against the CSR once when built and not used if the two
 * disagree beyond rounding.
 */
import type { EncodingDesign } from '../design/design-matrix.js';

/** One event term handled by convolution (columns first … first + m − 1 of the problem). */
export interface ConvTerm {
  readonly first: number;
  readonly m: number;
  readonly nLags: number;
  readonly lagStart: number;
  /** nLags × m row-major. */
  readonly kernels: Float64Array;
  readonly bins: Int32Array;
  readonly weights: Float64Array;
}

/** Columns stored densely: covariates non-zero on most rows. */
export interface DenseBlock {
  /** Problem column index of each dense column. */
  readonly cols: Int32Array;
  /** Values per column (each of length n). */
  readonly columns: readonly Float64Array[];
}

/** Convolution terms, dense covariate columns, the residual CSR of all other columns, and scratch arrays (length n). */
export interface ConvStructure {
  readonly terms: readonly ConvTerm[];
  readonly dense: DenseBlock | null;
  readonly rowPtr: Int32Array;
  readonly colIdx: Int32Array;
  readonly values: Float64Array;
  /** Scratch: Xβ of the convolution terms; residuals for the score. */
  readonly xb: Float64Array;
  readonly r: Float64Array;
  /** Scratch of length max nLags. */
  readonly k: Float64Array;
}

/**
 * Xβ of the convolution terms and dense columns into s.xb on rows [lo, hi) (other rows are left
 * as they are; beta[0] is the intercept and is not added).
 */
export function convPredict(s: ConvStructure, beta: Float64Array, lo = 0, hi = s.xb.length): void {
  const { xb, k } = s;
  xb.fill(0, lo, hi);
  for (const t of s.terms) {
    const { first, m, nLags, lagStart, kernels, bins, weights } = t;
    for (let i = 0; i < nLags; i++) {
      let acc = 0;
      const o = i * m;
      for (let j = 0; j < m; j++) acc += kernels[o + j]! * beta[first + j + 1]!;
      k[i] = acc;
    }
    for (let e = 0; e < bins.length; e++) {
      const t0 = bins[e]! + lagStart;
      const i0 = t0 < lo ? lo - t0 : 0;
      const i1 = t0 + nLags > hi ? hi - t0 : nLags;
      const w = weights[e]!;
      for (let i = i0; i < i1; i++) xb[t0 + i] = xb[t0 + i]! + w * k[i]!;
    }
  }
  const D = s.dense;
  if (D) {
    for (let c = 0; c < D.cols.length; c++) {
      const b = beta[D.cols[c]! + 1]!;
      const v = D.columns[c]!;
      for (let t = lo; t < hi; t++) xb[t] = xb[t]! + v[t]! * b;
    }
  }
}

/**
 * Add Xᵀr of the convolution terms and dense columns to g (r in s.r on rows [lo, hi), zero there
 * on rows not to be counted; rows outside [lo, hi) are not read).
 */
export function convScore(s: ConvStructure, g: Float64Array, lo = 0, hi = s.r.length): void {
  const { r, k } = s;
  for (const t of s.terms) {
    const { first, m, nLags, lagStart, kernels, bins, weights } = t;
    k.fill(0, 0, nLags);
    for (let e = 0; e < bins.length; e++) {
      const t0 = bins[e]! + lagStart;
      const i0 = t0 < lo ? lo - t0 : 0;
      const i1 = t0 + nLags > hi ? hi - t0 : nLags;
      const w = weights[e]!;
      for (let i = i0; i < i1; i++) k[i] = k[i]! + w * r[t0 + i]!;
    }
    for (let j = 0; j < m; j++) {
      let acc = 0;
      for (let i = 0; i < nLags; i++) acc += kernels[i * m + j]! * k[i]!;
      g[first + j + 1] = g[first + j + 1]! + acc;
    }
  }
  const D = s.dense;
  if (D) {
    for (let c = 0; c < D.cols.length; c++) {
      const v = D.columns[c]!;
      let acc = 0;
      for (let t = lo; t < hi; t++) acc += r[t]! * v[t]!;
      g[D.cols[c]! + 1] = g[D.cols[c]! + 1]! + acc;
    }
  }
}

/** A convolution multiply-add streams contiguous memory; a CSR one gathers through an index: about this many times cheaper (measured, Node 20). */
const CONV_ADVANTAGE = 2.5;

/**
 * The structure of `design` restricted to `cols` (ascending; null = all columns), whose CSR is
 * `sub`; null when no term is cheaper by convolution or the check against the CSR fails.
 * (Callers cache it per design and column set: poisson-unit.ts.)
 */
export function convStructure(design: EncodingDesign, cols: Int32Array | null, sub: EncodingDesign): ConvStructure | null {
  const n = design.nRows;
  const p = design.nCols;
  const newIdx = new Int32Array(p).fill(-1);
  if (cols) cols.forEach((j, q) => { newIdx[j] = q; });
  else for (let j = 0; j < p; j++) newIdx[j] = j;
  // non-zeros per column of the full design
  const colNnz = new Float64Array(p);
  for (let k = 0; k < design.rowPtr[n]!; k++) { const j = design.colIdx[k]!; colNnz[j] = colNnz[j]! + 1; }
  const conv = new Uint8Array(p);
  const terms: ConvTerm[] = [];
  let maxLags = 1;
  for (const t of design.terms) {
    if (t.kind !== 'event' || t.nColumns === 0) continue;
    let kept = true;
    let nnz = 0;
    for (let j = 0; j < t.nColumns; j++) {
      const q = newIdx[t.firstColumn + j]!;
      if (q < 0 || q !== newIdx[t.firstColumn]! + j) kept = false;
      nnz += colNnz[t.firstColumn + j]!;
    }
    if (!kept || t.eventBins.length * t.nLags >= CONV_ADVANTAGE * nnz) continue;
    for (let j = 0; j < t.nColumns; j++) conv[t.firstColumn + j] = 1;
    terms.push({ first: newIdx[t.firstColumn]!, m: t.nColumns, nLags: t.nLags, lagStart: t.lagStart, kernels: t.kernels, bins: t.eventBins, weights: t.eventWeights });
    maxLags = Math.max(maxLags, t.nLags);
  }
  if (terms.length === 0) return null;
  // Residual columns non-zero on at least half of the rows (lagged covariates) are stored densely:
  // a dense multiply-add needs no index load.
  const denseAt = new Int32Array(p).fill(-1);
  const denseCols: number[] = [];
  for (let j = 0; j < p; j++) {
    if (newIdx[j]! >= 0 && !conv[j] && colNnz[j]! >= n / 2) {
      denseAt[j] = denseCols.length;
      denseCols.push(j);
    }
  }
  let dense: DenseBlock | null = null;
  if (denseCols.length > 0) {
    const columns = denseCols.map(() => new Float64Array(n));
    for (let t = 0; t < n; t++) {
      for (let k = design.rowPtr[t]!; k < design.rowPtr[t + 1]!; k++) {
        const c = denseAt[design.colIdx[k]!]!;
        if (c >= 0) columns[c]![t] = design.values[k]!;
      }
    }
    dense = { cols: Int32Array.from(denseCols, (j) => newIdx[j]!), columns };
  }
  const rowPtr = new Int32Array(n + 1);
  let cnt = 0;
  for (let t = 0; t < n; t++) {
    for (let k = design.rowPtr[t]!; k < design.rowPtr[t + 1]!; k++) {
      const j = design.colIdx[k]!;
      if (newIdx[j]! >= 0 && !conv[j] && denseAt[j]! < 0) cnt++;
    }
    rowPtr[t + 1] = cnt;
  }
  const colIdx = new Int32Array(cnt);
  const values = new Float64Array(cnt);
  cnt = 0;
  for (let t = 0; t < n; t++) {
    for (let k = design.rowPtr[t]!; k < design.rowPtr[t + 1]!; k++) {
      const j = design.colIdx[k]!;
      if (newIdx[j]! >= 0 && !conv[j] && denseAt[j]! < 0) {
        colIdx[cnt] = newIdx[j]!;
        values[cnt] = design.values[k]!;
        cnt++;
      }
    }
  }
  const s: ConvStructure = { terms, dense, rowPtr, colIdx, values, xb: new Float64Array(n), r: new Float64Array(n), k: new Float64Array(maxLags) };
  return agrees(s, sub) ? s : null;
}

/** Xβ and Xᵀr by the structure agree with the CSR of `sub` to rounding, for fixed test vectors. */
function agrees(s: ConvStructure, sub: EncodingDesign): boolean {
  const n = sub.nRows;
  const q = sub.nCols;
  const beta = new Float64Array(q + 1);
  for (let j = 1; j <= q; j++) beta[j] = Math.sin(1.7 * j) + 0.5;
  convPredict(s, beta);
  let scale = 0;
  let err = 0;
  for (let t = 0; t < n; t++) {
    let a = 0;
    let mag = 0;
    for (let k = sub.rowPtr[t]!; k < sub.rowPtr[t + 1]!; k++) {
      a += sub.values[k]! * beta[sub.colIdx[k]! + 1]!;
      mag += Math.abs(sub.values[k]! * beta[sub.colIdx[k]! + 1]!);
    }
    let b = s.xb[t]!;
    for (let k = s.rowPtr[t]!; k < s.rowPtr[t + 1]!; k++) b += s.values[k]! * beta[s.colIdx[k]! + 1]!;
    err = Math.max(err, Math.abs(a - b));
    scale = Math.max(scale, mag);
  }
  if (!(err <= 1e-12 * scale)) return false;
  // score with r(t) = cos(t)
  const g1 = new Float64Array(q + 1);
  const g2 = new Float64Array(q + 1);
  for (let t = 0; t < n; t++) {
    const r = Math.cos(0.37 * t);
    s.r[t] = r;
    for (let k = sub.rowPtr[t]!; k < sub.rowPtr[t + 1]!; k++) { const j = sub.colIdx[k]! + 1; g1[j] = g1[j]! + r * sub.values[k]!; }
    for (let k = s.rowPtr[t]!; k < s.rowPtr[t + 1]!; k++) { const j = s.colIdx[k]! + 1; g2[j] = g2[j]! + r * s.values[k]!; }
  }
  convScore(s, g2);
  const colMag = new Float64Array(q + 1);
  for (let k = 0; k < sub.rowPtr[n]!; k++) { const j = sub.colIdx[k]! + 1; colMag[j] = colMag[j]! + Math.abs(sub.values[k]!); }
  for (let j = 1; j <= q; j++) if (!(Math.abs(g1[j]! - g2[j]!) <= 1e-12 * colMag[j]! + 1e-300)) return false;
  return true;
}

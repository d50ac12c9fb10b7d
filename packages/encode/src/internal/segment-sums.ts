import type { EncodingDesign } from '../design/design-matrix.js';

/**
 * Raw sums of the design over contiguous row segments [cuts[s], cuts[s+1]): Gram XᵀX (full
 * symmetric p × p per segment), column sums and row counts. Training/test quantities of any
 * fold are sums/differences of these (INFERENCE.md §4.2, "downdate raw sums").
 */
export interface DesignSums {
  readonly p: number;
  readonly nSeg: number;
  readonly g: Float64Array;
  readonly s: Float64Array;
  readonly cnt: Float64Array;
}

/** Per-segment sums of one cell: Xᵀy (p per segment), Σy, Σy² (y already centred globally). */
export interface CellSums {
  readonly c: Float64Array;
  readonly ysum: Float64Array;
  readonly yy: Float64Array;
}

/** Sums of rows with mask[r] = 1 (all rows when mask is null). */
export function designSums(d: EncodingDesign, cuts: Int32Array, mask: Uint8Array | null): DesignSums {
  const p = d.nCols;
  const nSeg = cuts.length - 1;
  const g = new Float64Array(nSeg * p * p);
  const s = new Float64Array(nSeg * p);
  const cnt = new Float64Array(nSeg);
  const { rowPtr, colIdx, values } = d;
  for (let seg = 0; seg < nSeg; seg++) {
    const go = seg * p * p;
    const so = seg * p;
    let count = 0;
    for (let r = cuts[seg]!; r < cuts[seg + 1]!; r++) {
      if (mask !== null && mask[r] === 0) continue;
      count++;
      const k1 = rowPtr[r + 1]!;
      for (let a = rowPtr[r]!; a < k1; a++) {
        const va = values[a]!;
        const ca = colIdx[a]!;
        s[so + ca] = s[so + ca]! + va;
        const base = go + ca * p;
        for (let b = a; b < k1; b++) {
          const idx = base + colIdx[b]!;
          g[idx] = g[idx]! + va * values[b]!;
        }
      }
    }
    cnt[seg] = count;
    // mirror the upper triangle
    for (let i = 0; i < p; i++) for (let j = i + 1; j < p; j++) g[go + j * p + i] = g[go + i * p + j]!;
  }
  return { p, nSeg, g, s, cnt };
}

/** Copy of `base` with the given rows (ascending, assumed counted in base) removed. */
export function removeRows(base: DesignSums, d: EncodingDesign, cuts: Int32Array, rows: Int32Array): DesignSums {
  const p = base.p;
  const g = Float64Array.from(base.g);
  const s = Float64Array.from(base.s);
  const cnt = Float64Array.from(base.cnt);
  let seg = 0;
  for (let i = 0; i < rows.length; i++) {
    const r = rows[i]!;
    while (r >= cuts[seg + 1]!) seg++;
    cnt[seg] = cnt[seg]! - 1;
    const go = seg * p * p;
    const k0 = d.rowPtr[r]!;
    const k1 = d.rowPtr[r + 1]!;
    for (let a = k0; a < k1; a++) {
      const va = d.values[a]!;
      const ca = d.colIdx[a]!;
      s[seg * p + ca] = s[seg * p + ca]! - va;
      for (let b = k0; b < k1; b++) {
        const idx = go + ca * p + d.colIdx[b]!;
        g[idx] = g[idx]! - va * d.values[b]!;
      }
    }
  }
  return { p, nSeg: base.nSeg, g, s, cnt };
}

/** Cell sums over rows with mask[r] = 1 (and finite y); y is used as given (pre-centred). */
export function cellSums(d: EncodingDesign, cuts: Int32Array, y: Float64Array, mask: Uint8Array | null): CellSums {
  const p = d.nCols;
  const nSeg = cuts.length - 1;
  const c = new Float64Array(nSeg * p);
  const ysum = new Float64Array(nSeg);
  const yy = new Float64Array(nSeg);
  const { rowPtr, colIdx, values } = d;
  for (let seg = 0; seg < nSeg; seg++) {
    const co = seg * p;
    let sy = 0;
    let syy = 0;
    for (let r = cuts[seg]!; r < cuts[seg + 1]!; r++) {
      if (mask !== null && mask[r] === 0) continue;
      const v = y[r]!;
      sy += v;
      syy += v * v;
      if (v === 0) continue;
      for (let a = rowPtr[r]!; a < rowPtr[r + 1]!; a++) {
        const idx = co + colIdx[a]!;
        c[idx] = c[idx]! + values[a]! * v;
      }
    }
    ysum[seg] = sy;
    yy[seg] = syy;
  }
  return { c, ysum, yy };
}

/**
 * Internal engine: per-segment cross-products Xᵀ·Shift_k(y), Σ Shift_k(y) and Σ Shift_k(y)² for
 * many circular shifts k, where Shift_k(y)(t) = y((t − k) mod n) (INFERENCE.md §4.6).
 *
 * Every design column is a convolution of a term source with a short kernel,
 * x_j(t) = Σ_τ h_j(τ)·s(t − τ), so for segment [a, b)
 *   Σ_{t∈[a,b)} x_j(t)·y((t−k) mod n) = Σ_τ h_j(τ)·Q(τ, k),  Q(τ, k) = Σ_{t∈[a,b)} s(t−τ)·y((t−k) mod n).
 * Q is computed either directly from the non-zero source entries (events: O(#events·#lags) per
 * shift), or for all shifts at once by FFT cross-correlation of the segment-masked source with y,
 * R(m) = Σ_{u∈[a,b)} s(u)·y((u−m) mod n), Q(τ, k) = R(k − τ) + a boundary term that only involves
 * sources within one kernel length of a or b. Both routes are exact; the cheaper one is chosen
 * per term from operation counts.
 */
import type { EncodingDesign } from '../design/design-matrix.js';
import type { CellSums } from '../internal/segment-sums.js';
import { halfSpectrum, windowCorrelation, windowSize, windowSpectrum } from '../internal/fft-correlate.js';

interface Kernel {
  readonly first: number;
  readonly m: number;
  readonly nLags: number;
  readonly lagStart: number;
  readonly h: Float64Array;
  /** Kernels transposed (column j's lags contiguous): hT[j * nLags + i] = h[i * m + j]. */
  readonly hT: Float64Array;
  /** Non-zero lag range [i0[j], i1[j]) of each column's kernel. */
  readonly i0: Int32Array;
  readonly i1: Int32Array;
}

/** Sparse source entries (bins may lie outside [0, n)); optionally restricted to some segments. */
interface DirectPart extends Kernel {
  readonly bins: Int32Array;
  readonly w: Float64Array;
  /** Only rows of segments marked 1 here are accumulated (null: all segments). */
  readonly onlySegs: Uint8Array | null;
}

function sameSegs(a: Uint8Array | null, b: Uint8Array | null): boolean {
  if (a === null || b === null) return a === b;
  return a.length === b.length && a.every((v, i) => v === b[i]);
}

/**
 * Direct parts that share event bins and lag window, gathered together: for every event, its
 * rows split into chunks [i0, i1) of lag indices lying in one segment (precomputed), so the
 * shift loop is a contiguous gather of y with one multiply-add per term.
 */
interface DirectGroup {
  readonly parts: DirectPart[];
  readonly nLags: number;
  readonly lagStart: number;
  /** Event index, then chunk triples (i0, i1, seg) for each event, flattened; chunkPtr[e] … chunkPtr[e+1]. */
  readonly chunkPtr: Int32Array;
  readonly chunks: Int32Array;
  readonly t0: Int32Array;
  /** Weights, part-major: w[q * nEvents + e]. */
  readonly w: Float64Array;
}

function groupDirect(parts: DirectPart[], cuts: Int32Array, segId: Int32Array, n: number): DirectGroup[] {
  const groups: DirectGroup[] = [];
  const used = new Array<boolean>(parts.length).fill(false);
  for (let a = 0; a < parts.length; a++) {
    if (used[a]) continue;
    const pa = parts[a]!;
    const members = [pa];
    used[a] = true;
    for (let b = a + 1; b < parts.length; b++) {
      const pb = parts[b]!;
      if (used[b] || !sameSegs(pb.onlySegs, pa.onlySegs) || pb.nLags !== pa.nLags || pb.lagStart !== pa.lagStart || pb.bins.length !== pa.bins.length) continue;
      let same = true;
      for (let e = 0; same && e < pa.bins.length; e++) same = pa.bins[e] === pb.bins[e];
      if (same) {
        members.push(pb);
        used[b] = true;
      }
    }
    const nE = pa.bins.length;
    const ptr = new Int32Array(nE + 1);
    const ch: number[] = [];
    const t0s = new Int32Array(nE);
    for (let e = 0; e < nE; e++) {
      const t0 = pa.bins[e]! + pa.lagStart;
      t0s[e] = t0;
      let i = Math.max(0, -t0);
      const iHi = Math.min(pa.nLags, n - t0);
      while (i < iHi) {
        const seg = segId[t0 + i]!;
        const iEnd = Math.min(iHi, cuts[seg + 1]! - t0);
        if (pa.onlySegs === null || pa.onlySegs[seg] === 1) ch.push(i, iEnd, seg);
        i = iEnd;
      }
      ptr[e + 1] = ch.length;
    }
    const w = new Float64Array(members.length * nE);
    members.forEach((m, q) => w.set(m.w, q * nE));
    groups.push({ parts: members, nLags: pa.nLags, lagStart: pa.lagStart, chunkPtr: ptr, chunks: Int32Array.from(ch), t0: t0s, w });
  }
  return groups;
}

interface FftPart extends Kernel {
  readonly segs: Int32Array;
  readonly spectra: Float64Array[];
  /** Boundary terms at the edges of the long segments, one per edge position (see Edge). */
  readonly edges: Edge[];
}

/**
 * The boundary term at one cut β: records (u, i0, i1) with signed weights w: lags i ∈ [i0, i1)
 * of source entry u give E(i) += w·y(u + lagStart + i − k). The segment starting at β (`right`,
 * a segment index, or −1) adds E, the one ending at β (`left`) subtracts it: one computation
 * for both neighbours. Lags outside [lo, hi) are untouched.
 */
interface Edge {
  readonly rec: Int32Array;
  readonly w: Float64Array;
  readonly right: number;
  readonly left: number;
  readonly lo: number;
  readonly hi: number;
}

export interface ShiftPlan {
  readonly n: number;
  readonly p: number;
  readonly nSeg: number;
  readonly cuts: Int32Array;
  readonly segId: Int32Array;
  readonly direct: DirectGroup[];
  readonly fft: FftPart[];
  readonly N: number;
  readonly invalidRows: Int32Array;
  readonly invalidX: Float64Array;
  /** Counts of the routes chosen, for reporting. */
  readonly route: { readonly directTerms: number; readonly fftTerms: number };
  /** Correlation buffers (length n, overwritten by every cell), kept with the plan. */
  readonly buffers: Float64Array[];
  /** Segments computed from the design's sparse rows (short ones: fold gaps), and a 0/1 mask of them. */
  readonly rowSegs: Int32Array;
  readonly rowSeg: Uint8Array;
  /** Per row segment, its rows by column (row offsets from the segment start). */
  readonly rowCols: readonly { readonly colPtr: Int32Array; readonly rowOff: Int32Array; readonly values: Float64Array }[];
}

function kernelOf(design: EncodingDesign, ti: number): Kernel {
  const t = design.terms[ti]!;
  const m = t.nColumns;
  const i0 = new Int32Array(m);
  const i1 = new Int32Array(m);
  for (let j = 0; j < m; j++) {
    let a = t.nLags;
    let b = 0;
    for (let i = 0; i < t.nLags; i++) {
      if (t.kernels[i * m + j] !== 0) {
        if (i < a) a = i;
        b = i + 1;
      }
    }
    i0[j] = a < b ? a : 0;
    i1[j] = b;
  }
  const hT = new Float64Array(m * t.nLags);
  for (let i = 0; i < t.nLags; i++) for (let j = 0; j < m; j++) hT[j * t.nLags + i] = t.kernels[i * m + j]!;
  return { first: t.firstColumn, m, nLags: t.nLags, lagStart: t.lagStart, h: t.kernels, hT, i0, i1 };
}

/**
 * Rough costs (seconds) used to choose the route of a term, measured with fft.js on Node 20:
 * one multiply-add of a gathered sample, a real forward transform and a paired inverse
 * correlation of size N.
 */
const SEC_PER_GATHER = 2.5e-9;
function forwardSeconds(N: number): number {
  return 2e-9 * N * Math.log2(N);
}
function pairSeconds(N: number): number {
  return 3.6e-9 * N * Math.log2(N);
}

/**
 * Plan the shifted cross-products for a design on segments `cuts`, for about `nShifts` shifts
 * of each of `nCells` cells. `force` selects a route for every event term (tests); covariates
 * always use the FFT route.
 */
export function buildShiftPlan(design: EncodingDesign, cuts: Int32Array, nShifts: number, force: 'auto' | 'direct' | 'fft' = 'auto', nCells = 1): ShiftPlan {
  const n = design.nRows;
  const p = design.nCols;
  const nSeg = cuts.length - 1;
  const segId = new Int32Array(n);
  for (let s = 0; s < nSeg; s++) segId.fill(s, cuts[s]!, cuts[s + 1]!);
  let maxLong = 0;
  for (let s = 0; s < nSeg; s++) maxLong = Math.max(maxLong, cuts[s + 1]! - cuts[s]!);
  const N = windowSize(n, maxLong);
  // Segments no longer than two of the longest kernels (the gaps around test blocks) are summed
  // straight from the design's sparse rows for every term: Σ_{t∈s} x_t·y(t − k) costs their
  // non-zeros per shift, far less than a transform pair or the per-lag gathers of each term.
  const rowSeg = new Uint8Array(nSeg);
  const rowList: number[] = [];
  for (let s = 0; s < nSeg; s++) {
    if (cuts[s + 1]! - cuts[s]! <= 2 * design.maxKernelBins) {
      rowSeg[s] = 1;
      rowList.push(s);
    }
  }
  const structural = rowList.length > 0 ? Uint8Array.from(rowSeg, (v) => 1 - v) : null;
  const direct: DirectPart[] = [];
  const fft: FftPart[] = [];
  let nd = 0;
  let nf = 0;
  design.terms.forEach((t, ti) => {
    const k = kernelOf(design, ti);
    const lagEnd = t.lagStart + t.nLags - 1;
    // The other segments are longer than two of this term's kernels (FFT or direct route).
    const longSegs: number[] = [];
    for (let s = 0; s < nSeg; s++) if (!rowSeg[s]) longSegs.push(s);
    let useFft: boolean;
    if (t.kind === 'covariate') useFft = true;
    else if (force !== 'auto') useFft = force === 'fft';
    else {
      const directSec = nShifts * t.eventBins.length * t.nLags * SEC_PER_GATHER;
      // per cell: one paired inverse transform per two long segments, this term's share of the
      // design-level forward transforms, and the per-shift reads of the correlations
      const nL = longSegs.length;
      const fftSec = (nL / 2) * pairSeconds(N) + (nL * forwardSeconds(N)) / nCells + nShifts * nL * t.nLags * SEC_PER_GATHER;
      useFft = fftSec < directSec && longSegs.length > 0;
    }
    if (!useFft) {
      direct.push({ ...k, bins: t.eventBins, w: t.eventWeights, onlySegs: structural });
      nd++;
      return;
    }
    nf++;
    // Dense source on [0, n); events outside the grid go to a direct part.
    let series: Float64Array;
    if (t.kind === 'covariate') {
      series = t.series;
    } else {
      series = new Float64Array(n);
      const ob: number[] = [];
      const ow: number[] = [];
      for (let e = 0; e < t.eventBins.length; e++) {
        const u = t.eventBins[e]!;
        if (u >= 0 && u < n) series[u] = series[u]! + t.eventWeights[e]!;
        else {
          ob.push(u);
          ow.push(t.eventWeights[e]!);
        }
      }
      if (ob.length > 0) direct.push({ ...k, bins: Int32Array.from(ob), w: Float64Array.from(ow), onlySegs: structural });
    }
    if (longSegs.length === 0) return;
    const spectra: Float64Array[] = [];
    const scratch = new Float64Array(N);
    // Edge positions of the long segments, with the segment on each side (−1: none of them).
    const sides = new Map<number, { right: number; left: number }>();
    for (const s of longSegs) {
      spectra.push(halfSpectrum(series.subarray(cuts[s]!, cuts[s + 1]!), N, scratch));
      const at = (beta: number) => sides.get(beta) ?? sides.set(beta, { right: -1, left: -1 }).get(beta)!;
      at(cuts[s]!).right = s;
      at(cuts[s + 1]!).left = s;
    }
    // Row tt = u + lagStart + i of entry u lies in a segment [a, b) while R counts u ∈ [a, b):
    // the difference is +1 for u < a ≤ tt and −1 for tt < a ≤ u at its start a, the opposite at
    // its end b. A segment longer than two kernels has every entry near one of its edges only,
    // so each (entry, edge) gives one lag range of one sign.
    const edges: Edge[] = [];
    for (const [beta, side] of [...sides.entries()].sort((x, y) => x[0] - y[0])) {
      const rec: number[] = [];
      const ew: number[] = [];
      let lo = t.nLags;
      let hi = 0;
      for (let u = Math.max(0, beta - lagEnd); u < Math.min(n, beta - t.lagStart); u++) {
        if (series[u] === 0) continue;
        const cut = beta - u - t.lagStart; // first lag with tt ≥ β
        const [i0, i1, sg] = u < beta ? [Math.max(0, cut), t.nLags, 1] : [0, Math.min(t.nLags, cut), -1];
        if (i1 > i0) {
          rec.push(u, i0, i1);
          ew.push(sg * series[u]!);
          lo = Math.min(lo, i0);
          hi = Math.max(hi, i1);
        }
      }
      if (rec.length > 0) edges.push({ rec: Int32Array.from(rec), w: Float64Array.from(ew), right: side.right, left: side.left, lo, hi });
    }
    fft.push({ ...k, segs: Int32Array.from(longSegs), spectra, edges });
  });
  // Rows masked in the design: their structural values, to subtract.
  const inv: number[] = [];
  if (design.rowValid) for (let i = 0; i < n; i++) if (!design.rowValid[i]) inv.push(i);
  const invalidRows = Int32Array.from(inv);
  const invalidX = new Float64Array(inv.length * p);
  design.terms.forEach((t) => {
    const m = t.nColumns;
    inv.forEach((r, ri) => {
      for (let i = 0; i < t.nLags; i++) {
        const lag = t.lagStart + i;
        let s = 0;
        if (t.kind === 'covariate') {
          const u = r - lag;
          if (u >= 0 && u < n) s = t.series[u]!;
        } else {
          for (let e = 0; e < t.eventBins.length; e++) if (t.eventBins[e]! + lag === r) s += t.eventWeights[e]!;
        }
        if (s === 0) continue;
        for (let j = 0; j < m; j++) {
          const idx = ri * p + t.firstColumn + j;
          invalidX[idx] = invalidX[idx]! + s * t.kernels[i * m + j]!;
        }
      }
    });
  });
  return { n, p, nSeg, cuts, segId, direct: groupDirect(direct, cuts, segId, n), fft, N, invalidRows, invalidX, route: { directTerms: nd, fftTerms: nf }, buffers: [],
    rowSegs: Int32Array.from(rowList), rowSeg, rowCols: rowList.map((seg) => byColumn(design, cuts[seg]!, cuts[seg + 1]!)),
  };
}

/** Rows [a, b) of the design's sparse rows regrouped by column, with row offsets from a. */
function byColumn(design: EncodingDesign, a: number, b: number): { colPtr: Int32Array; rowOff: Int32Array; values: Float64Array } {
  const p = design.nCols;
  const colPtr = new Int32Array(p + 1);
  for (let k = design.rowPtr[a]!; k < design.rowPtr[b]!; k++) colPtr[design.colIdx[k]! + 1]!++;
  for (let j = 0; j < p; j++) colPtr[j + 1] = colPtr[j + 1]! + colPtr[j]!;
  const fill = colPtr.slice(0, p);
  const nnz = colPtr[p]!;
  const rowOff = new Int32Array(nnz);
  const values = new Float64Array(nnz);
  for (let t = a; t < b; t++) {
    for (let k = design.rowPtr[t]!; k < design.rowPtr[t + 1]!; k++) {
      const at = fill[design.colIdx[k]!]!++;
      rowOff[at] = t - a;
      values[at] = design.values[k]!;
    }
  }
  return { colPtr, rowOff, values };
}

/**
 * Compute shifted sums of `y` (finite, already centred/imputed) for every shift in `shifts`,
 * calling `visit(index, sums)` for each; the `sums` object is reused between calls.
 */
export function forEachShift(plan: ShiftPlan, y: Float64Array, shifts: Int32Array, visit: (index: number, sums: CellSums) => void): void {
  const { n, p, nSeg, cuts, segId, N, rowSegs, rowSeg, rowCols } = plan;
  let maxRowSeg = 0;
  for (const s of rowSegs) maxRowSeg = Math.max(maxRowSeg, cuts[s + 1]! - cuts[s]!);
  const yw = new Float64Array(maxRowSeg);
  // Prefix sums for Σy and Σy² over circular ranges.
  const p1 = new Float64Array(n + 1);
  const p2 = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) {
    p1[i + 1] = p1[i]! + y[i]!;
    p2[i + 1] = p2[i]! + y[i]! * y[i]!;
  }
  const circ = (pre: Float64Array, a: number, b: number) => {
    // Σ over indices a … b−1 (mod n), with 0 ≤ b − a ≤ n and a possibly negative
    let lo = a % n;
    if (lo < 0) lo += n;
    const len = b - a;
    const hi = lo + len;
    return hi <= n ? pre[hi]! - pre[lo]! : pre[n]! - pre[lo]! + pre[hi - n]!;
  };
  // Per-cell FFT correlations: one window spectrum per segment, shared by every FFT term on it,
  // and one inverse transform per two (term, segment) pairs (of the same segment or not).
  // R[pi][q]: correlation of FFT part pi on its q-th segment, in buffers reused between calls.
  const R: Float64Array[][] = plan.fft.map((part) => Array.from(part.segs, () => new Float64Array(0)));
  const pool = plan.buffers;
  for (let need = plan.fft.reduce((a, part) => a + part.segs.length, 0); pool.length < need;) pool.push(new Float64Array(n));
  let used = 0;
  if (plan.fft.length > 0) {
    const scratch = new Float64Array(N);
    const segList = [...new Set(plan.fft.flatMap((part) => Array.from(part.segs)))];
    const Z = new Map<number, Float64Array>();
    for (const s of segList) Z.set(s, windowSpectrum(y, cuts[s]!, cuts[s + 1]! - cuts[s]!, N, scratch));
    const users: { pi: number; q: number; s: number }[] = [];
    for (const s of segList) {
      plan.fft.forEach((part, pi) => {
        const q = part.segs.indexOf(s);
        if (q >= 0) users.push({ pi, q, s });
      });
    }
    for (let u = 0; u < users.length; u += 2) {
      const u1 = users[u]!;
      const u2 = users[u + 1];
      const r1 = pool[used++]!;
      const r2 = u2 ? pool[used++]! : null;
      windowCorrelation(plan.fft[u1.pi]!.spectra[u1.q]!, u2 ? plan.fft[u2.pi]!.spectra[u2.q]! : null, Z.get(u1.s)!, n, N, r1, r2, u2 ? Z.get(u2.s)! : undefined);
      R[u1.pi]![u1.q] = r1;
      if (u2 && r2) R[u2.pi]![u2.q] = r2;
    }
  }
  const maxLags = Math.max(1, ...plan.direct.map((d) => d.nLags), ...plan.fft.map((d) => d.nLags));
  const Q = new Float64Array(nSeg * maxLags);
  const E = new Float64Array(maxLags);
  const maxParts = Math.max(1, ...plan.direct.map((d) => d.parts.length));
  const Qs = Array.from({ length: maxParts }, () => new Float64Array(nSeg * maxLags));
  const touched = new Uint8Array(nSeg);
  const sums: CellSums = { c: new Float64Array(nSeg * p), ysum: new Float64Array(nSeg), yy: new Float64Array(nSeg) };
  const { c, ysum, yy } = sums;
  const flush = (kp: Kernel, Q: Float64Array, keepTouched = false) => {
    const { first, m, nLags, hT, i0, i1 } = kp;
    for (let s = 0; s < nSeg; s++) {
      if (!touched[s]) continue;
      if (!keepTouched) touched[s] = 0;
      const qo = s * maxLags;
      const co = s * p + first;
      for (let j = 0; j < m; j++) {
        let acc = 0;
        const ho = j * nLags - qo;
        const end = qo + i1[j]!;
        for (let i = qo + i0[j]!; i < end; i++) acc += hT[ho + i]! * Q[i]!;
        c[co + j] = c[co + j]! + acc;
      }
      Q.fill(0, qo, qo + nLags);
    }
  };
  for (let si = 0; si < shifts.length; si++) {
    let k = shifts[si]! % n;
    if (k < 0) k += n;
    c.fill(0);
    for (let s = 0; s < nSeg; s++) {
      ysum[s] = circ(p1, cuts[s]! - k, cuts[s + 1]! - k);
      yy[s] = circ(p2, cuts[s]! - k, cuts[s + 1]! - k);
    }
    // Direct parts, gathered per group of terms sharing their events.
    for (const g of plan.direct) {
      const { chunkPtr, chunks, t0: t0s, w } = g;
      const nE = t0s.length;
      const nq = g.parts.length;
      const Q0 = Qs[0]!;
      const Q1 = nq > 1 ? Qs[1]! : Q0;
      for (let e = 0; e < nE; e++) {
        const base = t0s[e]! - k; // y index of lag index 0, before wrapping
        const w0 = w[e]!;
        const w1 = nq > 1 ? w[nE + e]! : 0;
        for (let c = chunkPtr[e]!; c < chunkPtr[e + 1]!; c += 3) {
          const ia = chunks[c]!;
          const ib = chunks[c + 1]!;
          const s = chunks[c + 2]!;
          touched[s] = 1;
          const qo = s * maxLags;
          // split [ia, ib) where base + i wraps below 0 or past n
          let i = ia;
          while (i < ib) {
            let idx = base + i;
            let stop = ib;
            if (idx < 0) {
              idx += n;
              stop = Math.min(ib, -base);
            } else if (idx >= n) {
              idx -= n;
            } else {
              stop = Math.min(ib, n - base);
            }
            if (nq === 1) {
              for (; i < stop; i++, idx++) Q0[qo + i] = Q0[qo + i]! + w0 * y[idx]!;
            } else if (nq === 2) {
              for (; i < stop; i++, idx++) {
                const yv = y[idx]!;
                Q0[qo + i] = Q0[qo + i]! + w0 * yv;
                Q1[qo + i] = Q1[qo + i]! + w1 * yv;
              }
            } else {
              for (; i < stop; i++, idx++) {
                const yv = y[idx]!;
                for (let q = 0; q < nq; q++) {
                  const Qq = Qs[q]!;
                  Qq[qo + i] = Qq[qo + i]! + w[q * nE + e]! * yv;
                }
              }
            }
          }
        }
      }
      for (let q = 0; q < nq; q++) flush(g.parts[q]!, Qs[q]!, q < nq - 1);
    }
    // FFT parts.
    plan.fft.forEach((part, pi) => {
      const { nLags, lagStart, segs } = part;
      for (let q = 0; q < segs.length; q++) {
        const s = segs[q]!;
        const r = R[pi]![q]!;
        const qo = s * maxLags;
        touched[s] = 1;
        // m = (k − lagStart − i) mod n, decreasing with i: wrap once instead of a modulo per lag
        let m = (k - lagStart) % n;
        if (m < 0) m += n;
        for (let i = 0; i < nLags; i++) {
          Q[qo + i] = Q[qo + i]! + r[m]!;
          if (--m < 0) m += n;
        }
      }
      // Edge corrections, once per edge position for the segments on both sides.
      for (const edge of part.edges) {
        const { rec, w, lo, hi } = edge;
        E.fill(0, lo, hi);
        for (let e = 0, r3 = 0; e < w.length; e++, r3 += 3) {
          const i0 = rec[r3 + 1]!;
          const i1 = rec[r3 + 2]!;
          const su = w[e]!;
          let idx = (rec[r3]! + lagStart + i0 - k) % n;
          if (idx < 0) idx += n;
          for (let i = i0; i < i1; i++) {
            E[i] = E[i]! + su * y[idx]!;
            if (++idx === n) idx = 0;
          }
        }
        if (edge.right >= 0) {
          const qo = edge.right * maxLags;
          for (let i = lo; i < hi; i++) Q[qo + i] = Q[qo + i]! + E[i]!;
        }
        if (edge.left >= 0) {
          const qo = edge.left * maxLags;
          for (let i = lo; i < hi; i++) Q[qo + i] = Q[qo + i]! - E[i]!;
        }
      }
      flush(part, Q);
    });
    // Short segments from the sparse rows, column by column (masked rows have none).
    for (let r = 0; r < rowSegs.length; r++) {
      const s = rowSegs[r]!;
      const co = s * p;
      const L = cuts[s + 1]! - cuts[s]!;
      let idx = (cuts[s]! - k) % n;
      if (idx < 0) idx += n;
      for (let i = 0; i < L; i++) {
        yw[i] = y[idx]!;
        if (++idx === n) idx = 0;
      }
      const { colPtr, rowOff, values } = rowCols[r]!;
      for (let j = 0; j < p; j++) {
        const q1 = colPtr[j + 1]!;
        let q = colPtr[j]!;
        if (q === q1) continue;
        let acc = 0;
        for (; q < q1; q++) acc += values[q]! * yw[rowOff[q]!]!;
        c[co + j] = c[co + j]! + acc;
      }
    }
    // Remove rows masked in the design (their structural values, where structure was used).
    const inv = plan.invalidRows;
    for (let ri = 0; ri < inv.length; ri++) {
      const t = inv[ri]!;
      const s = segId[t]!;
      let idx = t - k;
      if (idx < 0) idx += n;
      const v = y[idx]!;
      ysum[s] = ysum[s]! - v;
      yy[s] = yy[s]! - v * v;
      if (rowSeg[s]) continue;
      const xo = ri * p;
      for (let j = 0; j < p; j++) c[s * p + j] = c[s * p + j]! - plan.invalidX[xo + j]! * v;
    }
    visit(si, sums);
  }
}

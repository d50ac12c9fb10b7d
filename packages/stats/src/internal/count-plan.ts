/**
 * Integer resampling weights W (R resamples × n rows) and the product W·Y for a block of ≤ 4
 * columns of a row-major n × T matrix Y — the one kernel behind every bootstrap and permutation
 * in this package.
 *
 * Method (Arlazarov et al. 1970, "Four Russians"). Rows are taken in groups of 8. For a group
 * and a block of 4 columns, a table holds all 256 subset sums of the group's rows (one addition
 * per entry, built from the entry without its lowest bit). A count c ∈ {0..3} is written in
 * binary; for each resample, the group's contribution is table[bit-0 mask] + 2·table[bit-1 mask],
 * so 8 rows cost 2 lookups instead of 8 multiply–adds. Counts ≥ 4 contribute their remainder
 * (c − c mod 4)·y through a short list of extra terms (for multinomial counts with mean 1, about
 * 2 % of rows). A plan that only holds 0/1 counts (permutation subsets) skips the second lookup.
 * The result is exact up to floating-point summation order, which is fixed, so results are
 * bit-for-bit reproducible.
 *
 * Reference: Arlazarov, V. L., Dinic, E. A., Kronrod, M. A. & Faradžev, I. A. (1970). On economical
 * construction of the transitive closure of an oriented graph. Soviet Math. Doklady 11:1209–1210.
 */
import type { Rng } from '@tuningfork/core';

const GROUP = 8;
const TABLE = 256;
/** Columns per block (the table interleaves them). */
export const BLOCK = 4;

export class CountPlan {
  readonly resamples: number;
  readonly n: number;
  readonly groups: number;
  /**
   * Per resample b and group g, at 2·(b·groups + g): the table offset (g·256 + bit-0 mask)·4,
   * then (g·256 + bit-1 mask)·4. Interleaved so the hot loop reads one stream.
   */
  readonly offsets: Int32Array;
  /** Σ counts per resample. */
  readonly total: Float64Array;
  /** Whether every count so far was 0 or 1 (then the bit-1 offsets are unused). */
  binary = true;
  /** Extra terms (counts ≥ 4) of resample b are extraRow/extraCount[extraStart[b] .. extraStart[b + 1]). */
  readonly extraStart: Int32Array;
  extraRow: Int32Array;
  extraCount: Float64Array;
  nExtra = 0;
  private next = 0;

  constructor(resamples: number, n: number) {
    this.resamples = resamples;
    this.n = n;
    this.groups = Math.ceil(n / GROUP);
    this.offsets = new Int32Array(2 * resamples * this.groups);
    this.total = new Float64Array(resamples);
    this.extraStart = new Int32Array(resamples + 1);
    const guess = Math.max(16, Math.ceil(resamples * n * 0.03));
    this.extraRow = new Int32Array(guess);
    this.extraCount = new Float64Array(guess);
  }

  /** Record the counts (n non-negative integers) of resample b; resamples are set in order 0, 1, 2, … */
  set(b: number, counts: Int32Array): void {
    if (b !== this.next) throw new RangeError(`CountPlan.set: resample ${b} set out of order (expected ${this.next}).`);
    this.next++;
    const n = this.n;
    const ng = this.groups;
    const base = 2 * b * ng;
    let total = 0;
    for (let g = 0; g < ng; g++) {
      const i0 = g * GROUP;
      const i1 = Math.min(n, i0 + GROUP);
      let m0 = 0;
      let m1 = 0;
      for (let i = i0; i < i1; i++) {
        const c = counts[i]!;
        total += c;
        const bit = 1 << (i - i0);
        if (c & 1) m0 |= bit;
        if (c & 2) m1 |= bit;
        if (c >= 4) this.pushExtra(i, c - (c & 3));
        if (c > 1) this.binary = false;
      }
      this.offsets[base + 2 * g] = (g * TABLE + m0) * BLOCK;
      this.offsets[base + 2 * g + 1] = (g * TABLE + m1) * BLOCK;
    }
    this.total[b] = total;
    this.extraStart[b + 1] = this.nExtra;
  }

  private pushExtra(i: number, c: number): void {
    if (this.nExtra === this.extraRow.length) {
      const r = new Int32Array(this.extraRow.length * 2);
      r.set(this.extraRow);
      this.extraRow = r;
      const x = new Float64Array(this.extraCount.length * 2);
      x.set(this.extraCount);
      this.extraCount = x;
    }
    this.extraRow[this.nExtra] = i;
    this.extraCount[this.nExtra] = c;
    this.nExtra++;
  }
}

/**
 * Multinomial(n; 1/n, …, 1/n) counts: n uniform row indices drawn from `rng`, tallied. The index
 * is exactly `rng.int(n)` (32-bit draw, rejection above the largest multiple of n, then modulo),
 * inlined to skip its argument check in this hot loop.
 */
export function drawMultinomial(rng: Rng, n: number, counts: Int32Array): void {
  counts.fill(0, 0, n);
  const limit = 4294967296 - (4294967296 % n);
  for (let k = 0; k < n; k++) {
    let x = rng.nextUint32();
    while (x >= limit) x = rng.nextUint32();
    counts[x % n]!++;
  }
}

/** Plan of `resamples` ordinary bootstrap resamples of n rows, drawn in order from `rng`. */
export function multinomialPlan(rng: Rng, resamples: number, n: number): CountPlan {
  const plan = new CountPlan(resamples, n);
  const counts = new Int32Array(n);
  for (let b = 0; b < resamples; b++) {
    drawMultinomial(rng, n, counts);
    plan.set(b, counts);
  }
  return plan;
}

/** Scratch table for `weightedBlock`, sized for plans of up to `groups` row groups. */
export function makeTable(groups: number): Float64Array {
  return new Float64Array(groups * TABLE * BLOCK);
}

/**
 * out[jj·R + b] = Σ_i W[b, i]·Y[i, c0 + jj] for jj < width (≤ 4), b < R (column-major block).
 * Y is row-major with `cols` columns and plan.n rows. `table` comes from `makeTable`.
 */
export function weightedBlock(
  plan: CountPlan, y: Float64Array, cols: number, c0: number, width: number, table: Float64Array, out: Float64Array,
): void {
  buildTable(plan.n, plan.groups, y, cols, c0, width, table);
  if (plan.binary) sumBinary(plan.offsets, plan.resamples, plan.groups, table, out);
  else sumGeneral(plan, y, cols, c0, width, table, out);
}

/**
 * Subset-sum tables of each group of 8 rows, 4 columns interleaved. Built by doubling: after
 * row k is added, entries [2^k, 2^(k+1)) are entries [0, 2^k) plus row k — one contiguous pass
 * per row with the row's 4 values held in registers. Columns past `width` hold 0.
 */
function buildTable(n: number, ng: number, y: Float64Array, cols: number, c0: number, width: number, table: Float64Array): void {
  for (let g = 0; g < ng; g++) {
    const i0 = g * GROUP;
    const gs = Math.min(GROUP, n - i0);
    const base = g * TABLE * BLOCK;
    table[base] = 0; table[base + 1] = 0; table[base + 2] = 0; table[base + 3] = 0;
    for (let k = 0; k < gs; k++) {
      const yo = (i0 + k) * cols + c0;
      const y0 = y[yo]!;
      const y1 = width > 1 ? y[yo + 1]! : 0;
      const y2 = width > 2 ? y[yo + 2]! : 0;
      const y3 = width > 3 ? y[yo + 3]! : 0;
      const len = (1 << k) * BLOCK;
      const dst = base + len;
      for (let e = 0; e < len; e += BLOCK) {
        table[dst + e] = table[base + e]! + y0;
        table[dst + e + 1] = table[base + e + 1]! + y1;
        table[dst + e + 2] = table[base + e + 2]! + y2;
        table[dst + e + 3] = table[base + e + 3]! + y3;
      }
    }
  }
}

/** One lookup per resample and group (0/1 counts). */
function sumBinary(off: Int32Array, R: number, ng: number, table: Float64Array, out: Float64Array): void {
  const R2 = 2 * R;
  const R3 = 3 * R;
  for (let b = 0; b < R; b++) {
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    const end = 2 * (b + 1) * ng;
    for (let k = 2 * b * ng; k < end; k += 2) {
      const a = off[k]!;
      s0 += table[a]!; s1 += table[a + 1]!; s2 += table[a + 2]!; s3 += table[a + 3]!;
    }
    out[b] = s0; out[R + b] = s1; out[R2 + b] = s2; out[R3 + b] = s3;
  }
}

/**
 * Two lookups per resample and group: table[bit-0 mask] + 2·table[bit-1 mask]; then the
 * resample's extra terms (c − c mod 4)·y for counts ≥ 4, still in registers.
 */
function sumGeneral(plan: CountPlan, y: Float64Array, cols: number, c0: number, width: number, table: Float64Array, out: Float64Array): void {
  const R = plan.resamples;
  const ng = plan.groups;
  const off = plan.offsets;
  const es = plan.extraStart;
  const er = plan.extraRow;
  const ec = plan.extraCount;
  const R2 = 2 * R;
  const R3 = 3 * R;
  // Columns past `width` re-read column c0; their sums are never used.
  const d1 = width > 1 ? 1 : 0;
  const d2 = width > 2 ? 2 : 0;
  const d3 = width > 3 ? 3 : 0;
  for (let b = 0; b < R; b++) {
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    const end = 2 * (b + 1) * ng;
    for (let k = 2 * b * ng; k < end; k += 2) {
      const a = off[k]!;
      const c = off[k + 1]!;
      s0 += table[a]! + 2 * table[c]!;
      s1 += table[a + 1]! + 2 * table[c + 1]!;
      s2 += table[a + 2]! + 2 * table[c + 2]!;
      s3 += table[a + 3]! + 2 * table[c + 3]!;
    }
    const e1 = es[b + 1]!;
    for (let e = es[b]!; e < e1; e++) {
      const yo = er[e]! * cols + c0;
      const w = ec[e]!;
      s0 += w * y[yo]!;
      s1 += w * y[yo + d1]!;
      s2 += w * y[yo + d2]!;
      s3 += w * y[yo + d3]!;
    }
    out[b] = s0; out[R + b] = s1; out[R2 + b] = s2; out[R3 + b] = s3;
  }
}

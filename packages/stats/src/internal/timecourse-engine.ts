/**
 * Engine of the per-time-bin bootstrap: one or two conditions (rows = trials), a moment
 * statistic per column, percentile or BCa interval per column. All columns share each resample
 * (one weight matrix per condition), so replicate traces are coherent across time.
 */
import { TuningforkError } from '@tuningfork/core';
import type { Matrix, ResultWarning } from '@tuningfork/core';
import {
  accelerationFrom, accumulateJackknife, FLAG_DEGENERATE, FLAG_NO_REPLICATES, FLAG_UNSTABLE_LEVEL, FLAG_ZERO_ACCELERATION,
  intervalInPlace, makeIntervalScratch,
} from './interval-core.js';
import { BLOCK } from './count-plan.js';
import { makeBlockSource } from './block-source.js';
import type { KernelChoice, ProductSpec } from './block-source.js';
import type { CountPlan } from './count-plan.js';
import { describeColumn, firstIndices, warn } from './validate.js';

/** Internal description of the statistic. */
export interface StatSpec {
  readonly name: string;
  readonly order: number;
  /** Centre columns at their sample mean before forming moments (all but the plain mean). */
  readonly centred: boolean;
  /** θ from moments m[0..order) of (x − center), the centre and the resample size N. */
  evaluate(m: Float64Array, center: number, count: number): number;
}

/** The plain mean (no centring needed: θ = Σwx/Σw). */
export const MEAN_SPEC: StatSpec = { name: 'mean', order: 1, centred: false, evaluate: (m, c) => c + m[0]! };

export type NanMode = 'propagate' | 'omit' | 'error';

interface Prepared {
  readonly n: number;
  readonly cols: number;
  /** z[k] = (x − center)^(k+1), NaN → 0 under 'omit'; z[0] may alias the input for the mean. */
  readonly z: Float64Array[];
  /** 1 where the cell is finite (only under 'omit' with non-finite cells), else null. */
  readonly ind: Float64Array | null;
  readonly center: Float64Array;
  /** sums[k][j] = Σ_i z[k][i, j] over finite cells. */
  readonly sums: Float64Array[];
  /** Finite cells per column. */
  readonly count: Int32Array;
  /** Columns holding a non-finite cell under 'propagate'. */
  readonly bad: Uint8Array;
  /** The common value of a column whose finite cells are all equal, else NaN (exact zero-width bands). */
  readonly constant: Float64Array;
  readonly plan: CountPlan;
}

/** Centre, powers and column sums of one condition, with its resampling plan (R × rows counts). */
export function prepareCondition(fn: string, name: string, m: Matrix, spec: StatSpec, nan: NanMode, plan: CountPlan): Prepared {
  const { rows: n, cols, data } = m;
  const count = new Int32Array(cols);
  const bad = new Uint8Array(cols);
  let nonFinite = 0;
  for (let i = 0; i < n; i++) {
    const off = i * cols;
    for (let j = 0; j < cols; j++) {
      const v = data[off + j]!;
      if (v - v === 0) count[j]!++;
      else {
        if (nan === 'error') {
          throw new TuningforkError('TF_NON_FINITE', `${fn}: ${name} holds ${v} at row ${i} (trial), column ${j} (time bin); pass { nan: 'omit' } to leave such cells out or { nan: 'propagate' } to return NaN for that bin.`, { fn, parameter: name, row: i, column: j });
        }
        nonFinite++;
        bad[j] = 1;
      }
    }
  }
  const omit = nan === 'omit' && nonFinite > 0;
  const lo = new Float64Array(cols).fill(Infinity);
  const hi = new Float64Array(cols).fill(-Infinity);
  for (let i = 0; i < n; i++) {
    const off = i * cols;
    for (let j = 0; j < cols; j++) {
      const v = data[off + j]!;
      if (v < lo[j]!) lo[j] = v;
      if (v > hi[j]!) hi[j] = v;
    }
  }
  const constant = new Float64Array(cols).fill(NaN);
  for (let j = 0; j < cols; j++) if (lo[j] === hi[j]) constant[j] = lo[j]!;
  const center = new Float64Array(cols);
  if (spec.centred) {
    for (let i = 0; i < n; i++) {
      const off = i * cols;
      for (let j = 0; j < cols; j++) {
        const v = data[off + j]!;
        if (v - v === 0) center[j]! += v;
      }
    }
    for (let j = 0; j < cols; j++) center[j] = count[j]! === 0 ? NaN : constant[j] === constant[j] ? constant[j]! : center[j]! / count[j]!;
  }
  const z: Float64Array[] = [];
  let ind: Float64Array | null = null;
  if (!spec.centred && !omit) {
    z.push(data);
  } else {
    for (let k = 0; k < spec.order; k++) z.push(new Float64Array(n * cols));
    if (omit) ind = new Float64Array(n * cols);
    for (let i = 0; i < n; i++) {
      const off = i * cols;
      for (let j = 0; j < cols; j++) {
        const v = data[off + j]!;
        const finite = v - v === 0;
        if (omit) {
          ind![off + j] = finite ? 1 : 0;
          if (!finite) continue; // z stays 0
        }
        const d = finite ? v - center[j]! : v; // 'propagate' keeps NaN in z
        let p = d;
        for (let k = 0; k < spec.order; k++) {
          z[k]![off + j] = p;
          p *= d;
        }
      }
    }
  }
  const sums: Float64Array[] = [];
  for (let k = 0; k < z.length; k++) {
    const s = new Float64Array(cols);
    const zk = z[k]!;
    for (let i = 0; i < n; i++) {
      const off = i * cols;
      for (let j = 0; j < cols; j++) {
        const v = zk[off + j]!;
        if (ind === null || ind[off + j] === 1) s[j]! += v;
      }
    }
    sums.push(s);
  }
  return { n, cols, z, ind, center, sums, count, bad: omit ? new Uint8Array(cols) : bad, constant, plan };
}

export interface EngineOptions {
  readonly fn: string;
  readonly spec: StatSpec;
  readonly bca: boolean;
  readonly alpha: number;
  readonly keepReplicates: boolean;
  readonly offsets: Float64Array | undefined;
  readonly nan: NanMode;
  /** Also return the share of finite replicates > 0 per column. */
  readonly shareAboveZero?: boolean;
  /** Product kernel: 'auto' (by size), or forced 'js' / 'simd' (tests). @defaultValue 'auto' */
  readonly kernel?: KernelChoice;
  /** Threads computing the product (calling thread included). @defaultValue 1 */
  readonly threads?: number;
}

export interface EngineResult {
  readonly estimate: Float64Array;
  readonly low: Float64Array;
  readonly high: Float64Array;
  readonly standardError: Float64Array;
  readonly z0: Float64Array | undefined;
  readonly acceleration: Float64Array | undefined;
  readonly replicates: Matrix | undefined;
  readonly shareAboveZero: Float64Array | undefined;
  readonly warnings: ResultWarning[];
}

/**
 * Run the bootstrap over all columns. With two conditions the statistic is θ(a) − θ(b), each
 * condition resampled with its own plan; the BCa acceleration follows scipy's multi-sample
 * jackknife (each condition left out in turn).
 */
export function runTimecourse(conds: readonly Prepared[], o: EngineOptions): EngineResult {
  const { spec } = o;
  const T = conds[0]!.cols;
  const R = conds[0]!.plan.resamples;
  const order = spec.order;
  const estimate = new Float64Array(T);
  const low = new Float64Array(T).fill(NaN);
  const high = new Float64Array(T).fill(NaN);
  const se = new Float64Array(T).fill(NaN);
  const z0 = o.bca ? new Float64Array(T).fill(NaN) : undefined;
  const accel = o.bca ? new Float64Array(T).fill(NaN) : undefined;
  const keep = o.keepReplicates ? new Float64Array(R * T).fill(NaN) : undefined;
  const above = o.shareAboveZero ? new Float64Array(T).fill(NaN) : undefined;
  const flags = new Int32Array(T);
  const tooFew = new Uint8Array(T);
  const anyBad = new Uint8Array(T);
  let dropped = 0;
  let droppedCols = 0;

  // Per condition scratch: outputs of the kernel for each moment (+ indicator), values per resample.
  const blocks = conds.map((c) => ({
    out: Array.from({ length: c.z.length }, () => new Float64Array(BLOCK * R)),
    ind: c.ind ? new Float64Array(BLOCK * R) : null,
    vals: new Float64Array(R),
    jack: new Float64Array(c.n),
  }));
  const products: ProductSpec[] = [];
  conds.forEach((c, ci) => {
    const bl = blocks[ci]!;
    c.z.forEach((z, k) => products.push({ plan: c.plan, y: z, out: bl.out[k]! }));
    if (c.ind) products.push({ plan: c.plan, y: c.ind, out: bl.ind! });
  });
  const source = makeBlockSource(o.fn, products, T, o.kernel ?? 'auto', o.threads ?? 1);
  const reps = new Float64Array(R);
  const mom = new Float64Array(Math.max(order, 1));
  const acc = new Float64Array(2);
  const scratch = makeIntervalScratch();

  try {
    for (let c0 = 0; c0 < T; c0 += BLOCK) {
      const width = Math.min(BLOCK, T - c0);
      source.fill(c0, width);
      for (let jj = 0; jj < width; jj++) {
        const j = c0 + jj;
        // Point estimate and usability of the column.
        let est = 0;
        let usable = true;
        for (let ci = 0; ci < conds.length; ci++) {
          const c = conds[ci]!;
          if (c.bad[j]) { anyBad[j] = 1; usable = false; continue; }
          const N = c.count[j]!;
          if (N < 2) { tooFew[j] = 1; usable = false; continue; }
          for (let k = 0; k < order; k++) mom[k] = c.sums[spec.centred ? k : 0]![j]! / N;
          const th = !spec.centred && c.constant[j] === c.constant[j] ? c.constant[j]! : spec.evaluate(mom, c.center[j]!, N);
          est += ci === 0 ? th : -th;
        }
        if (!usable) { estimate[j] = NaN; continue; }
        estimate[j] = est;
        // Replicates. Fast path: one condition, plain mean, no NaN bookkeeping, no kept matrix.
        let nFinite = 0;
        let repSum = NaN; // Σ reps in order, when the fast path already formed it
        const c0nd = conds[0]!;
        if (conds.length === 1 && !spec.centred && !blocks[0]!.ind && !keep && c0nd.constant[j] !== c0nd.constant[j]) {
          const sums = blocks[0]!.out[0]!;
          const total = c0nd.plan.total;
          const base = jj * R;
          let acc2 = 0;
          for (let b = 0; b < R; b++) {
            const v = sums[base + b]! / total[b]!;
            reps[b] = v;
            acc2 += v;
          }
          if (acc2 - acc2 === 0) { nFinite = R; repSum = acc2; }
        }
        if (nFinite === 0) {
          for (let ci = 0; ci < conds.length; ci++) {
            const c = conds[ci]!;
            const bl = blocks[ci]!;
            const total = c.plan.total;
            const base = jj * R;
            const ctr = c.center[j]!;
            const cst = c.constant[j]!;
            const vals = bl.vals;
            for (let b = 0; b < R; b++) {
              const N = bl.ind ? bl.ind[base + b]! : total[b]!;
              if (N === 0) { vals[b] = NaN; continue; }
              if (order === 1 && !spec.centred) {
                vals[b] = cst === cst ? cst : bl.out[0]![base + b]! / N;
              } else {
                for (let k = 0; k < order; k++) mom[k] = bl.out[k]![base + b]! / N;
                vals[b] = spec.evaluate(mom, ctr, N);
              }
            }
          }
          const va = blocks[0]!.vals;
          const vb = conds.length > 1 ? blocks[1]!.vals : null;
          for (let b = 0; b < R; b++) {
            const v = vb ? va[b]! - vb[b]! : va[b]!;
            if (keep) keep[b * T + j] = v;
            if (v - v === 0) reps[nFinite++] = v;
          }
        }
        if (nFinite < R) { dropped += R - nFinite; droppedCols++; }
        if (above && nFinite > 0) {
          let k = 0;
          for (let b = 0; b < nFinite; b++) if (reps[b]! > 0) k++;
          above[j] = k / nFinite;
        }
        if (nFinite > 1) {
          let mean = repSum;
          if (!(mean === mean)) {
            mean = 0;
            for (let b = 0; b < nFinite; b++) mean += reps[b]!;
          }
          mean /= nFinite;
          let ss = 0;
          for (let b = 0; b < nFinite; b++) { const d = reps[b]! - mean; ss += d * d; }
          se[j] = Math.sqrt(ss / (nFinite - 1));
        }
        let a = 0;
        let aFlags = 0;
        if (o.bca) {
          acc[0] = 0; acc[1] = 0;
          for (let ci = 0; ci < conds.length; ci++) jackknifeColumn(conds[ci]!, spec, j, blocks[ci]!.jack, mom, ci === 0 ? 1 : -1, acc);
          const r = accelerationFrom(acc[0]!, acc[1]!);
          a = r.a;
          aFlags = r.flags;
          accel![j] = aFlags & FLAG_DEGENERATE ? NaN : a;
        }
        intervalInPlace(reps, nFinite, est, o.bca, o.alpha, a, aFlags, scratch);
        low[j] = scratch.low;
        high[j] = scratch.high;
        if (z0) z0[j] = scratch.z0;
        flags[j] = scratch.flags;
      }
    }
  } finally {
    source.close();
  }
  const warnings = [...source.warnings, ...collectWarnings(o, T, flags, tooFew, anyBad, dropped, droppedCols, R)];
  return {
    estimate, low, high, standardError: se, z0, acceleration: accel,
    replicates: keep ? { data: keep, rows: R, cols: T } : undefined,
    shareAboveZero: above,
    warnings,
  };
}

/** Leave-one-out values of condition c's statistic in column j, accumulated into acc (signed). */
function jackknifeColumn(c: Prepared, spec: StatSpec, j: number, vals: Float64Array, mom: Float64Array, sign: number, acc: Float64Array): void {
  const T = c.cols;
  const N = c.count[j]!;
  const order = spec.order;
  const ctr = c.center[j]!;
  let m = 0;
  for (let i = 0; i < c.n; i++) {
    const off = i * T + j;
    if (c.ind && c.ind[off] === 0) continue;
    for (let k = 0; k < order; k++) {
      const kk = spec.centred ? k : 0;
      mom[k] = (c.sums[kk]![j]! - c.z[kk]![off]!) / (N - 1);
    }
    vals[m++] = sign * spec.evaluate(mom, ctr, N - 1);
  }
  accumulateJackknife(vals, m, acc);
}

function collectWarnings(
  o: EngineOptions, T: number, flags: Int32Array, tooFew: Uint8Array, anyBad: Uint8Array, dropped: number, droppedCols: number, R: number,
): ResultWarning[] {
  const w: ResultWarning[] = [];
  const fn = o.fn;
  const where = (idx: number[]) => idx.map((j) => describeColumn(j, o.offsets)).join(', ');
  const count = (pred: (j: number) => boolean) => { let k = 0; for (let j = 0; j < T; j++) if (pred(j)) k++; return k; };
  const nBad = count((j) => anyBad[j] === 1);
  if (nBad > 0) {
    const idx = firstIndices(T, (j) => anyBad[j] === 1);
    w.push(warn('non-finite-columns', `${fn}: ${nBad} column(s) hold NaN or ±Infinity (first: ${where(idx)}); their estimate and interval are NaN (nan: 'propagate'). Pass { nan: 'omit' } to use the finite trials of each column.`, { columns: nBad, first: idx }));
  }
  const nFew = count((j) => tooFew[j] === 1);
  if (nFew > 0) {
    const idx = firstIndices(T, (j) => tooFew[j] === 1);
    w.push(warn('too-few-trials-in-column', `${fn}: ${nFew} column(s) have fewer than 2 finite trials (first: ${where(idx)}); their estimate and interval are NaN.`, { columns: nFew, first: idx }));
  }
  if (dropped > 0) {
    w.push(warn('replicates-dropped', `${fn}: ${dropped} non-finite bootstrap replicate(s) over ${droppedCols} column(s) were dropped (of ${R} per column); intervals use the finite ones.`, { replicates: dropped, columns: droppedCols }));
  }
  const flagWarn = (bit: number, code: string, text: string) => {
    const k = count((j) => (flags[j]! & bit) !== 0);
    if (k === 0) return;
    const idx = firstIndices(T, (j) => (flags[j]! & bit) !== 0);
    w.push(warn(code, `${fn}: ${k} column(s) ${text} (first: ${where(idx)}).`, { columns: k, first: idx }));
  };
  flagWarn(FLAG_DEGENERATE, 'degenerate-bca', "have a degenerate bootstrap distribution (all replicates equal, or the estimate outside their range, so z0 = ±∞); their BCa interval is NaN. The method was not switched: use method: 'percentile' for such bins if appropriate");
  flagWarn(FLAG_ZERO_ACCELERATION, 'zero-acceleration', 'have jackknife values that are all equal (Σd² = 0); the BCa acceleration was set to 0');
  flagWarn(FLAG_UNSTABLE_LEVEL, 'bca-level-unstable', 'have 1 − a(z0 + z) ≤ 0 for a bound, so the BCa level is undefined; that bound is NaN');
  flagWarn(FLAG_NO_REPLICATES, 'no-finite-replicates', 'have no finite bootstrap replicate; their interval is NaN');
  return w;
}

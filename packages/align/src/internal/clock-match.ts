/**
 * Kernels of clock synchronisation: seed matches of inter-pulse-interval (IPI) patterns, their
 * grouping into clock pieces, and nearest-pulse pairing under a linear map. Inputs are trusted
 * (validated by fitClockMap).
 */
import { fitLine } from './ols.js';
import type { Line } from './ols.js';
import { MAD_SCALE } from './robust.js';

/** Seed matches: device window starting at pulse bj[k] matches reference window starting at ai[k]. */
export interface Anchors {
  ai: Int32Array;
  bj: Int32Array;
  /** Device windows whose IPI pattern fit more than one reference window. */
  nAmbiguous: number;
}

/** Interval tolerance: fixed part plus a drift-proportional part. */
export function ipiTolerance(ipi: number, tolSec: number, tolPpm: number): number {
  return tolSec + tolPpm * 1e-6 * Math.abs(ipi);
}

/**
 * For every device window of K consecutive positive IPIs, find the reference windows whose K IPIs
 * all agree within the tolerance; a window with exactly one such reference window is a seed
 * (anchor). Reference windows claimed by two device windows with different offsets are dropped.
 */
export function findAnchors(A: Float64Array, B: Float64Array, K: number, tolSec: number, tolPpm: number): Anchors {
  const nA = A.length;
  const nB = B.length;
  const dA = new Float64Array(nA - 1);
  for (let i = 0; i < nA - 1; i++) dA[i] = A[i + 1]! - A[i]!;
  const dB = new Float64Array(Math.max(0, nB - 1));
  for (let j = 0; j < nB - 1; j++) dB[j] = B[j + 1]! - B[j]!;
  const order = new Uint32Array(dA.length);
  for (let i = 0; i < order.length; i++) order[i] = i;
  order.sort((p, q) => dA[p]! - dA[q]!);
  const sorted = new Float64Array(dA.length);
  for (let i = 0; i < order.length; i++) sorted[i] = dA[order[i]!]!;
  const lower = (v: number) => {
    let lo = 0;
    let hi = sorted.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (sorted[mid]! < v) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  const ai: number[] = [];
  const bj: number[] = [];
  let nAmbiguous = 0;
  // Prefix counts of non-positive device IPIs (clock resets): windows must not contain one.
  const bad = new Int32Array(dB.length + 1);
  for (let j = 0; j < dB.length; j++) bad[j + 1] = bad[j]! + (dB[j]! > 0 ? 0 : 1);
  for (let j = 0; j + K <= dB.length; j++) {
    if (bad[j + K] !== bad[j]) continue;
    const d0 = dB[j]!;
    const t0 = ipiTolerance(d0, tolSec, tolPpm);
    let found = -1;
    let count = 0;
    for (let s = lower(d0 - t0); s < sorted.length && sorted[s]! <= d0 + t0; s++) {
      const i = order[s]!;
      if (i + K > dA.length) continue;
      let ok = true;
      for (let k = 1; k < K; k++) {
        const db = dB[j + k]!;
        if (Math.abs(dA[i + k]! - db) > ipiTolerance(db, tolSec, tolPpm)) {
          ok = false;
          break;
        }
      }
      if (ok) {
        count++;
        found = i;
        if (count > 1) break;
      }
    }
    if (count === 1) {
      ai.push(found);
      bj.push(j);
    } else if (count > 1) {
      nAmbiguous++;
    }
  }
  // A reference window claimed twice with different offsets is unreliable: drop every claim.
  const claims = new Map<number, number>();
  for (let k = 0; k < ai.length; k++) {
    const prev = claims.get(ai[k]!);
    const off = ai[k]! - bj[k]!;
    claims.set(ai[k]!, prev === undefined || prev === off ? off : NaN);
  }
  const keep: number[] = [];
  for (let k = 0; k < ai.length; k++) if (!Number.isNaN(claims.get(ai[k]!))) keep.push(k);
  return { ai: Int32Array.from(keep, (k) => ai[k]!), bj: Int32Array.from(keep, (k) => bj[k]!), nAmbiguous };
}

/** Running least-squares sums of pairs (x = device, y = reference), shifted for accuracy. */
class RunningLine {
  private n = 0;
  private sx = 0;
  private sy = 0;
  private sxx = 0;
  private sxy = 0;
  private x0 = NaN;
  private y0 = NaN;
  xMin = Infinity;
  xMax = -Infinity;
  add(x: number, y: number): void {
    if (this.n === 0) {
      this.x0 = x;
      this.y0 = y;
    }
    const u = x - this.x0;
    const v = y - this.y0;
    this.n++;
    this.sx += u;
    this.sy += v;
    this.sxx += u * u;
    this.sxy += u * v;
    if (x < this.xMin) this.xMin = x;
    if (x > this.xMax) this.xMax = x;
  }
  predict(x: number): number {
    const n = this.n;
    const mx = this.sx / n;
    const my = this.sy / n;
    const vxx = this.sxx - n * mx * mx;
    const b = vxx > 0 ? (this.sxy - n * mx * my) / vxx : 1;
    return this.y0 + my + b * (x - this.x0 - mx);
  }
}

/**
 * Group anchors (in device order) into clock pieces. An anchor joins the current piece when the
 * reference index advances, no device-clock reset (a non-positive device IPI) lies between, and
 * its reference time agrees with the piece's prediction: a line fit once the piece spans ≥ 20 s,
 * else the last anchor's offset, within 2·tol plus a drift allowance growing with the distance.
 * Returns, per piece, the list of anchor indices.
 */
export function groupAnchors(
  A: Float64Array, B: Float64Array, anc: Anchors, active: Uint8Array, K: number, tolSec: number, resetsBefore: Int32Array,
): number[][] {
  const pieces: number[][] = [];
  let cur: number[] = [];
  let line = new RunningLine();
  let lastA = -1;
  let lastB = -1;
  const addPairs = (k: number) => {
    for (let m = 0; m <= K; m++) line.add(B[anc.bj[k]! + m]!, A[anc.ai[k]! + m]!);
  };
  for (let k = 0; k < anc.ai.length; k++) {
    if (active[k] === 0) continue;
    const i = anc.ai[k]!;
    const j = anc.bj[k]!;
    let join = cur.length > 0 && i > lastA && resetsBefore[j] === resetsBefore[lastB];
    if (join) {
      const tB = B[j]!;
      const span = line.xMax - line.xMin;
      const dist = Math.max(0, tB - line.xMax);
      let pred: number;
      let allow: number;
      if (span >= 20) {
        pred = line.predict(tB);
        allow = 2 * tolSec + Math.min(1e-3, (4 * tolSec) / span) * dist;
      } else {
        pred = tB + (A[lastA]! - B[lastB]!);
        allow = 2 * tolSec + 1e-3 * Math.max(0, tB - B[lastB]!);
      }
      join = Math.abs(A[i]! - pred) <= allow;
    }
    if (!join && cur.length > 0) {
      pieces.push(cur);
      cur = [];
      line = new RunningLine();
    }
    cur.push(k);
    addPairs(k);
    lastA = i;
    lastB = j;
  }
  if (cur.length > 0) pieces.push(cur);
  return pieces;
}

/** Index of the reference pulse nearest to t (A sorted ascending, non-empty). */
export function nearestIndex(A: Float64Array, t: number): number {
  let lo = 0;
  let hi = A.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (A[mid]! < t) lo = mid + 1;
    else hi = mid;
  }
  if (lo === 0) return 0;
  if (lo === A.length) return A.length - 1;
  return t - A[lo - 1]! <= A[lo]! - t ? lo - 1 : lo;
}

/** Pairs of one piece: reference index, device index and residual (reference − fitted). */
export interface PiecePairs {
  ai: Int32Array;
  bj: Int32Array;
  res: Float64Array;
  line: Line;
  cutoff: number;
}

/** Pair device pulses jLo…jHi with the nearest reference pulse within `radius` of the mapped time; one device pulse per reference pulse (the closer wins). */
export function pairUnder(A: Float64Array, B: Float64Array, jLo: number, jHi: number, line: Line, radius: number): { ai: number[]; bj: number[] } {
  const ai: number[] = [];
  const bj: number[] = [];
  const err: number[] = [];
  for (let j = jLo; j <= jHi; j++) {
    const pred = line.a + line.b * B[j]!;
    const i = nearestIndex(A, pred);
    const e = Math.abs(A[i]! - pred);
    if (!(e <= radius)) continue;
    const last = ai.length - 1;
    if (last >= 0 && ai[last] === i) {
      if (e < err[last]!) {
        bj[last] = j;
        err[last] = e;
      }
      continue;
    }
    if (last >= 0 && i < ai[last]!) continue; // order must be kept within a piece
    ai.push(i);
    bj.push(j);
    err.push(e);
  }
  return { ai, bj };
}

/**
 * Fit one piece: pair under `line`, then repeat { OLS; drop |res| > max(outlierSd·1.4826·MAD,
 * floorSec); refit } until no pair is dropped, re-pairing under the new line until the pairs
 * stop changing (at most `maxRounds` rounds).
 */
export function fitPiece(
  A: Float64Array, B: Float64Array, jLo: number, jHi: number, start: Line, radius: number, outlierSd: number, floorSec: number, maxRounds = 20,
): PiecePairs {
  let line = start;
  let prevKey = '';
  let best: PiecePairs = { ai: new Int32Array(0), bj: new Int32Array(0), res: new Float64Array(0), line, cutoff: NaN };
  for (let round = 0; round < maxRounds; round++) {
    const cand = pairUnder(A, B, jLo, jHi, line, radius);
    let ai = Int32Array.from(cand.ai);
    let bj = Int32Array.from(cand.bj);
    if (ai.length < 2) {
      best = { ai, bj, res: new Float64Array(ai.length), line, cutoff: NaN };
      break;
    }
    const x = new Float64Array(ai.length);
    const y = new Float64Array(ai.length);
    let fit: Line = line;
    let res = new Float64Array(0);
    let cutoff = NaN;
    for (let it = 0; it < 50; it++) {
      for (let k = 0; k < ai.length; k++) {
        x[k] = B[bj[k]!]!;
        y[k] = A[ai[k]!]!;
      }
      fit = fitLine(x.subarray(0, ai.length), y.subarray(0, ai.length));
      res = new Float64Array(ai.length);
      const absr = new Float64Array(ai.length);
      for (let k = 0; k < ai.length; k++) {
        res[k] = y[k]! - (fit.a + fit.b * x[k]!);
        absr[k] = Math.abs(res[k]!);
      }
      // Residuals of an OLS fit have mean 0; the MAD is taken about their median.
      const sortedRes = Float64Array.from(res).sort();
      const med = sortedRes.length % 2 ? sortedRes[sortedRes.length >> 1]! : 0.5 * (sortedRes[(sortedRes.length >> 1) - 1]! + sortedRes[sortedRes.length >> 1]!);
      for (let k = 0; k < absr.length; k++) absr[k] = Math.abs(res[k]! - med);
      absr.sort();
      const mad = absr.length % 2 ? absr[absr.length >> 1]! : 0.5 * (absr[(absr.length >> 1) - 1]! + absr[absr.length >> 1]!);
      cutoff = Math.max(outlierSd * MAD_SCALE * mad, floorSec);
      let keep = 0;
      for (let k = 0; k < ai.length; k++) if (Math.abs(res[k]!) <= cutoff) keep++;
      if (keep === ai.length || keep < 2) break;
      const nai = new Int32Array(keep);
      const nbj = new Int32Array(keep);
      for (let k = 0, q = 0; k < ai.length; k++) {
        if (Math.abs(res[k]!) <= cutoff) {
          nai[q] = ai[k]!;
          nbj[q] = bj[k]!;
          q++;
        }
      }
      ai = nai;
      bj = nbj;
    }
    best = { ai, bj, res, line: fit, cutoff };
    const key = `${ai.length}:${ai[0]}:${ai[ai.length - 1]}:${bj[0]}:${bj[bj.length - 1]}:${sumOf(ai)}:${sumOf(bj)}`;
    if (key === prevKey) break;
    prevKey = key;
    line = fit;
  }
  return best;
}

function sumOf(a: Int32Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i]! * (i + 1);
  return s;
}

/** Matches of device pulses under a line: 1 where the nearest reference pulse is within `cutoff`. */
export function okUnder(A: Float64Array, B: Float64Array, jLo: number, jHi: number, line: Line, cutoff: number): Uint8Array {
  const out = new Uint8Array(Math.max(0, jHi - jLo + 1));
  for (let j = jLo; j <= jHi; j++) {
    const pred = line.a + line.b * B[j]!;
    const i = nearestIndex(A, pred);
    out[j - jLo] = Math.abs(A[i]! - pred) <= cutoff ? 1 : 0;
  }
  return out;
}

/**
 * The best rival of a fitted piece: its line moved by A[m + s] − A[m] (s = ±1, ±2, ±3, m the
 * reference index of the middle pair), i.e. onto neighbouring reference pulses. Returns how many
 * device pulses lo…hi the best rival pairs within the fit's cutoff, and its shift (seconds).
 */
export function rivalAlignment(A: Float64Array, B: Float64Array, lo: number, hi: number, fit: PiecePairs): { pairs: number; shiftSec: number } {
  let best = { pairs: 0, shiftSec: NaN };
  const n = fit.ai.length;
  if (n === 0 || !(fit.cutoff > 0)) return best;
  const m = fit.ai[n >> 1]!;
  for (const s of [-3, -2, -1, 1, 2, 3]) {
    if (m + s < 0 || m + s >= A.length) continue;
    const shift = A[m + s]! - A[m]!;
    const ok = okUnder(A, B, lo, hi, { a: fit.line.a + shift, b: fit.line.b }, fit.cutoff);
    let pairs = 0;
    for (let q = 0; q < ok.length; q++) pairs += ok[q]!;
    if (pairs > best.pairs) best = { pairs, shiftSec: shift };
  }
  return best;
}

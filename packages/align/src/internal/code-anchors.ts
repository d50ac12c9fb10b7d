/**
 * Seed matches of two pulse trains by the codes their pulses carry (decoded barcodes): the
 * alternative to IPI windows in fitClockMap. Inputs are trusted (validated by fitClockMap).
 */
import type { Anchors } from './clock-match.js';

/** Repeated values up to this many, or this fraction of the device's distinct values, count as sporadic (misreads), not a wrapped counter. */
const SPORADIC_COUNT = 2;
const SPORADIC_FRACTION = 0.02;

/**
 * Anchors (windows of one pulse, K = 0) from equal codes.
 *
 * **Codes that never repeat** within either train (the intended use: enough bits for the session)
 * pair directly: each device pulse with the reference pulse of the same code. A misread code gives
 * an isolated wrong seed, which groupAnchors sets apart and fitClockMap drops. A few repeated
 * values (at most 2, or 2 % of the device's distinct values: misreads that collide) are left out
 * and the rest pair directly.
 *
 * **Codes that repeat** more often (a counter that wrapped) identify a pulse only up to a whole number of
 * wrap periods, and a pulse that looks unique on both sides may still be the wrong occurrence (its
 * partner dropped or not recorded). Then, per clock stretch (device pulses between resets), the
 * offsets A[i] − B[j] of all code-equal candidate pairs are pooled: the true offset collects every
 * shared pulse, a wrong one only the pulses whose shifted partner exists. The densest window of
 * width 0.01 s + 1000 ppm of the stretch's duration (drift allowance) wins if it holds at least
 * twice as many pairs as the densest window elsewhere; each device pulse with exactly one
 * candidate in it is a seed. Otherwise the stretch is ambiguous and gets no seed: with periodic
 * barcodes a shift by a wrap period can fit as well as the truth, and guessing would mis-sync
 * silently.
 *
 * NaN codes (undecoded) never match. A reference pulse claimed twice keeps no seed.
 */
export function findCodeAnchors(A: Float64Array, B: Float64Array, codesA: Float64Array, codesB: Float64Array, resetsBefore: Int32Array): Anchors {
  const where = new Map<number, number[]>();
  const repeated = new Set<number>();
  for (let i = 0; i < A.length; i++) {
    const c = codesA[i]!;
    if (c !== c) continue;
    const list = where.get(c);
    if (list) {
      list.push(i);
      repeated.add(c);
    } else {
      where.set(c, [i]);
    }
  }
  const seenB = new Set<number>();
  for (let j = 0; j < B.length; j++) {
    const c = codesB[j]!;
    if (c !== c) continue;
    if (seenB.has(c)) repeated.add(c);
    seenB.add(c);
  }
  const nB = B.length;
  const match = new Int32Array(nB).fill(-1);
  let nAmbiguous = 0;
  if (repeated.size <= Math.max(SPORADIC_COUNT, SPORADIC_FRACTION * seenB.size)) {
    // Sporadic repeats (misreads, collisions): leave those values out, pair the rest directly.
    for (let j = 0; j < nB; j++) {
      const c = codesB[j]!;
      if (c !== c) continue;
      if (repeated.has(c)) {
        nAmbiguous++;
        continue;
      }
      const list = where.get(c);
      if (list) match[j] = list[0]!;
    }
  } else {
    for (let lo = 0; lo < nB;) {
      let hi = lo;
      while (hi + 1 < nB && resetsBefore[hi + 1] === resetsBefore[lo]) hi++;
      nAmbiguous += placeStretch(A, B, codesB, where, lo, hi, match);
      lo = hi + 1;
    }
  }
  // One device pulse per reference pulse.
  const claims = new Int32Array(A.length);
  for (let j = 0; j < nB; j++) if (match[j]! >= 0) claims[match[j]!] = claims[match[j]!]! + 1;
  const ai: number[] = [];
  const bj: number[] = [];
  for (let j = 0; j < nB; j++) {
    const i = match[j]!;
    if (i < 0) continue;
    if (claims[i]! > 1) {
      nAmbiguous++;
      continue;
    }
    ai.push(i);
    bj.push(j);
  }
  return { ai: Int32Array.from(ai), bj: Int32Array.from(bj), nAmbiguous };
}

/** Seeds of device pulses lo…hi (one clock stretch) by the dominant offset; returns how many code-bearing pulses stayed ambiguous. */
function placeStretch(A: Float64Array, B: Float64Array, codesB: Float64Array, where: Map<number, number[]>, lo: number, hi: number, match: Int32Array): number {
  const d: number[] = [];
  let withCode = 0;
  for (let j = lo; j <= hi; j++) {
    const list = candidatesOf(where, codesB[j]!);
    if (!list) continue;
    withCode++;
    for (const i of list) d.push(A[i]! - B[j]!);
  }
  if (d.length === 0) return 0;
  d.sort((x, y) => x - y);
  const width = 0.01 + 1e-3 * (B[hi]! - B[lo]!);
  // Densest window [d[a], d[a] + width] counting only offsets outside [skipFrom, skipTo]
  // (prefix counts keep it linear after the sort).
  const densest = (skipFrom: number, skipTo: number): { start: number; count: number } => {
    const kept = new Int32Array(d.length + 1);
    for (let q = 0; q < d.length; q++) kept[q + 1] = kept[q]! + (d[q]! >= skipFrom && d[q]! <= skipTo ? 0 : 1);
    let best = { start: NaN, count: 0 };
    for (let a = 0, b = 0; a < d.length; a++) {
      if (d[a]! >= skipFrom && d[a]! <= skipTo) continue;
      while (b < d.length && d[b]! - d[a]! <= width) b++;
      const count = kept[b]! - kept[a]!;
      if (count > best.count) best = { start: d[a]!, count };
    }
    return best;
  };
  const top = densest(Infinity, -Infinity);
  // Windows overlapping the winner's (start − width … start + 2·width) are the same cluster.
  const runnerUp = densest(top.start - width, top.start + 2 * width);
  if (runnerUp.count * 2 > top.count) return withCode;
  let ambiguous = 0;
  for (let j = lo; j <= hi; j++) {
    const list = candidatesOf(where, codesB[j]!);
    if (!list) continue;
    let found = -1;
    let n = 0;
    for (const i of list) {
      const off = A[i]! - B[j]!;
      if (off >= top.start && off <= top.start + width) {
        found = i;
        n++;
      }
    }
    if (n === 1) match[j] = found;
    else ambiguous++;
  }
  return ambiguous;
}

/** Reference indices carrying code c (undefined for NaN, an undecoded code, or a code the reference lacks). */
function candidatesOf(where: Map<number, number[]>, c: number): number[] | undefined {
  return c === c ? where.get(c) : undefined;
}

import { TuningforkError, checkFinite, checkNonNegative, checkOneOf, checkPositive, checkRange } from '@tuningfork/core';
import type { UniformSignal } from '@tuningfork/core';
import { median, MAD_SCALE } from './robust.js';

/** Onset-rule settings shared by movementOnsets and firstMovementAfter. */
export interface OnsetRule {
  readonly on: number;
  readonly off: number;
  /** Refine level (activity ≤ level), or NaN for 'off-threshold' / −Infinity for 'none'. */
  readonly refine: 'fraction' | 'off-threshold' | 'none';
  readonly refineLevel: number;
  readonly holdN: number;
  readonly quietN: number;
  readonly baselineValue: number;
}

/** Raw options as merged by resolveOptions. */
export interface OnsetRuleOptions {
  readonly onThreshold: 'robust' | number;
  readonly offThreshold: 'robust' | number;
  readonly robustLevels: readonly [number, number];
  readonly baseline: 'none' | 'median' | number;
  readonly quietSec: number;
  readonly holdSec: number;
  readonly refine: 'fraction' | 'off-threshold' | 'none';
  readonly refineFraction: number;
}

/** Activity |x − baseline| of a signal and the resolved rule. @throws TF_NON_FINITE, TF_DEGENERATE_SIGNAL, TF_BAD_OPTION */
export function resolveRule(fn: string, signal: UniformSignal, o: OnsetRuleOptions): { a: Float64Array; rule: OnsetRule } {
  const x = signal.values;
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i])) {
      throw new TuningforkError('TF_NON_FINITE', `${fn}: sample ${i} (t=${signal.t0 + i / signal.sampleRate} s) is ${x[i]}; fill or cut gaps before detecting onsets.`, { fn, index: i });
    }
  }
  const refine = checkOneOf(fn, 'refine', o.refine, ['fraction', 'off-threshold', 'none'] as const);
  const quietSec = checkNonNegative(fn, 'quietSec', o.quietSec);
  const holdSec = checkNonNegative(fn, 'holdSec', o.holdSec);
  const frac = checkRange(fn, 'refineFraction', o.refineFraction, 0, 1);
  let b = 0;
  if (o.baseline === 'median') b = median(x);
  else if (o.baseline !== 'none') b = checkFinite(fn, 'baseline', o.baseline);
  const a = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) a[i] = Math.abs(x[i]! - b);
  let sd = NaN;
  const needRobust = o.onThreshold === 'robust' || o.offThreshold === 'robust';
  if (needRobust) {
    checkPositive(fn, 'robustLevels[0]', o.robustLevels[0]);
    checkNonNegative(fn, 'robustLevels[1]', o.robustLevels[1]);
    sd = MAD_SCALE * median(a);
    if (!(sd > 0)) {
      throw new TuningforkError('TF_DEGENERATE_SIGNAL', `${fn}: the robust sd of |signal − baseline| is 0 (the signal is mostly exactly at baseline), so 'robust' thresholds are undefined. Pass numeric onThreshold and offThreshold.`, { fn });
    }
  }
  const on = o.onThreshold === 'robust' ? o.robustLevels[0] * sd : checkPositive(fn, 'onThreshold', o.onThreshold);
  const off = o.offThreshold === 'robust' ? o.robustLevels[1] * sd : checkNonNegative(fn, 'offThreshold', o.offThreshold);
  if (!(off <= on)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: offThreshold (${off}) must be ≤ onThreshold (${on}).`, { fn, on, off });
  }
  const rate = signal.sampleRate;
  return {
    a,
    rule: {
      on, off, refine, refineLevel: frac * on,
      holdN: Math.max(1, Math.round(holdSec * rate)), quietN: Math.round(quietSec * rate), baselineValue: b,
    },
  };
}

/** Outcome of examining one threshold crossing. */
export interface Crossing {
  /** 'ok', 'no-quiescence' (activity ≥ off inside the quiet window, or too little record before), or 'no-hold'. */
  status: 'ok' | 'no-quiescence' | 'no-hold';
  crossing: number;
  onset: number;
  /** First sample of the quiet run (holdN samples < off) that ends the movement (n if none). */
  end: number;
  /** Last sample below off before the crossing (−1 if none). */
  riseStart: number;
}

/** Next sample ≥ from (and < to) with activity > on, or −1. */
export function nextAbove(a: Float64Array, from: number, to: number, on: number): number {
  for (let i = from; i < to; i++) if (a[i]! > on) return i;
  return -1;
}

/** First index ≥ from starting holdN consecutive samples < off (a.length when none). */
export function movementEnd(a: Float64Array, from: number, off: number, holdN: number): number {
  let run = 0;
  for (let i = from; i < a.length; i++) {
    if (a[i]! < off) {
      run++;
      if (run >= holdN) return i - holdN + 1;
    } else {
      run = 0;
    }
  }
  return a.length;
}

/**
 * Examine the crossing at sample i (a[i] > on): hold (a > off for holdN samples from i), the rise
 * start rs (last sample before i with a < off), quiescence (quietN samples ending at rs all < off)
 * and the refined onset.
 */
export function examine(a: Float64Array, i: number, r: OnsetRule): Crossing {
  const n = a.length;
  const end = movementEnd(a, i, r.off, r.holdN);
  if (i + r.holdN > n) return { status: 'no-hold', crossing: i, onset: i, end, riseStart: -1 };
  for (let k = i; k < i + r.holdN; k++) if (!(a[k]! > r.off)) return { status: 'no-hold', crossing: i, onset: i, end: k, riseStart: -1 };
  let rs = i - 1;
  while (rs >= 0 && !(a[rs]! < r.off)) rs--;
  if (rs < 0 || rs - r.quietN + 1 < 0) return { status: 'no-quiescence', crossing: i, onset: i, end, riseStart: rs };
  // Samples between rs and i are ≥ off (rising); the quiet window is the quietN samples ending at rs.
  for (let k = rs - r.quietN + 1; k <= rs; k++) if (!(a[k]! < r.off)) return { status: 'no-quiescence', crossing: i, onset: i, end, riseStart: rs };
  let onset = i;
  if (r.refine === 'off-threshold') onset = rs;
  else if (r.refine === 'fraction') {
    onset = rs;
    const lo = Math.max(0, rs - r.quietN + 1);
    for (let k = i; k >= lo; k--) {
      if (a[k]! <= r.refineLevel) {
        onset = k;
        break;
      }
    }
  }
  return { status: 'ok', crossing: i, onset, end, riseStart: rs };
}

/** Peak activity and its index over [from, to). */
export function peakOf(a: Float64Array, from: number, to: number): [number, number] {
  let best = -Infinity;
  let at = from;
  for (let k = from; k < Math.min(to, a.length); k++) {
    if (a[k]! > best) {
      best = a[k]!;
      at = k;
    }
  }
  return [best, at];
}

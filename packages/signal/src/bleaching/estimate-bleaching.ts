import { TuningforkError, checkOneOf, checkPositive, resolveOptions } from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { butterworth } from '../filter/design.js';
import { zeroPhasePlan } from '../filter/zero-phase.js';
import { checkUniform, requireFinite } from '../internal/validate.js';
import { airPls, whittakerLambda } from './air-pls.js';
import { fitExponentialDecay } from './fit-exponential.js';
import type { ExponentialFit } from './fit-exponential.js';

/** Options of {@link estimateBleaching}. */
export interface BleachingOptions {
  /**
   * 'double-exponential' / 'single-exponential' fits (bounded least squares); 'highpass': the
   * baseline is a zero-phase low-pass at `cutoffHz` (which also removes genuine slow signal);
   * 'airpls': the lower-envelope baseline of {@link airPls} (d = 2, λ for a 0.5 gain at
   * `cutoffHz`), for sensors whose transients are positive. @defaultValue 'double-exponential'
   */
  method?: 'double-exponential' | 'single-exponential' | 'highpass' | 'airpls';
  /** Rate of the block-averaged copy used for fitting, Hz (4 Hz resolves the ≤ 1 Hz low-pass). @defaultValue 4 */
  fitRateHz?: number;
  /** Low-pass of that copy before an exponential fit, Hz (≤ 1 Hz recommended). @defaultValue 1 */
  lowPassHz?: number;
  /** Cutoff of the 'highpass' and 'airpls' methods, Hz (0.001–0.01 typical). @defaultValue 0.005 */
  cutoffHz?: number;
  /** Bounds of the exponential time constants, s (null: see {@link fitExponentialDecay}). @defaultValue null */
  tauMinSec?: number | null;
  /** @defaultValue null */
  tauMaxSec?: number | null;
}

/** Result of {@link estimateBleaching}. */
export interface BleachingEstimate {
  readonly method: 'double-exponential' | 'single-exponential' | 'highpass' | 'airpls';
  /** Slow baseline on the input grid. */
  readonly baseline: UniformSignal;
  /** Input minus baseline. */
  readonly detrended: UniformSignal;
  /** 1 − baseline(end)/baseline(start). */
  readonly fractionBleached: number;
  /** The exponential fit (null for 'highpass'). */
  readonly fit: ExponentialFit | null;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ method: 'double-exponential', fitRateHz: 4, lowPassHz: 1, cutoffHz: 0.005, tauMinSec: null, tauMaxSec: null } as const);

/** Block means of x (blocks of q samples; the last block may be shorter) and their centre times. */
function blockMeans(s: UniformSignal, q: number): { t: Float64Array; v: Float64Array } {
  const x = s.values;
  const n = x.length;
  const nb = Math.ceil(n / q);
  const t = new Float64Array(nb);
  const v = new Float64Array(nb);
  for (let k = 0; k < nb; k++) {
    const a = k * q;
    const b = Math.min(n, a + q);
    let sum = 0;
    for (let i = a; i < b; i++) sum += x[i]!;
    v[k] = sum / (b - a);
    t[k] = s.t0 + (a + (b - a - 1) / 2) / s.sampleRate;
  }
  return { t, v };
}

/** Piecewise-linear interpolation of (tk, vk) at the grid of s, constant beyond the ends. */
function interpolateToGrid(s: UniformSignal, tk: Float64Array, vk: Float64Array): Float64Array {
  const n = s.values.length;
  const out = new Float64Array(n);
  const m = tk.length;
  let j = 0;
  for (let i = 0; i < n; i++) {
    const t = s.t0 + i / s.sampleRate;
    if (m === 1 || t <= tk[0]!) {
      out[i] = vk[0]!;
      continue;
    }
    if (t >= tk[m - 1]!) {
      out[i] = vk[m - 1]!;
      continue;
    }
    while (tk[j + 1]! < t) j++;
    const u = (t - tk[j]!) / (tk[j + 1]! - tk[j]!);
    out[i] = vk[j]! + (vk[j + 1]! - vk[j]!) * u;
  }
  return out;
}

/** Samples between re-anchorings (a fresh exp) of the grid recurrence. */
const GRID_BLOCK = 4096;

/** Evaluate a·e^(−u/τ1) + b·e^(−u/τ2) + c on the grid by a re-anchored geometric recurrence. */
function evaluateOnGrid(s: UniformSignal, f: ExponentialFit): Float64Array {
  const n = s.values.length;
  const out = new Float64Array(n);
  const dt = 1 / s.sampleRate;
  const r1 = Math.exp(-dt / f.tau1);
  const r2 = f.model === 'double' ? Math.exp(-dt / f.tau2) : 0;
  const BLOCK = GRID_BLOCK;
  for (let a = 0; a < n; a += BLOCK) {
    const u0 = s.t0 + a / s.sampleRate - f.originSec;
    let e1 = Math.exp(-u0 / f.tau1);
    let e2 = f.model === 'double' ? Math.exp(-u0 / f.tau2) : 0;
    const end = Math.min(n, a + BLOCK);
    for (let i = a; i < end; i++) {
      out[i] = f.a * e1 + f.b * e2 + f.c;
      e1 *= r1;
      e2 *= r2;
    }
  }
  return out;
}

/**
 * Estimate the slow photobleaching baseline of one channel and remove it.
 *
 * For speed and robustness the channel is first averaged in blocks to `fitRateHz` (a boxcar
 * anti-alias filter), then low-passed (zero-phase Butterworth, order 2) at `lowPassHz`. The
 * exponential methods fit {@link fitExponentialDecay} to that copy and evaluate the fit on the full
 * grid; 'highpass' low-passes the copy at `cutoffHz` (padding one cutoff period, odd extension) and
 * interpolates it back. Fit each channel separately. Reports the fraction bleached and, for fits,
 * convergence and time constants at their bounds.
 *
 * @param signal - One channel (finite values).
 * @throws {TuningforkError} TF_NON_FINITE (first NaN index and time), TF_TOO_FEW_SAMPLES (fewer
 *   than 6 fitting points), TF_BAD_OPTION.
 */
/** Validated options, block means and the exponential fit when the method has one (shared stage). */
function prepare(fn: string, signal: UniformSignal, options: BleachingOptions) {
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const method = checkOneOf(fn, 'method', opts.method, ['double-exponential', 'single-exponential', 'highpass', 'airpls'] as const);
  const fitRate = checkPositive(fn, 'fitRateHz', opts.fitRateHz);
  const lowPassHz = checkPositive(fn, 'lowPassHz', opts.lowPassHz);
  const cutoffHz = checkPositive(fn, 'cutoffHz', opts.cutoffHz);
  requireFinite(fn, 'signal.values', signal.values, signal, 'Fill or trim gaps before estimating bleaching.');
  const warnings: ResultWarning[] = [];
  const q = Math.max(1, Math.floor(signal.sampleRate / fitRate));
  const { t, v } = blockMeans(signal, q);
  const rate = signal.sampleRate / q;
  if (t.length < 6) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: only ${t.length} block(s) at ${rate} Hz; need at least 6 to estimate bleaching (record longer or raise fitRateHz).`, { fn, blocks: t.length });
  }
  let fit: ExponentialFit | null = null;
  if (method === 'double-exponential' || method === 'single-exponential') {
    let smooth = v;
    if (lowPassHz < 0.45 * rate) {
      const lp = butterworth({ order: 2, cutoffHz: lowPassHz, sampleRate: rate });
      if (t.length > lp.padLen) smooth = zeroPhasePlan(lp).apply(v);
      else warnings.push({ code: 'LOWPASS_SKIPPED', message: `${fn}: too few blocks (${t.length}) to low-pass before fitting; fitted the block means.` });
    }
    fit = fitExponentialDecay(t, smooth, { model: method === 'double-exponential' ? 'double' : 'single', tauMinSec: opts.tauMinSec, tauMaxSec: opts.tauMaxSec });
    warnings.push(...fit.warnings);
  }
  return { method, cutoffHz, t, v, rate, fit, warnings };
}

/**
 * Internal (siteQuality): the fraction bleached and the fit of an exponential method, without
 * the baseline on the full grid. The two baseline values come from the same recurrence as
 * {@link estimateBleaching}'s grid, so the fraction is the same number.
 */
export function bleachedFraction(signal: UniformSignal, options: BleachingOptions = {}): { fractionBleached: number; fit: ExponentialFit; warnings: ResultWarning[] } {
  const fn = 'estimateBleaching';
  const { fit, warnings } = prepare(fn, signal, options);
  if (!fit) throw new TuningforkError('TF_BAD_OPTION', `${fn}: the fraction-only path needs an exponential method.`, { fn });
  const n = signal.values.length;
  return { fractionBleached: 1 - valueOnGrid(signal, fit, n - 1) / valueOnGrid(signal, fit, 0), fit, warnings };
}

/** The value evaluateOnGrid writes at index i (same anchor and recurrence steps). */
function valueOnGrid(s: UniformSignal, f: ExponentialFit, i: number): number {
  const a = i - (i % GRID_BLOCK);
  const u0 = s.t0 + a / s.sampleRate - f.originSec;
  const dt = 1 / s.sampleRate;
  const r1 = Math.exp(-dt / f.tau1);
  const r2 = f.model === 'double' ? Math.exp(-dt / f.tau2) : 0;
  let e1 = Math.exp(-u0 / f.tau1);
  let e2 = f.model === 'double' ? Math.exp(-u0 / f.tau2) : 0;
  for (let k = a; k < i; k++) {
    e1 *= r1;
    e2 *= r2;
  }
  return f.a * e1 + f.b * e2 + f.c;
}

export function estimateBleaching(signal: UniformSignal, options: BleachingOptions = {}): BleachingEstimate {
  const fn = 'estimateBleaching';
  const { method, cutoffHz, t, v, rate, fit, warnings } = prepare(fn, signal, options);
  let baselineValues: Float64Array;
  if (method === 'airpls') {
    const r = airPls(v, { lambda: whittakerLambda(rate, cutoffHz, 2), order: 2 });
    if (!r.converged) warnings.push({ code: 'NOT_CONVERGED', message: `${fn}: airPLS reached its iteration cap (${r.iterations}).` });
    baselineValues = interpolateToGrid(signal, t, r.baseline);
  } else if (method === 'highpass') {
    if (!(cutoffHz < rate / 2)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: cutoffHz ${cutoffHz} must be below half the fitting rate (${rate / 2} Hz).`, { fn });
    const lp = butterworth({ order: 2, cutoffHz, sampleRate: rate });
    const padLen = Math.min(t.length - 1, Math.ceil(rate / cutoffHz));
    const slow = zeroPhasePlan(lp, { padLen }).apply(v);
    baselineValues = interpolateToGrid(signal, t, slow);
  } else {
    baselineValues = evaluateOnGrid(signal, fit!);
  }
  const x = signal.values;
  const det = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) det[i] = x[i]! - baselineValues[i]!;
  const n = x.length;
  return {
    method,
    baseline: { values: baselineValues, sampleRate: signal.sampleRate, t0: signal.t0 },
    detrended: { values: det, sampleRate: signal.sampleRate, t0: signal.t0 },
    fractionBleached: 1 - baselineValues[n - 1]! / baselineValues[0]!,
    fit,
    warnings,
  };
}

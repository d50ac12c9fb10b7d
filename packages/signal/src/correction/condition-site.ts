import { TuningforkError, checkInteger, checkOneOf, checkPositive, resolveOptions } from '@tuningfork/core';
import type { PhotometrySite, ResultWarning, UniformSignal } from '@tuningfork/core';
import { estimateBleaching } from '../bleaching/estimate-bleaching.js';
import type { BleachingEstimate } from '../bleaching/estimate-bleaching.js';
import { butterworth } from '../filter/design.js';
import { filterSignal } from '../filter/filter-signal.js';
import { zeroPhasePlan } from '../filter/zero-phase.js';
import { checkSameGrid, checkUniform, checkWindow, windowIndices } from '../internal/validate.js';
import { findClipping } from '../qc/clipping.js';
import { fitControl } from './fit-control.js';
import type { ControlFit, ControlFitMethod } from './fit-control.js';
import { zScore } from './z-score.js';
import type { ZScoreResult } from './z-score.js';

/** Options of {@link conditionSite}. */
export interface ConditionSiteOptions {
  /** Zero-phase Butterworth low-pass applied to both channels first, Hz; null = none. @defaultValue 10 */
  lowPassHz?: number | null;
  /** Order of that low-pass. @defaultValue 4 */
  lowPassOrder?: number;
  /**
   * Remove bleaching from both channels before the fit: 'none', 'double-exponential' (fit per
   * channel, {@link estimateBleaching}) or 'highpass' (slow low-pass baseline). With detrending,
   * ΔF/F = (S − B_S − (a + b·(C − B_C)))/B_S; without, ΔF/F = (S − Ĉ)/Ĉ with Ĉ = a + b·C.
   * @defaultValue 'double-exponential'
   */
  detrend?: 'none' | 'double-exponential' | 'highpass';
  /**
   * How a bleaching baseline B is removed before the fit. 'divide': each channel becomes its own
   * ΔF/F, S/B_S − 1 and C/B_C − 1, then ΔF/F = (S/B_S − 1) − (a + b·(C/B_C − 1)) — exact for
   * artefacts that scale both channels' fluorescence (the usual physics of motion and
   * haemodynamics), even when the two channels bleach differently. 'subtract': SIGNALS.md §1.7,
   * ΔF/F = (S − B_S − (a + b·(C − B_C)))/B_S. @defaultValue 'divide'
   */
  detrendMode?: 'divide' | 'subtract';
  /** Cutoff of the 'highpass' detrend, Hz. @defaultValue 0.005 */
  detrendCutoffHz?: number;
  /** Control fit: robust 'bisquare' (recommended), 'huber' or 'ols'. @defaultValue 'bisquare' */
  fitMethod?: ControlFitMethod;
  /** IRLS tuning constant; null = 4.685 (bisquare) / 1.345 (Huber). @defaultValue null */
  tuning?: number | null;
  /** Fit only on samples in [startSec, endSec); the line is applied everywhere. @defaultValue null */
  fitWindowSec?: readonly [number, number] | null;
  /**
   * Low-pass of the copies the control fit sees, Hz; null = fit on the lowPassHz channels. Noise in
   * the control attenuates the fitted slope by var(C)/(var(C) + var(noise)) (errors in variables),
   * so the fit uses a stronger low-pass than the output: block means at ≈ 20× this cutoff, then a
   * zero-phase Butterworth (order 4). The fitted line is applied to the lowPassHz channels.
   * @defaultValue 2
   */
  fitLowPassHz?: number | null;
  /** z-score of ΔF/F: 'session', 'baseline' (needs baselineSec) or 'robust' (median/MAD). @defaultValue 'session' */
  zScore?: 'session' | 'baseline' | 'robust';
  /** Baseline window for zScore 'baseline', s. @defaultValue null */
  baselineSec?: readonly [number, number] | null;
  /** Non-finite samples: 'error' (TF_NON_FINITE naming the first), or 'split' (filter gap-free runs, keep gaps as NaN; needs detrend 'none'). @defaultValue 'error' */
  nan?: 'error' | 'split';
}

/** Every intermediate and diagnostic of {@link conditionSite}. */
export interface ConditionedSite {
  readonly name: string;
  /** Low-passed channels (the raw channels when lowPassHz is null). */
  readonly filtered: { readonly signal: UniformSignal; readonly control: UniformSignal };
  /** Bleaching baselines of both channels (null for detrend 'none'). */
  readonly bleaching: { readonly signal: BleachingEstimate; readonly control: BleachingEstimate | null } | null;
  /** The control fit (null when the control was unusable). */
  readonly fit: ControlFit | null;
  /** a + b·C on the grid (in the detrended units, C/B_C − 1 or C − B_C, when detrending). Null when not motion corrected. */
  readonly fittedControl: UniformSignal | null;
  /** ΔF/F (fraction). */
  readonly dff: UniformSignal;
  /** z-scored ΔF/F and its centre and scale (values and scale NaN for a degenerate sensor channel). */
  readonly z: ZScoreResult;
  /** False when the control was degenerate or clipped and only the bleaching baseline was used. */
  readonly motionCorrected: boolean;
  /**
   * 'control-degenerate', 'control-clipped', 'signal-degenerate', 'signal-clipped',
   * 'slope-nonpositive', 'low-r2', 'reference-nonpositive', 'fit-not-converged',
   * 'bleach-fit-unreliable'.
   */
  readonly flags: readonly string[];
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  lowPassHz: 10, lowPassOrder: 4, detrend: 'double-exponential', detrendMode: 'divide', detrendCutoffHz: 0.005, fitMethod: 'bisquare', tuning: null,
  fitWindowSec: null, fitLowPassHz: 2, zScore: 'session', baselineSec: null, nan: 'error',
} as const);

const sig = (values: Float64Array, s: UniformSignal): UniformSignal => ({ values, sampleRate: s.sampleRate, t0: s.t0 });

/**
 * Session z-score (population sd, NaN omitted) as {@link zScore} with method 'session' and nan
 * 'omit', with the moments in one pass (sums shifted by the first finite value) instead of two.
 */
function sessionZ(d: UniformSignal): ZScoreResult {
  const x = d.values;
  const n = x.length;
  let shift = NaN;
  let m = 0;
  let s1 = 0;
  let s2 = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i]!;
    if (v === v) {
      if (m === 0) shift = v;
      const e = v - shift;
      s1 += e;
      s2 += e * e;
      m++;
    }
  }
  if (m === 0) throw new TuningforkError('TF_TOO_FEW_SAMPLES', 'conditionSite: ΔF/F has no finite sample to z-score.', {});
  const center = shift + s1 / m;
  const scale = Math.sqrt(Math.max(0, s2 / m - (s1 / m) * (s1 / m)));
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = (x[i]! - center) / scale;
  return { signal: { values: out, sampleRate: d.sampleRate, t0: d.t0 }, center, scale, method: 'session', nUsed: m, floored: false };
}

// Sample loops of conditionSite, kept in small module functions over Float64Arrays so each stays
// optimised on its own: inside conditionSite they ran unoptimised whenever that large function was
// deoptimised (e.g. by a site object of a new shape), ≈ 5 s per 60-min session.

/** out[i] = x[i]/B[i] − 1, NaN where B[i] ≤ 0; returns how many B[i] ≤ 0. */
function relativeToBaseline(x: Float64Array, B: Float64Array, out: Float64Array): number {
  let bad = 0;
  for (let i = 0; i < x.length; i++) {
    const b0 = B[i]!;
    if (b0 > 0) out[i] = x[i]! / b0 - 1;
    else {
      out[i] = NaN;
      bad++;
    }
  }
  return bad;
}

/** Mean and population sd of the finite values, in one pass (sums shifted by the first finite value). */
function finiteMeanSd(v: Float64Array): { mean: number; sd: number } {
  let shift = NaN;
  let m = 0;
  let s1 = 0;
  let s2 = 0;
  for (let i = 0; i < v.length; i++) {
    const x = v[i]!;
    if (x - x === 0) {
      if (m === 0) shift = x;
      const d = x - shift;
      s1 += d;
      s2 += d * d;
      m++;
    }
  }
  return { mean: shift + s1 / m, sd: Math.sqrt(Math.max(0, s2 / m - (s1 / m) * (s1 / m))) };
}

/** dff[i] = (S[i] − B[i])/B[i], NaN where B[i] ≤ 0; returns how many B[i] ≤ 0. */
function dffAgainstBaseline(S: Float64Array, B: Float64Array, dff: Float64Array): number {
  let bad = 0;
  for (let i = 0; i < dff.length; i++) {
    const b0 = B[i]!;
    if (b0 > 0) dff[i] = (S[i]! - b0) / b0;
    else {
      dff[i] = NaN;
      bad++;
    }
  }
  return bad;
}

/** Copy the pairs where both ys[i] and xs[i] are finite to the front of yy, xx; returns their count. */
function finitePairs(ys: Float64Array, xs: Float64Array, yy: Float64Array, xx: Float64Array): number {
  let m = 0;
  for (let i = 0; i < ys.length; i++) {
    if (Number.isFinite(ys[i]!) && Number.isFinite(xs[i]!)) {
      yy[m] = ys[i]!;
      xx[m] = xs[i]!;
      m++;
    }
  }
  return m;
}

/** Means of consecutive blocks of q samples of ys and xs into bs and bcv (bs.length blocks). */
function blockMeans(ys: Float64Array, xs: Float64Array, q: number, bs: Float64Array, bcv: Float64Array): void {
  for (let k = 0; k < bs.length; k++) {
    let a1 = 0;
    let a2 = 0;
    for (let i = k * q, e = i + q; i < e; i++) {
      a1 += ys[i]!;
      a2 += xs[i]!;
    }
    bs[k] = a1 / q;
    bcv[k] = a2 / q;
  }
}

/** fitted = a + b·C; dff = R − fitted (channels already relative to their baselines). */
function dffRemoveFitted(a: number, b: number, C: Float64Array, R: Float64Array, fitted: Float64Array, dff: Float64Array): void {
  for (let i = 0; i < dff.length; i++) {
    const f = a + b * C[i]!;
    fitted[i] = f;
    dff[i] = R[i]! - f;
  }
}

/** fitted = a + b·C; dff = (R − fitted)/B, NaN where B ≤ 0; returns how many B ≤ 0. */
function dffOverBaseline(a: number, b: number, C: Float64Array, R: Float64Array, B: Float64Array, fitted: Float64Array, dff: Float64Array): number {
  let bad = 0;
  for (let i = 0; i < dff.length; i++) {
    const f = a + b * C[i]!;
    fitted[i] = f;
    const b0 = B[i]!;
    if (b0 > 0) dff[i] = (R[i]! - f) / b0;
    else {
      dff[i] = NaN;
      bad++;
    }
  }
  return bad;
}

/** fitted = a + b·C; dff = (S − fitted)/fitted, NaN where fitted ≤ 0 or NaN; returns how many fitted ≤ 0. */
function dffOverFitted(a: number, b: number, C: Float64Array, S: Float64Array, fitted: Float64Array, dff: Float64Array): number {
  let bad = 0;
  for (let i = 0; i < dff.length; i++) {
    const f = a + b * C[i]!;
    fitted[i] = f;
    if (f > 0) dff[i] = (S[i]! - f) / f;
    else {
      dff[i] = NaN;
      if (!Number.isNaN(f)) bad++;
    }
  }
  return bad;
}

/**
 * Condition one photometry site: low-pass → (bleaching removal) → robust control fit → ΔF/F → z-score.
 *
 * The standard chain of SIGNALS.md §1.6–1.7, returning every intermediate. (1) Both channels are
 * low-passed (zero-phase Butterworth, default 10 Hz, order 4), which also keeps regressor noise
 * from attenuating the slope. (2) By default each channel's bleaching is fitted with a double
 * exponential and subtracted, so the fit follows shared motion rather than the two decays. (3)
 * The control is fitted to the signal by IRLS (bisquare 4.685 default) on the fitting window.
 * (4) ΔF/F against the fitted control; with detrending, the control-predicted part is removed
 * from the signal's own ΔF/F (detrendMode 'divide') or divided by the signal's baseline
 * ('subtract', §1.7). (5) z-score.
 * A control with sd < 1e-6·|mean| or a clipped control is not used for division: the site is
 * returned with `motionCorrected: false`, ΔF/F against the signal's bleaching baseline, and a
 * flag. A sensor channel with sd < 1e-6·|mean| (constant: a dead channel) keeps its ΔF/F (zero
 * up to rounding) but gets a NaN z-score, the flag 'signal-degenerate' and the warning
 * SIGNAL_DEGENERATE, since z-scoring rounding residue would give arbitrary values. Flags also mark
 * slope ≤ 0, OLS R² < 0.05 on the low-passed data, non-positive references (set to NaN, counted),
 * non-convergence and unreliable bleaching fits.
 *
 * @param site - Sensor and control channels on one grid.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (channels of unequal length or grids), TF_NON_FINITE
 *   (first NaN with its time, nan 'error'), TF_BAD_OPTION, TF_TOO_FEW_SAMPLES.
 * @example
 * ```ts
 * const out = conditionSite(session.photometry[0]);
 * out.dff.values; out.z.signal.values; out.fit?.slope; out.flags;
 * ```
 *
 * References
 * - Keevers, L. J. & Jean-Richard-dit-Bressel, P. (2025). Neurophotonics 12:025003 (robust IRLS
 *   with low-pass before ΔF/F outperforms OLS; title from memory).
 * - Lerner, T. N. et al. (2015). Cell 162(3):635–647. doi:10.1016/j.cell.2015.07.014
 */
export function conditionSite(site: PhotometrySite, options: ConditionSiteOptions = {}): ConditionedSite {
  const fn = 'conditionSite';
  const opts = resolveOptions(fn, DEFAULTS, options);
  if (!site || typeof site !== 'object') throw new TuningforkError('TF_BAD_OPTION', `${fn}: site must be { name, signal, control }.`, { fn });
  checkUniform(fn, 'site.signal', site.signal);
  checkUniform(fn, 'site.control', site.control);
  checkSameGrid(fn, site.signal, 'signal', site.control, 'control');
  const detrend = checkOneOf(fn, 'detrend', opts.detrend, ['none', 'double-exponential', 'highpass'] as const);
  const nanMode = checkOneOf(fn, 'nan', opts.nan, ['error', 'split'] as const);
  const method = checkOneOf(fn, 'fitMethod', opts.fitMethod, ['ols', 'huber', 'bisquare'] as const);
  const zMethod = checkOneOf(fn, 'zScore', opts.zScore, ['session', 'baseline', 'robust'] as const);
  const order = checkInteger(fn, 'lowPassOrder', opts.lowPassOrder, 1, 8);
  const lowPassHz = opts.lowPassHz === null ? null : checkPositive(fn, 'lowPassHz', opts.lowPassHz);
  const fitWin = checkWindow(fn, 'fitWindowSec', opts.fitWindowSec);
  const detrendCutoff = checkPositive(fn, 'detrendCutoffHz', opts.detrendCutoffHz);
  const divide = checkOneOf(fn, 'detrendMode', opts.detrendMode, ['divide', 'subtract'] as const) === 'divide';
  if (nanMode === 'split' && detrend !== 'none') {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: nan 'split' needs detrend 'none' (bleaching fits need gap-free data); fill gaps or pass { detrend: 'none' }.`, { fn });
  }
  const fs = site.signal.sampleRate;
  const n = site.signal.values.length;
  const warnings: ResultWarning[] = [];
  const flags: string[] = [];
  const name = typeof site.name === 'string' ? site.name : '';
  const where = name ? ` (site '${name}')` : '';

  // 1. Low-pass.
  let fSig = site.signal;
  let fCtl = site.control;
  if (lowPassHz !== null) {
    const lp = butterworth({ order, cutoffHz: lowPassHz, sampleRate: fs });
    const a = filterSignal(site.signal, lp, { nan: nanMode });
    const b = filterSignal(site.control, lp, { nan: nanMode });
    fSig = a.signal;
    fCtl = b.signal;
    warnings.push(...a.warnings, ...b.warnings);
  }
  const ctlClip = findClipping(site.control);
  const sigClip = findClipping(site.signal);
  if (sigClip.clipped) flags.push('signal-clipped');

  // 2. Bleaching.
  let bleaching: ConditionedSite['bleaching'] = null;
  let fitS = fSig.values;
  let fitC = fCtl.values;
  let bleachS: BleachingEstimate | null = null;
  const bleachOpts = detrend === 'highpass' ? { method: 'highpass' as const, cutoffHz: detrendCutoff } : { method: 'double-exponential' as const };
  let nonPositive = 0;
  /** Channel relative to its baseline: x/B − 1 ('divide') or x − B ('subtract'); NaN where B ≤ 0. */
  const relative = (x: Float64Array, est: BleachingEstimate): Float64Array => {
    if (!divide) return est.detrended.values;
    const out = new Float64Array(x.length);
    nonPositive += relativeToBaseline(x, est.baseline.values, out);
    return out;
  };
  const unreliable = (est: BleachingEstimate): boolean => est.fit !== null && (!est.fit.converged || (est.fit.tauAtBound && est.fit.tau1 <= est.fit.bounds.tauMinSec * (1 + 1e-6)));
  if (detrend !== 'none') {
    bleachS = estimateBleaching(fSig, bleachOpts);
    fitS = relative(fSig.values, bleachS);
    if (unreliable(bleachS)) flags.push('bleach-fit-unreliable');
  }

  // Degenerate sensor? A constant sensor channel has ΔF/F 0 up to rounding, and z-scoring that
  // rounding residue would give arbitrary values of order 1.
  const { mean: sMean, sd: sSd } = finiteMeanSd(fSig.values);
  const signalDegenerate = !(sSd > 1e-6 * Math.abs(sMean));
  if (signalDegenerate) {
    flags.push('signal-degenerate');
    warnings.push({ code: 'SIGNAL_DEGENERATE', message: `${fn}${where}: the sensor channel is constant (sd ${sSd} vs mean ${sMean}, < 1e-6 of |mean|); its ΔF/F carries only rounding error, so the z-score is undefined and set to NaN.`, details: { sd: sSd, mean: sMean } });
  }

  // Degenerate control?
  // Mean and sd of the control in one pass (sums shifted by the first finite value).
  const { mean: cMean, sd: cSd } = finiteMeanSd(fCtl.values);
  const degenerate = !(cSd > 1e-6 * Math.abs(cMean));
  const clipped = ctlClip.clipped;
  if (degenerate) flags.push('control-degenerate');
  if (clipped) flags.push('control-clipped');
  const dff = new Float64Array(n);
  let fit: ControlFit | null = null;
  let fitted: Float64Array | null = null;
  let motionCorrected = false;
  if (degenerate || clipped) {
    // Fall back to the signal's bleaching baseline; never divide by a useless control.
    warnings.push({ code: 'NO_MOTION_CORRECTION', message: `${fn}${where}: the control is ${degenerate ? `degenerate (sd ${cSd} vs mean ${cMean})` : 'clipped'}; ΔF/F uses the signal's bleaching baseline only.` });
    if (!bleachS) bleachS = estimateBleaching(fSig, bleachOpts.method === 'highpass' ? bleachOpts : { method: 'double-exponential' });
    nonPositive += dffAgainstBaseline(fSig.values, bleachS.baseline.values, dff);
    bleaching = { signal: bleachS, control: null };
  } else {
    let bleachC: BleachingEstimate | null = null;
    if (detrend !== 'none') {
      bleachC = estimateBleaching(fCtl, bleachOpts);
      fitC = relative(fCtl.values, bleachC);
      if (unreliable(bleachC)) flags.push('bleach-fit-unreliable');
      bleaching = { signal: bleachS!, control: bleachC };
    }
    // 3. Control fit on the window (finite samples only when splitting).
    const [i0, i1] = windowIndices(fSig, fitWin);
    if (i1 - i0 < 3) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}${where}: fitWindowSec holds ${i1 - i0} sample(s).`, { fn });
    let ys = fitS.subarray(i0, i1);
    let xs = fitC.subarray(i0, i1);
    if (nanMode === 'split' || nonPositive > 0) {
      const yy = new Float64Array(i1 - i0);
      const xx = new Float64Array(i1 - i0);
      const m = finitePairs(ys, xs, yy, xx);
      ys = yy.subarray(0, m);
      xs = xx.subarray(0, m);
    }
    const fitLp = opts.fitLowPassHz === null ? null : checkPositive(fn, 'fitLowPassHz', opts.fitLowPassHz);
    if (fitLp !== null) {
      const q = Math.max(1, Math.floor(fs / (20 * fitLp)));
      const rate = fs / q;
      const design = fitLp < 0.45 * rate ? butterworth({ order: 4, cutoffHz: fitLp, sampleRate: rate }) : null;
      const nb = Math.floor(ys.length / q);
      if (design && nb > design.padLen) {
        const bs = new Float64Array(nb);
        const bcv = new Float64Array(nb);
        blockMeans(ys, xs, q, bs, bcv);
        const plan = zeroPhasePlan(design);
        ys = plan.apply(bs, bs);
        xs = plan.apply(bcv, bcv);
      } else {
        warnings.push({ code: 'FIT_LOWPASS_SKIPPED', message: `${fn}${where}: too few samples to low-pass the fitting copies at ${fitLp} Hz; fitted the ${lowPassHz ?? 'raw'} Hz channels.` });
      }
    }
    fit = fitControl(ys, xs, { method, tuning: opts.tuning });
    if (!fit.converged) flags.push('fit-not-converged');
    if (fit.slope <= 0) flags.push('slope-nonpositive');
    if (!(fit.olsRSquared >= 0.05)) flags.push('low-r2');
    motionCorrected = true;
    // 4. ΔF/F.
    fitted = new Float64Array(n);
    const a = fit.intercept;
    const b = fit.slope;
    if (bleachS && divide) dffRemoveFitted(a, b, fitC, fitS, fitted, dff);
    else if (bleachS) nonPositive += dffOverBaseline(a, b, fitC, fitS, bleachS.baseline.values, fitted, dff);
    else nonPositive += dffOverFitted(a, b, fitC, fSig.values, fitted, dff);
  }
  if (nonPositive > 0) {
    flags.push('reference-nonpositive');
    warnings.push({ code: 'REFERENCE_NONPOSITIVE', message: `${fn}${where}: ${nonPositive} sample(s) had a reference ≤ 0; their ΔF/F is NaN (not divided).`, details: { count: nonPositive } });
  }
  if (bleaching) {
    warnings.push(...bleaching.signal.warnings.map((w) => ({ ...w, message: `signal: ${w.message}` })));
    if (bleaching.control) warnings.push(...bleaching.control.warnings.map((w) => ({ ...w, message: `control: ${w.message}` })));
  }
  const dffSig = sig(dff, fSig);
  let z = zMethod === 'session' ? sessionZ(dffSig) : zScore(dffSig, { method: zMethod, baselineSec: opts.baselineSec, nan: 'omit' });
  if (signalDegenerate) z = { ...z, signal: sig(new Float64Array(n).fill(NaN), fSig), scale: NaN };
  return {
    name,
    filtered: { signal: fSig, control: fCtl },
    bleaching,
    fit,
    fittedControl: fitted ? sig(fitted, fSig) : null,
    dff: dffSig,
    z,
    motionCorrected,
    flags: [...new Set(flags)],
    warnings,
  };
}

import { checkInteger, checkPositive, resolveOptions } from '@tuningfork/core';
import type { PhotometrySite, ResultWarning, UniformSignal } from '@tuningfork/core';
import { bleachedFraction } from '../bleaching/estimate-bleaching.js';
import { olsMoments } from '../correction/fit-control.js';
import { butterworth } from '../filter/design.js';
import { zeroPhasePlan } from '../filter/zero-phase.js';
import { checkSameGrid, checkUniform, countNonFinite } from '../internal/validate.js';
import { checkTimestamps } from './check-timestamps.js';
import type { TimestampReport } from './check-timestamps.js';
import { findClipping } from './clipping.js';
import type { ClippingReport } from './clipping.js';
import { estimateSnr } from './estimate-snr.js';
import type { SnrEstimate } from './estimate-snr.js';
import { findSpectralPeaks } from './spectral-peaks.js';
import type { SpectralPeak } from './spectral-peaks.js';
import { welch } from './welch.js';
import type { PowerSpectrum } from './welch.js';

/** Options of {@link siteQuality}. */
export interface SiteQualityOptions {
  /** Acquisition timestamps of the samples (for dropped-sample and jitter checks), or null. @defaultValue null */
  timestamps?: ArrayLike<number> | null;
  /** Detector/ADC limits [low, high] for the clipping check, or null. @defaultValue null */
  detectorRange?: readonly [number, number] | null;
  /** Low-pass applied before the control–signal correlation and slope, Hz. @defaultValue 10 */
  lowPassHz?: number;
  /** Welch segment length, samples; null = the power of two nearest 4 s. @defaultValue null */
  psdSegmentLength?: number | null;
}

/** Per-channel part of a {@link SiteQuality} report. */
export interface ChannelQuality {
  readonly nonFinite: number;
  readonly clipping: ClippingReport;
  readonly bleachingFraction: number;
  readonly spectrum: PowerSpectrum | null;
  readonly peaks: readonly SpectralPeak[];
}

/** Quality report of one photometry site. */
export interface SiteQuality {
  readonly name: string;
  readonly signal: ChannelQuality;
  readonly control: ChannelQuality;
  readonly timestamps: TimestampReport | null;
  /** SNR of the sensor channel (null when it holds non-finite samples). */
  readonly snr: SnrEstimate | null;
  /** Pearson r and OLS slope of signal on control after the low-pass. */
  readonly controlSignalR: number;
  readonly controlSignalSlope: number;
  /** 'non-finite', 'signal-clipped', 'control-clipped', 'dropped-samples', 'irregular-timestamps', 'negative-slope', 'weak-control-correlation'. */
  readonly flags: readonly string[];
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ timestamps: null, detectorRange: null, lowPassHz: 10, psdSegmentLength: null } as const);

/**
 * Quality-control report of one photometry site (SIGNALS.md §1.8).
 *
 * Per channel: non-finite count, clipping ({@link findClipping}), bleaching fraction (double
 * exponential, as estimateBleaching), Welch spectrum of the raw channel and its narrow peaks
 * (> 10 dB over the local median: heartbeat, mains, frame rates). Per site: SNR of the sensor
 * ({@link estimateSnr}), Pearson r and OLS slope of signal on control after a low-pass, and the
 * timestamp checks when timestamps are given. Nothing is thrown for bad data: problems become
 * flags; steps that cannot run (non-finite data, too few samples for the low-pass, a constant
 * channel) are skipped with a warning. When `lowPassHz` is not below the Nyquist frequency (e.g.
 * 10 Hz at 20 Hz sampling) the channels hold nothing above it, so r and the slope are computed on
 * the unfiltered channels (warning LOWPASS_SKIPPED).
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH (channels on different grids), TF_BAD_OPTION.
 */
export function siteQuality(site: PhotometrySite, options: SiteQualityOptions = {}): SiteQuality {
  const fn = 'siteQuality';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'site.signal', site.signal);
  checkUniform(fn, 'site.control', site.control);
  checkSameGrid(fn, site.signal, 'signal', site.control, 'control');
  const lowPassHz = checkPositive(fn, 'lowPassHz', opts.lowPassHz);
  const fs = site.signal.sampleRate;
  const seg = opts.psdSegmentLength === null ? 2 ** Math.round(Math.log2(Math.max(2, 4 * fs))) : checkInteger(fn, 'psdSegmentLength', opts.psdSegmentLength, 2);
  const warnings: ResultWarning[] = [];
  const flags: string[] = [];
  const channel = (s: UniformSignal, label: string): ChannelQuality => {
    const nonFinite = countNonFinite(s.values);
    const clipping = findClipping(s, { range: opts.detectorRange });
    let bleachingFraction = NaN;
    let spectrum: PowerSpectrum | null = null;
    let peaks: SpectralPeak[] = [];
    if (nonFinite === 0) {
      try {
        const b = bleachedFraction(s, { method: 'double-exponential' });
        bleachingFraction = b.fractionBleached;
        if (b.fit && (!b.fit.converged || b.fit.tauAtBound)) warnings.push({ code: 'BLEACH_FIT_UNRELIABLE', message: `${fn}: ${label} bleaching fit ${b.fit.converged ? 'has a time constant at a bound' : 'did not converge'}.` });
      } catch (e) {
        warnings.push({ code: 'BLEACH_FIT_FAILED', message: `${fn}: ${label} bleaching fit failed: ${(e as Error).message}` });
      }
      spectrum = welch(s, { segmentLength: seg });
      peaks = findSpectralPeaks(spectrum);
    } else {
      warnings.push({ code: 'NON_FINITE_SKIPPED', message: `${fn}: ${label} has ${nonFinite} non-finite sample(s); spectrum and bleaching skipped.` });
    }
    if (clipping.clipped) flags.push(`${label}-clipped`);
    return { nonFinite, clipping, bleachingFraction, spectrum, peaks };
  };
  const sq = channel(site.signal, 'signal');
  const cq = channel(site.control, 'control');
  if (sq.nonFinite + cq.nonFinite > 0) flags.push('non-finite');
  let snr: SnrEstimate | null = null;
  let r = NaN;
  let slope = NaN;
  if (sq.nonFinite === 0 && cq.nonFinite === 0) {
    try {
      snr = estimateSnr(site.signal);
    } catch (e) {
      warnings.push({ code: 'SNR_FAILED', message: `${fn}: SNR not estimated: ${(e as Error).message}` });
    }
    let ls: Float64Array | null = site.signal.values;
    let lc: Float64Array = site.control.values;
    if (lowPassHz < fs / 2) {
      const plan = zeroPhasePlan(butterworth({ order: 4, cutoffHz: lowPassHz, sampleRate: fs }));
      if (site.signal.values.length > plan.padLen) {
        ls = plan.apply(site.signal.values);
        lc = plan.apply(site.control.values);
      } else {
        ls = null;
        warnings.push({ code: 'CONTROL_FIT_SKIPPED', message: `${fn}: ${site.signal.values.length} samples are too few for the ${lowPassHz} Hz low-pass (more than ${plan.padLen} needed); controlSignalR and controlSignalSlope are NaN.`, details: { n: site.signal.values.length, padLen: plan.padLen } });
      }
    } else {
      // Sampled at ≤ 2·lowPassHz, the channels hold nothing above the cutoff: nothing to remove.
      warnings.push({ code: 'LOWPASS_SKIPPED', message: `${fn}: lowPassHz ${lowPassHz} is not below the Nyquist frequency ${fs / 2} Hz; controlSignalR and controlSignalSlope use the unfiltered channels.`, details: { lowPassHz, nyquist: fs / 2 } });
    }
    if (ls !== null) {
      try {
        // The OLS line and r only (fitControl would also compute a median residual scale).
        const f = olsMoments(fn, lc, ls);
        slope = f.sxy / f.sxx;
        r = f.syy > 0 ? f.sxy / Math.sqrt(f.sxx * f.syy) : NaN;
        if (!(f.syy > 0)) warnings.push({ code: 'CONTROL_FIT_FAILED', message: `${fn}: the signal is constant after the low-pass; controlSignalR is undefined (NaN).` });
      } catch (e) {
        warnings.push({ code: 'CONTROL_FIT_FAILED', message: `${fn}: control–signal fit failed: ${(e as Error).message}` });
      }
    }
  }
  if (slope <= 0) flags.push('negative-slope');
  if (r * r < 0.05) flags.push('weak-control-correlation');
  let ts: TimestampReport | null = null;
  if (opts.timestamps !== null) {
    ts = checkTimestamps(opts.timestamps, { sampleRate: fs });
    if (ts.droppedSamples > 0) flags.push('dropped-samples');
    if (ts.irregular > 0 || ts.nonIncreasing > 0) flags.push('irregular-timestamps');
  }
  return { name: site.name, signal: sq, control: cq, timestamps: ts, snr, controlSignalR: r, controlSignalSlope: slope, flags, warnings };
}

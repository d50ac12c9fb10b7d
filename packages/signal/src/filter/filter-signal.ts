import { TuningforkError, checkOneOf, resolveOptions } from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { sosForward } from '../internal/sos-kernel.js';
import { checkUniform, firstNonFinite, requireFinite } from '../internal/validate.js';
import type { IirFilter } from './design.js';
import { sosfiltZiRaw } from './iir-filter.js';
import { zeroPhasePlan } from './zero-phase.js';
import type { PadType } from './zero-phase.js';

/** Options of {@link filterSignal}. */
export interface FilterSignalOptions {
  /** 'zero' = forward–backward (sosfiltfilt), 'causal' = one forward pass from the steady state of the first sample. @defaultValue 'zero' */
  phase?: 'zero' | 'causal';
  /** End extension for zero-phase filtering (see {@link ZeroPhaseOptions}). @defaultValue 'odd' */
  padType?: PadType;
  /** Pad length; null = scipy default. @defaultValue null */
  padLen?: number | null;
  /**
   * Non-finite samples: 'error' throws TF_NON_FINITE naming the first one (index and time);
   * 'split' filters each finite run separately and keeps the gaps as NaN (runs too short for
   * the padding are set to NaN and reported). @defaultValue 'error'
   */
  nan?: 'error' | 'split';
}

/** Result of {@link filterSignal}. */
export interface FilterSignalResult {
  /** Filtered signal on the input grid. */
  readonly signal: UniformSignal;
  /** Pad length used at each end of each run (0 for causal). */
  readonly padLen: number;
  /** Number of finite runs filtered (1 without gaps). */
  readonly segments: number;
  /** Repairs made ('split' mode): gaps kept as NaN, short runs blanked. */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ phase: 'zero', padType: 'odd', padLen: null, nan: 'error' } as const);

/** Pad length the plan will use (0 for causal filtering or padType 'none'). */
function padLenOf(filter: IirFilter, padType: string, padLen: number | null, phase: string): number {
  if (phase !== 'zero' || padType === 'none') return 0;
  return padLen ?? filter.padLen;
}

/**
 * Filter a uniformly sampled signal with an IIR design, zero-phase by default, with a NaN policy.
 *
 * Zero-phase filtering is {@link sosfiltfilt} (scipy-identical); causal filtering starts from the
 * steady state of the first sample (sosfilt with `sosfiltZi·x[0]`). The filter's sample rate
 * must equal the signal's.
 *
 * @param signal - Input (values, sampleRate, t0).
 * @param filter - A design from {@link butterworth} or {@link chebyshev1}.
 * @throws {TuningforkError} TF_NON_FINITE (first gap, with index and time; nan 'error'),
 *   TF_BAD_OPTION (filter designed for another sample rate), TF_TOO_FEW_SAMPLES (input not
 *   longer than padLen).
 */
export function filterSignal(signal: UniformSignal, filter: IirFilter, options: FilterSignalOptions = {}): FilterSignalResult {
  const fn = 'filterSignal';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'signal', signal);
  const phase = checkOneOf(fn, 'phase', opts.phase, ['zero', 'causal'] as const);
  const nanMode = checkOneOf(fn, 'nan', opts.nan, ['error', 'split'] as const);
  if (Math.abs(filter.sampleRate - signal.sampleRate) > 1e-9 * signal.sampleRate) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: the filter was designed for ${filter.sampleRate} Hz but the signal is sampled at ${signal.sampleRate} Hz. Design the filter with sampleRate: ${signal.sampleRate}.`, { fn, filterRate: filter.sampleRate, sampleRate: signal.sampleRate });
  }
  const x = signal.values;
  const n = x.length;
  const clock = { sampleRate: signal.sampleRate, t0: signal.t0 };
  const hint = "Pass { nan: 'split' } to filter each gap-free run separately.";
  if (nanMode === 'error' && n > padLenOf(filter, opts.padType, opts.padLen, phase)) {
    // Fast path: filter first and check afterwards. A NaN or ±Infinity anywhere in the input
    // leaves the IIR state non-finite to the end, so a finite last output proves the input finite
    // (this saves a full pass over long recordings); otherwise locate it and throw.
    const out0 = new Float64Array(n);
    const plan0 = phase === 'zero' ? zeroPhasePlan(filter, { padType: opts.padType, padLen: opts.padLen }) : null;
    if (plan0) plan0.applyUnchecked(x, out0);
    else {
      const zi = sosfiltZiRaw(filter.sos, filter.nSections);
      for (let k = 0; k < zi.length; k++) zi[k] = zi[k]! * x[0]!;
      sosForward(filter.sos, filter.nSections, out0, 0, n, zi, x);
    }
    const probe = phase === 'zero' ? out0[0]! : out0[n - 1]!;
    if (probe - probe === 0) {
      return { signal: { values: out0, sampleRate: signal.sampleRate, t0: signal.t0 }, padLen: plan0 ? plan0.padLen : 0, segments: 1, warnings: [] };
    }
    requireFinite(fn, 'signal.values', x, clock, hint);
  }
  const firstBad = firstNonFinite(x);
  if (nanMode === 'error' && firstBad >= 0) requireFinite(fn, 'signal.values', x, clock, hint);
  const out = new Float64Array(n);
  const warnings: ResultWarning[] = [];
  const plan = phase === 'zero' ? zeroPhasePlan(filter, { padType: opts.padType, padLen: opts.padLen }) : null;
  const padLen = plan ? plan.padLen : 0;
  const zi0 = sosfiltZiRaw(filter.sos, filter.nSections);
  const state = new Float64Array(zi0.length);
  const run = (a: number, b: number): void => {
    const seg = x.subarray(a, b);
    const o = out.subarray(a, b);
    if (plan) plan.applyUnchecked(seg, o);
    else {
      for (let k = 0; k < state.length; k++) state[k] = zi0[k]! * seg[0]!;
      sosForward(filter.sos, filter.nSections, o, 0, o.length, state, seg);
    }
  };
  if (firstBad < 0) {
    if (n <= padLen) {
      throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: the signal has ${n} samples but zero-phase filtering with padLen ${padLen} needs more than ${padLen}.`, { fn, n, padLen });
    }
    if (n > 0) run(0, n);
    return { signal: { values: out, sampleRate: signal.sampleRate, t0: signal.t0 }, padLen, segments: n > 0 ? 1 : 0, warnings };
  }
  let segments = 0;
  let gaps = 0;
  let blanked = 0;
  let blankedSamples = 0;
  let i = 0;
  while (i < n) {
    if (x[i]! - x[i]! !== 0) {
      out[i] = NaN;
      let j = i;
      while (j < n && x[j]! - x[j]! !== 0) out[j++] = NaN;
      gaps++;
      i = j;
      continue;
    }
    let j = i;
    while (j < n && x[j]! - x[j]! === 0) j++;
    if (j - i > padLen) {
      run(i, j);
      segments++;
    } else {
      out.fill(NaN, i, j);
      blanked++;
      blankedSamples += j - i;
    }
    i = j;
  }
  warnings.push({
    code: 'GAPS_SPLIT',
    message: `${fn}: ${gaps} run(s) of non-finite samples kept as NaN; ${segments} finite run(s) filtered separately.`,
    details: { gaps, segments },
  });
  if (blanked > 0) {
    warnings.push({
      code: 'SHORT_RUNS_BLANKED',
      message: `${fn}: ${blanked} finite run(s) (${blankedSamples} samples) were not longer than padLen ${padLen} and were set to NaN.`,
      details: { runs: blanked, samples: blankedSamples, padLen },
    });
  }
  return { signal: { values: out, sampleRate: signal.sampleRate, t0: signal.t0 }, padLen, segments, warnings };
}

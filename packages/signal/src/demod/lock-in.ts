import { TuningforkError, checkInteger, checkOneOf, checkPositive, formatValue, resolveOptions } from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { butterworth } from '../filter/design.js';
import { zeroPhasePlan } from '../filter/zero-phase.js';
import { checkUniform, requireFinite } from '../internal/validate.js';

/** Options of {@link lockInDemodulate}. `carriersHz` is required. */
export interface LockInOptions {
  /** Carrier frequencies, Hz (each below Nyquist). Required. */
  carriersHz?: readonly number[];
  /** Low-pass cutoff applied to the mixed products, Hz (10–20 typical). @defaultValue 15 */
  cutoffHz?: number;
  /** Butterworth order of that low-pass (zero-phase, so the effective order doubles). @defaultValue 4 */
  order?: number;
  /**
   * Recorded LED drive of each carrier (same grid as the detector), or null. When given, each
   * carrier's exact frequency and phase are measured from its drive (least-squares line through the
   * drive's demodulated phase) and used as the reference; output phases are relative to the drive.
   * A drive that is constant, or whose phase is not such a line (within 0.5 rad RMS), carries no
   * steady carrier near its nominal frequency and is refused (TF_DEGENERATE_SIGNAL).
   * @defaultValue null
   */
  references?: readonly UniformSignal[] | null;
  /** Keep every k-th output sample (after the low-pass, plain subsampling is safe). @defaultValue 1 */
  outputStride?: number;
  /** 'keep' every sample, or 'trim' the first and last `edgeSec` (where the low-pass is unreliable). @defaultValue 'keep' */
  edges?: 'keep' | 'trim';
}

/** One demodulated carrier. */
export interface LockInChannel {
  /** Carrier frequency used, Hz (refined from the drive when references are given). */
  readonly carrierHz: number;
  /** Amplitude R = 2√(I² + Q²) of the carrier in the detector trace. */
  readonly amplitude: UniformSignal;
  /** Phase atan2(Q, I), radians (relative to the drive when references are given). */
  readonly phase: UniformSignal;
  /** In-phase I = LP(x·sin 2πft) and quadrature Q = LP(x·cos 2πft) components. */
  readonly inPhase: UniformSignal;
  readonly quadrature: UniformSignal;
}

/** Result of {@link lockInDemodulate}. */
export interface LockInResult {
  readonly channels: readonly LockInChannel[];
  /** Duration at each end where the low-pass edge transient may bias the output: 3/cutoffHz s. */
  readonly edgeSec: number;
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ carriersHz: undefined, cutoffHz: 15, order: 4, references: null, outputStride: 1, edges: 'keep' } as const);

/** Fill out with sin/cos of 2π(f·(t0 + i/fs)) + φ, reducing the argument to one cycle first. */
function mix(x: Float64Array, fs: number, t0: number, f: number, phi: number, sinOut: Float64Array, cosOut: Float64Array): void {
  const n = x.length;
  const c0 = f * t0;
  const step = f / fs;
  for (let i = 0; i < n; i++) {
    let cyc = c0 + i * step;
    cyc -= Math.floor(cyc);
    const ang = 2 * Math.PI * cyc + phi;
    sinOut[i] = x[i]! * Math.sin(ang);
    cosOut[i] = x[i]! * Math.cos(ang);
  }
}

/** RMS departure (radians) of a drive's demodulated phase from its fitted line above which the drive is refused. */
const MAX_DRIVE_PHASE_RMS = 0.5;

/**
 * Refuse a recorded drive that cannot serve as the reference of carrier f0: a constant drive (no
 * carrier at all), or one whose demodulated phase does not follow a straight line (no steady
 * component within the low-pass band of f0: a drive of another carrier, noise, the wrong
 * channel). Either would otherwise yield an arbitrary "refined" frequency and phase, and the
 * carrier's amplitude demodulated at that frequency would be silently wrong.
 */
function checkDrive(fn: string, ci: number, f0: number, drive: Float64Array, phases: Float64Array, cnt: number, a: number, step: number, fs: number, t0: number, slope: number, icpt: number): void {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < drive.length; i++) {
    const v = drive[i]!;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!(hi > lo)) {
    throw new TuningforkError('TF_DEGENERATE_SIGNAL', `${fn}: references[${ci}] is constant (${lo}); a recorded drive must carry the ${f0} Hz carrier. Pass the LED drive of carriersHz[${ci}], or references: null to use the nominal frequency.`, { fn, parameter: `references[${ci}]`, index: ci, carrierHz: f0 });
  }
  let ss = 0;
  for (let j = 0; j < cnt; j++) {
    const d = phases[j]! - (icpt + slope * (t0 + (a + j * step) / fs));
    ss += d * d;
  }
  const rms = Math.sqrt(ss / cnt);
  if (!(rms <= MAX_DRIVE_PHASE_RMS)) {
    throw new TuningforkError(
      'TF_DEGENERATE_SIGNAL',
      `${fn}: references[${ci}] has no steady component near ${f0} Hz: its demodulated phase departs from a straight line by ${rms.toPrecision(3)} rad RMS (at most ${MAX_DRIVE_PHASE_RMS} expected). Check that references[${ci}] is the LED drive of carriersHz[${ci}] (same order), or pass references: null.`,
      { fn, parameter: `references[${ci}]`, index: ci, carrierHz: f0, phaseRms: rms },
    );
  }
}

/**
 * Lock-in (quadrature) demodulation of frequency-multiplexed carriers from one detector trace.
 *
 * **Method.** For each carrier f: I = LP(x·sin 2πft), Q = LP(x·cos 2πft), amplitude
 * R = 2√(I² + Q²) (2 because the mean of sin² is ½) and phase atan2(Q, I), with LP a zero-phase
 * Butterworth ({@link sosfiltfilt}). Quadrature makes R independent of the carrier's phase and
 * tolerant of a frequency mismatch much smaller than the cutoff; I alone would give R·cos φ.
 * Choose carriers that are not harmonically related, far from mains harmonics, with |f1 − f2| ≫
 * cutoff; a square-wave drive's fundamental has amplitude 2A/π. Outputs within 3/cutoff s of the
 * ends carry the filter's edge transient (see `edgeSec`).
 *
 * @param trace - Detector samples (finite); fs ≥ 2.5 × the highest carrier is required.
 * @throws {TuningforkError} TF_BAD_OPTION (no carriers, a carrier ≥ fs/2, cutoff ≥ fs/2),
 *   TF_NON_FINITE (first bad sample), TF_SHAPE_MISMATCH (reference on another grid),
 *   TF_DEGENERATE_SIGNAL (a reference that is constant, or whose demodulated phase departs from
 *   a straight line by more than 0.5 rad RMS: it carries no steady carrier near its nominal
 *   frequency, e.g. references given in another order than carriersHz).
 * @example
 * ```ts
 * const { channels } = lockInDemodulate(trace, { carriersHz: [217, 319], cutoffHz: 15 });
 * channels[0].amplitude.values; // sensor LED amplitude over time
 * ```
 *
 * References
 * - Meade, M. L. (1983). Lock-in Amplifiers: Principles and Applications. Peregrinus (IEE).
 * - Lerner, T. N. et al. (2015). Intact-brain analyses reveal distinct information carried by SNc
 *   dopamine subcircuits. Cell 162(3):635–647. doi:10.1016/j.cell.2015.07.014
 */
export function lockInDemodulate(trace: UniformSignal, options: LockInOptions): LockInResult {
  const fn = 'lockInDemodulate';
  const opts = resolveOptions(fn, DEFAULTS, options);
  checkUniform(fn, 'trace', trace);
  const fs = trace.sampleRate;
  const carriers = opts.carriersHz;
  if (!Array.isArray(carriers) || carriers.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: carriersHz must list at least one carrier frequency (Hz), got ${formatValue(carriers)}.`, { fn, option: 'carriersHz' });
  }
  carriers.forEach((f, i) => {
    checkPositive(fn, `carriersHz[${i}]`, f);
    if (!(f < fs / 2)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: carrier ${f} Hz is at or above the Nyquist frequency ${fs / 2} Hz; sample faster (≥ 10× the top carrier).`, { fn, carrier: f, nyquist: fs / 2 });
  });
  const cutoff = checkPositive(fn, 'cutoffHz', opts.cutoffHz);
  const order = checkInteger(fn, 'order', opts.order, 1, 8);
  const stride = checkInteger(fn, 'outputStride', opts.outputStride, 1);
  const edges = checkOneOf(fn, 'edges', opts.edges, ['keep', 'trim'] as const);
  const refs = opts.references;
  if (refs !== null && (!Array.isArray(refs) || refs.length !== carriers.length)) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: references must give one drive per carrier (${carriers.length}), got ${formatValue(refs)}.`, { fn });
  }
  requireFinite(fn, 'trace.values', trace.values, trace);
  const warnings: ResultWarning[] = [];
  const lp = butterworth({ order, cutoffHz: cutoff, sampleRate: fs });
  const plan = zeroPhasePlan(lp);
  const x = trace.values;
  const n = x.length;
  const sinBuf = new Float64Array(n);
  const cosBuf = new Float64Array(n);
  const edgeSec = 3 / cutoff;
  const trimN = edges === 'trim' ? Math.min(Math.floor(n / 2), Math.ceil(edgeSec * fs)) : 0;
  for (let i = 0; i < carriers.length; i++) {
    for (let j = i + 1; j < carriers.length; j++) {
      if (Math.abs(carriers[i]! - carriers[j]!) < 3 * cutoff) {
        warnings.push({ code: 'CARRIERS_CLOSE', message: `${fn}: carriers ${carriers[i]} and ${carriers[j]} Hz are closer than 3 × the ${cutoff} Hz cutoff; their channels will leak into each other.` });
      }
    }
  }
  const channels: LockInChannel[] = carriers.map((f0, ci) => {
    let f = f0;
    let phi = 0;
    if (refs !== null) {
      const r = refs[ci]!;
      checkUniform(fn, `references[${ci}]`, r);
      if (r.values.length !== n || r.sampleRate !== fs || r.t0 !== trace.t0) {
        throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: references[${ci}] must be on the trace's grid (${n} samples at ${fs} Hz from t=${trace.t0} s).`, { fn, index: ci });
      }
      requireFinite(fn, `references[${ci}].values`, r.values, r);
      // Demodulate the drive at the nominal frequency; its phase drifts linearly at 2π·Δf.
      mix(r.values, fs, trace.t0, f0, 0, sinBuf, cosBuf);
      plan.apply(sinBuf, sinBuf);
      plan.apply(cosBuf, cosBuf);
      const a = Math.max(trimN, Math.ceil(edgeSec * fs));
      const b = Math.min(n, n - a);
      let prev = NaN;
      let unwrap = 0;
      let st = 0, sp = 0, stt = 0, stp = 0, cnt = 0;
      const step = Math.max(1, Math.floor(fs / (4 * cutoff)));
      const phases = new Float64Array(Math.max(0, Math.ceil((b - a) / step)));
      for (let k = a; k < b; k += step) {
        let p = Math.atan2(cosBuf[k]!, sinBuf[k]!);
        if (!Number.isNaN(prev)) {
          while (p + unwrap - prev > Math.PI) unwrap -= 2 * Math.PI;
          while (p + unwrap - prev < -Math.PI) unwrap += 2 * Math.PI;
        }
        p += unwrap;
        prev = p;
        const t = trace.t0 + k / fs;
        phases[cnt] = p;
        st += t; sp += p; stt += t * t; stp += t * p; cnt++;
      }
      if (cnt >= 2) {
        const slope = (stp - (st * sp) / cnt) / (stt - (st * st) / cnt);
        const icpt = (sp - slope * st) / cnt;
        checkDrive(fn, ci, f0, r.values, phases, cnt, a, step, fs, trace.t0, slope, icpt);
        f = f0 + slope / (2 * Math.PI);
        // phase(t) = icpt + slope·t relative to a reference at f0; at frequency f the drive phase is icpt.
        phi = icpt;
      } else {
        warnings.push({ code: 'REFERENCE_TOO_SHORT', message: `${fn}: reference ${ci} too short to measure its frequency; nominal ${f0} Hz used.` });
      }
    }
    mix(x, fs, trace.t0, f, phi, sinBuf, cosBuf);
    const I = plan.apply(sinBuf);
    const Q = plan.apply(cosBuf);
    const m = Math.ceil((n - 2 * trimN) / stride);
    const R = new Float64Array(m);
    const P = new Float64Array(m);
    const Io = new Float64Array(m);
    const Qo = new Float64Array(m);
    for (let k = 0; k < m; k++) {
      const i = trimN + k * stride;
      const vi = I[i]!;
      const vq = Q[i]!;
      Io[k] = vi;
      Qo[k] = vq;
      R[k] = 2 * Math.sqrt(vi * vi + vq * vq);
      P[k] = Math.atan2(vq, vi);
    }
    const sig = (v: Float64Array): UniformSignal => ({ values: v, sampleRate: fs / stride, t0: trace.t0 + trimN / fs });
    return { carrierHz: f, amplitude: sig(R), phase: sig(P), inPhase: sig(Io), quadrature: sig(Qo) };
  });
  return { channels, edgeSec, warnings };
}

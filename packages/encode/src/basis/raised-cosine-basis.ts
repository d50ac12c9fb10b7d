import { TuningforkError, checkInteger, checkNonNegative, checkPositive, checkSampleRate, resolveOptions } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';

/** Options of {@link raisedCosineBasis}. Times in seconds relative to the event. */
export interface RaisedCosineBasisOptions {
  /** Rate of the time grid the bumps are sampled on, Hz. @defaultValue 50 */
  sampleRate?: number;
  /** End of the post-event support, seconds. Ignored when `lastPeakSec` is set. @defaultValue 3 */
  postSec?: number;
  /** Number of post-event bumps, spaced evenly in log(t + c). @defaultValue 8 */
  nBumps?: number;
  /** Peak of the first post-event bump, seconds (≥ 0). @defaultValue 0 */
  firstPeakSec?: number;
  /**
   * Peak of the last post-event bump, seconds. When NaN (the default) it is derived so that the
   * last bump falls to zero exactly at `postSec`; when set, the support ends where the last bump
   * does. @defaultValue NaN
   */
  lastPeakSec?: number;
  /**
   * Offset c of the log-time axis log(t + c), seconds (> 0); small c → more log-like.
   * @defaultValue NaN (postSec / 6, or lastPeakSec / 6 when lastPeakSec is set)
   */
  logOffsetSec?: number;
  /** Pre-event support, seconds (a linear-time family of bumps before the event). @defaultValue 0 */
  preSec?: number;
  /** Number of pre-event bumps (used only when preSec > 0). @defaultValue 2 */
  nPreBumps?: number;
}

/** A sampled basis: row i is lag (lagStart + i) bins, i.e. lagsSec[i] seconds after the event. */
export interface RaisedCosineBasis {
  /** Lag of each row, seconds (negative before the event). */
  readonly lagsSec: Float64Array;
  /** Lag of row 0 in bins (≤ 0). */
  readonly lagStart: number;
  /** nLags × nBumps, row-major: bump j at lag i is basis.data[i * nBumps + j]. Pre-event bumps come first. */
  readonly basis: Matrix;
  /** Analytic peak time of each bump, seconds (same order as the columns). */
  readonly peaksSec: Float64Array;
  /** Spacing Δ of the post-event centres in log(t + c) and the offset c used. */
  readonly logSpacing: number;
  readonly logOffsetSec: number;
  readonly sampleRate: number;
}

const DEFAULTS = Object.freeze({
  sampleRate: 50,
  postSec: 3,
  nBumps: 8,
  firstPeakSec: 0,
  lastPeakSec: NaN,
  logOffsetSec: NaN,
  preSec: 0,
  nPreBumps: 2,
});

/** ½(1 + cos(clip(x, −π, π))): one raised-cosine bump in phase units. */
function bump(phase: number): number {
  if (phase <= -Math.PI || phase >= Math.PI) return 0;
  return 0.5 * (1 + Math.cos(phase));
}

/**
 * Raised-cosine temporal basis for event kernels: bumps evenly spaced in log time after the
 * event (fine resolution early, coarse late), plus optional linear-time bumps before it.
 *
 * Post-event bump j (j = 0 … N−1) is b_j(t) = ½(1 + cos(clip((log(t + c) − ctr_j)·π/(2Δ), −π, π)))
 * for t ≥ 0, with centres ctr_j = log(p₁ + c) + jΔ. Adjacent bumps are π/2 apart in phase, so
 * between the second and the second-to-last peak the bumps sum to exactly 2. With `lastPeakSec`
 * unset, Δ = (log(postSec + c) − log(p₁ + c))/(N + 1), so the last bump ends at `postSec`.
 * Pre-event bumps are the same shape on a linear axis: peaks at −Δₚ, −2Δₚ, …, −nPreΔₚ with
 * Δₚ = preSec/(nPre + 2), half-width 2Δₚ, so the earliest bump starts at −preSec.
 *
 * @returns The sampled basis (lags × bumps) on the grid of `sampleRate`, analytic peaks and Δ.
 * @throws {TuningforkError} TF_BAD_SAMPLE_RATE; TF_BAD_OPTION for non-positive sizes, a last
 *   peak not after the first, or a support shorter than one bin.
 *
 * Method: Pillow et al. (2008), Methods (log-scaled raised cosines), in the practical form of
 * INFERENCE.md §4.1.
 *
 * References
 * - Pillow, J. W., Shlens, J., Paninski, L., Sher, A., Litke, A. M., Chichilnisky, E. J. &
 *   Simoncelli, E. P. (2008). Spatio-temporal correlations and visual signalling in a complete
 *   neuronal population. Nature 454:995–999. doi:10.1038/nature07140
 *
 * @example
 * const b = raisedCosineBasis({ sampleRate: 100, nBumps: 6, firstPeakSec: 0.05, lastPeakSec: 1, logOffsetSec: 0.1 });
 * // b.peaksSec ≈ [0.05, 0.123435, 0.232822, 0.395761, 0.638469, 1.0]
 */
export function raisedCosineBasis(options: RaisedCosineBasisOptions = {}): RaisedCosineBasis {
  const fn = 'raisedCosineBasis';
  const o = resolveOptions(fn, DEFAULTS, options);
  const rate = checkSampleRate(fn, o.sampleRate);
  const nPost = checkInteger(fn, 'nBumps', o.nBumps, 1);
  const p1 = checkNonNegative(fn, 'firstPeakSec', o.firstPeakSec);
  const preSec = checkNonNegative(fn, 'preSec', o.preSec);
  const nPre = preSec > 0 ? checkInteger(fn, 'nPreBumps', o.nPreBumps, 1) : 0;
  const lastGiven = !Number.isNaN(o.lastPeakSec);
  const postSec = lastGiven ? NaN : checkPositive(fn, 'postSec', o.postSec);
  const c = Number.isNaN(o.logOffsetSec)
    ? (lastGiven ? checkPositive(fn, 'lastPeakSec', o.lastPeakSec) : postSec) / 6
    : checkPositive(fn, 'logOffsetSec', o.logOffsetSec);
  const u1 = Math.log(p1 + c);
  let delta: number;
  let supportEnd: number;
  if (lastGiven) {
    const pN = checkPositive(fn, 'lastPeakSec', o.lastPeakSec);
    if (nPost > 1 && !(pN > p1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: lastPeakSec (${pN}) must be greater than firstPeakSec (${p1}) when nBumps > 1.`, { lastPeakSec: pN, firstPeakSec: p1 });
    }
    // One bump: give it the width it would have as the only member of a family ending at pN.
    delta = nPost > 1 ? (Math.log(pN + c) - u1) / (nPost - 1) : Math.max(Math.log(pN + c) - u1, Math.log(2)) / 2;
    supportEnd = Math.exp(u1 + (nPost - 1) * delta + 2 * delta) - c;
  } else {
    if (!(postSec > p1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: postSec (${postSec}) must be greater than firstPeakSec (${p1}).`, { postSec, firstPeakSec: p1 });
    }
    delta = (Math.log(postSec + c) - u1) / (nPost + 1);
    supportEnd = postSec;
  }
  const preDelta = nPre > 0 ? preSec / (nPre + 2) : 0;
  const lagStart = nPre > 0 ? -Math.floor(preSec * rate + 1e-9) : 0;
  const lagEnd = Math.floor(supportEnd * rate + 1e-9);
  const nLags = lagEnd - lagStart + 1;
  if (nLags < 2) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: the kernel support (${(nLags / rate).toFixed(4)} s) is shorter than two bins at ${rate} Hz; lengthen postSec or raise sampleRate.`, { nLags, sampleRate: rate });
  }
  const nCols = nPre + nPost;
  const data = new Float64Array(nLags * nCols);
  const lagsSec = new Float64Array(nLags);
  const peaks = new Float64Array(nCols);
  for (let j = 0; j < nPre; j++) peaks[j] = -(nPre - j) * preDelta;
  for (let j = 0; j < nPost; j++) peaks[nPre + j] = Math.exp(u1 + j * delta) - c;
  for (let i = 0; i < nLags; i++) {
    const t = (lagStart + i) / rate;
    lagsSec[i] = t;
    const row = i * nCols;
    for (let j = 0; j < nPre; j++) data[row + j] = bump(((t - peaks[j]!) * Math.PI) / (2 * preDelta));
    if (t >= 0) {
      const u = Math.log(t + c);
      for (let j = 0; j < nPost; j++) data[row + nPre + j] = bump(((u - (u1 + j * delta)) * Math.PI) / (2 * delta));
    }
  }
  return {
    lagsSec, lagStart, basis: { data, rows: nLags, cols: nCols }, peaksSec: peaks,
    logSpacing: delta, logOffsetSec: c, sampleRate: rate,
  };
}

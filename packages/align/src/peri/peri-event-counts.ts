import {
  TuningforkError, checkFinite, checkOneOf, checkPositive, resolveOptions, toFloat64,
} from '@tuningfork/core';
import type { ResultWarning, SpikeTrain } from '@tuningfork/core';
import {
  ExclusionLog, applyBaseline, competingRange, countPerColumn, lowerBound, maskCompeting, sortedCompeting, windowGrid,
} from '../internal/peri-common.js';
import { checkEventTimes, checkInterval, checkNumberArray } from '../internal/validate.js';
import type { PeriEventResult } from './peri-event-matrix.js';

/** Options of {@link periEventCounts}. */
export interface PeriEventCountsOptions {
  /** Seconds before each event. @defaultValue 1 */
  preSec?: number;
  /** Seconds after each event. @defaultValue 2 */
  postSec?: number;
  /** Bin width, seconds. @defaultValue 0.01 */
  binSec?: number;
  /** Cell values: spike counts, or rates in Hz (count / binSec). @defaultValue 'count' */
  units?: 'count' | 'rate';
  /** Recording span [start, end] in seconds; windows must lie inside it. null: unknown (not checked, with a warning). @defaultValue null */
  recordingSec?: readonly [number, number] | null;
  /** Events whose window leaves `recordingSec`: leave out, pad with NaN, or throw. @defaultValue 'drop' */
  edges?: 'drop' | 'nan' | 'error';
  /** Per-row baseline over the baseline bins. @defaultValue 'none' */
  baseline?: 'none' | 'subtract' | 'zscore';
  /** Baseline window [start, end) relative to the anchor; 'pre' is [−preSec, 0). @defaultValue 'pre' */
  baselineSec?: 'pre' | readonly [number, number];
  /** Per-event baseline anchors (same length as events); null anchors at the event. @defaultValue null */
  baselineAnchors?: ArrayLike<number> | null;
  /** Other events that must not fall in a window (NaN ignored). @defaultValue null */
  competing?: ArrayLike<number> | null;
  /** Window checked for competing events; 'window' is [−preSec, postSec). @defaultValue 'window' */
  competingSec?: 'window' | readonly [number, number];
  /** Leave such events out, or NaN-mask bins from the competing event on. @defaultValue 'exclude' */
  competingAction?: 'exclude' | 'mask';
}

const DEFAULTS = Object.freeze({
  preSec: 1,
  postSec: 2,
  binSec: 0.01,
  units: 'count' as 'count' | 'rate',
  recordingSec: null as readonly [number, number] | null,
  edges: 'drop' as 'drop' | 'nan' | 'error',
  baseline: 'none' as 'none' | 'subtract' | 'zscore',
  baselineSec: 'pre' as 'pre' | readonly [number, number],
  baselineAnchors: null as ArrayLike<number> | null,
  competing: null as ArrayLike<number> | null,
  competingSec: 'window' as 'window' | readonly [number, number],
  competingAction: 'exclude' as 'exclude' | 'mask',
});

/** Histogram spikes at te + [k0·bin, k1·bin) into out[o … o + k1 − k0). */
function binSpikes(spikes: Float64Array, te: number, k0: number, k1: number, bin: number, scale: number, out: Float64Array, o: number): void {
  const m = k1 - k0;
  for (let c = 0; c < m; c++) out[o + c] = 0;
  const start = te + k0 * bin;
  const end = te + k1 * bin;
  for (let s = lowerBound(spikes, start); s < spikes.length; s++) {
    const t = spikes[s]!;
    if (t >= end) break;
    let c = Math.floor((t - te) / bin) - k0;
    if (c < 0) c = 0; // float rounding at the first edge
    if (c >= m) c = m - 1;
    out[o + c] = out[o + c]! + scale;
  }
}

/**
 * Peri-event spike histogram: spike counts (or rates) of one unit in bins around each event.
 *
 * Bin c of a row covers `[te + r_c, te + r_c + binSec)` with `r = arange(−nPre, nPost)·binSec`,
 * `nPre = round(preSec / binSec)`, `nPost = round(postSec / binSec)`; `offsets` are the bin
 * starts. Exclusions, competing events and baselines behave as in periEventMatrix (reasons kept
 * in `excluded`). Windows are checked against `recordingSec`; without it nothing is checked and a
 * `recording-bounds-unknown` warning says so, since empty bins past the end of a recording would
 * read as zero firing.
 *
 * @param spikes - Spike times of one unit (seconds, sorted ascending), or a SpikeTrain.
 * @param events - Event times, strictly increasing among finite values; NaN = did not occur.
 * @returns The same shape as periEventMatrix: `{ data, rows, cols, offsets, kept, sampleRate
 *   (= 1 / binSec), excluded, nPerColumn, warnings }`.
 * @throws {TuningforkError} TF_BAD_EVENTS (unsorted spikes; unsorted, duplicate or infinite
 *   events); TF_WINDOW_OUT_OF_RANGE (window longer than the recording, or `edges: 'error'`);
 *   TF_SHAPE_MISMATCH; TF_BAD_OPTION / TF_UNKNOWN_OPTION.
 */
export function periEventCounts(spikes: SpikeTrain | ArrayLike<number>, events: ArrayLike<number>, options: PeriEventCountsOptions = {}): PeriEventResult {
  const fn = 'periEventCounts';
  const o = resolveOptions(fn, DEFAULTS, options);
  const preSec = checkFinite(fn, 'preSec', o.preSec);
  const postSec = checkFinite(fn, 'postSec', o.postSec);
  const bin = checkPositive(fn, 'binSec', o.binSec);
  const units = checkOneOf(fn, 'units', o.units, ['count', 'rate'] as const);
  const edges = checkOneOf(fn, 'edges', o.edges, ['drop', 'nan', 'error'] as const);
  const baseline = checkOneOf(fn, 'baseline', o.baseline, ['none', 'subtract', 'zscore'] as const);
  const competingAction = checkOneOf(fn, 'competingAction', o.competingAction, ['exclude', 'mask'] as const);
  const rate = 1 / bin;
  const { nPre, cols, offsets } = windowGrid(preSec, postSec, rate);
  if (cols <= 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: the window [-${preSec}, ${postSec}) s holds no ${bin} s bin.`, { fn });
  }
  const times = 'times' in (spikes as SpikeTrain) ? (spikes as SpikeTrain).times : toFloat64(checkNumberArray(fn, 'spikes', spikes));
  for (let i = 1; i < times.length; i++) {
    if (!(times[i]! >= times[i - 1]!)) {
      throw new TuningforkError('TF_BAD_EVENTS', `${fn}: spike ${i} at t=${times[i]} s precedes spike ${i - 1} at t=${times[i - 1]} s; spike times must be sorted and finite.`, { fn, index: i });
    }
  }
  const ev = toFloat64(checkNumberArray(fn, 'events', events));
  checkEventTimes(fn, 'events', ev, true);
  const rec = o.recordingSec === null ? null : checkInterval(fn, 'recordingSec', o.recordingSec);
  if (rec !== null && preSec + postSec > rec[1] - rec[0]) {
    throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: the window [-${preSec}, ${postSec}) s is longer than the recording (${rec[1] - rec[0]} s). Shorten preSec/postSec.`, { fn });
  }
  let bk0 = 0;
  let bk1 = 0;
  let anchors: Float64Array | null = null;
  if (baseline !== 'none') {
    const [ba, bb] = o.baselineSec === 'pre' ? [-preSec, 0] : checkInterval(fn, 'baselineSec', o.baselineSec);
    bk0 = Math.round(ba * rate);
    bk1 = Math.round(bb * rate);
    if (bk1 - bk0 < (baseline === 'zscore' ? 2 : 1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: baseline window [${ba}, ${bb}) s holds ${bk1 - bk0} bin(s); '${baseline}' needs at least ${baseline === 'zscore' ? 2 : 1}.`, { fn });
    }
    if (o.baselineAnchors !== null) {
      anchors = toFloat64(checkNumberArray(fn, 'baselineAnchors', o.baselineAnchors));
      if (anchors.length !== ev.length) {
        throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: baselineAnchors has ${anchors.length} entries, events has ${ev.length}.`, { fn });
      }
    }
  }
  const comp = sortedCompeting(fn, o.competing);
  const [ca, cb] = o.competingSec === 'window' ? [-preSec, postSec] : checkInterval(fn, 'competingSec', o.competingSec);
  const selfTol = 1e-9;
  const scale = units === 'rate' ? rate : 1;
  const eps = 1e-9;
  const inRec = (a: number, b: number) => rec === null || (a >= rec[0] - eps && b <= rec[1] + eps);

  const excluded = new ExclusionLog();
  const data = new Float64Array(ev.length * cols);
  const bVals = new Float64Array(Math.max(0, bk1 - bk0));
  const kept: number[] = [];
  let rows = 0;
  let padded = 0;
  let masked = 0;
  let zeroSd = 0;
  let baselineNanRows = 0;
  for (let e = 0; e < ev.length; e++) {
    const te = ev[e]!;
    if (te !== te) {
      excluded.add(e, 'missing-time');
      continue;
    }
    let compLo = 0;
    let compHi = 0;
    if (comp.length > 0) {
      const cr = competingRange(comp, te, ca, cb, selfTol);
      if (cr.any && competingAction === 'exclude') {
        excluded.add(e, 'competing-event');
        continue;
      }
      compLo = cr.lo;
      compHi = cr.any ? cr.hi : cr.lo;
    }
    const wStart = te - nPre * bin;
    const wEnd = te + (cols - nPre) * bin;
    const inside = inRec(wStart, wEnd);
    if (!inside) {
      if (edges === 'error') {
        throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: event ${e} at t=${te} s needs [${wStart}, ${wEnd}) s, outside the recording [${rec![0]}, ${rec![1]}] s. Pass { edges: 'drop' } or { edges: 'nan' }.`, { fn, index: e, time: te });
      }
      if (edges === 'drop') {
        excluded.add(e, 'outside-recording');
        continue;
      }
    }
    let bOk = true;
    if (baseline !== 'none') {
      const anchor = anchors === null ? te : anchors[e]!;
      if (anchor !== anchor) {
        excluded.add(e, 'missing-baseline-anchor');
        continue;
      }
      if (!inRec(anchor + bk0 * bin, anchor + bk1 * bin)) {
        if (edges === 'error') {
          throw new TuningforkError('TF_WINDOW_OUT_OF_RANGE', `${fn}: the baseline window of event ${e} (anchor t=${anchor} s) leaves the recording. Pass { edges: 'drop' }.`, { fn, index: e, time: anchor });
        }
        if (edges === 'drop') {
          excluded.add(e, 'baseline-outside-recording');
          continue;
        }
        bOk = false;
      } else {
        binSpikes(times, anchor, bk0, bk1, bin, scale, bVals, 0);
      }
    }
    const off = rows * cols;
    binSpikes(times, te, -nPre, cols - nPre, bin, scale, data, off);
    const row = data.subarray(off, off + cols);
    if (!inside && rec !== null) {
      for (let c = 0; c < cols; c++) {
        const a = te + offsets[c]!;
        if (a < rec[0] - eps || a + bin > rec[1] + eps) row[c] = NaN;
      }
      padded++;
    }
    if (baseline !== 'none') {
      if (!bOk) {
        row.fill(NaN);
        baselineNanRows++;
      } else if (!applyBaseline(row, bVals, baseline)) {
        zeroSd++;
      }
    }
    if (compHi > compLo) masked += maskCompeting(row, offsets, comp, compLo, compHi, te, selfTol);
    kept.push(e);
    rows++;
  }
  const out = data.slice(0, rows * cols);
  const warnings: ResultWarning[] = [...excluded.warning(fn)];
  if (rec === null) warnings.push({ code: 'recording-bounds-unknown', message: `${fn}: recordingSec was not given, so windows were not checked against the recording; bins past its end read as zero spikes.` });
  if (padded > 0) warnings.push({ code: 'padded-with-nan', message: `${fn}: ${padded} row(s) reach past the recording and were padded with NaN (edges: 'nan').`, details: { rows: padded } });
  if (baselineNanRows > 0) warnings.push({ code: 'baseline-outside-recording', message: `${fn}: ${baselineNanRows} row(s) are NaN because their baseline window leaves the recording.`, details: { rows: baselineNanRows } });
  if (zeroSd > 0) warnings.push({ code: 'baseline-zero-sd', message: `${fn}: ${zeroSd} row(s) are NaN because their baseline sd is 0 (z-score undefined).`, details: { rows: zeroSd } });
  if (masked > 0) warnings.push({ code: 'competing-masked', message: `${fn}: ${masked} bin(s) were NaN-masked around competing events.`, details: { cells: masked } });
  return {
    data: out, rows, cols, offsets, kept: Uint32Array.from(kept), sampleRate: rate,
    excluded: excluded.result(), nPerColumn: countPerColumn(out, rows, cols), warnings,
  };
}

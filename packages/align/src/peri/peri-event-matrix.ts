import {
  TuningforkError, checkFinite, checkOneOf, checkPositive, resolveOptions, toFloat64,
} from '@tuningfork/core';
import type { PeriEventMatrix, ResultWarning, UniformSignal } from '@tuningfork/core';
import { fillLinear, fillNearest, snap } from '../internal/interp.js';
import {
  ExclusionLog, applyBaseline, competingRange, maskCompeting, sortedCompeting, windowGrid,
} from '../internal/peri-common.js';
import type { PeriExclusions } from '../internal/peri-common.js';
import { checkEventTimes, checkInterval, checkNumberArray, checkSignal } from '../internal/validate.js';

export type { PeriExclusions, PeriExclusionReason } from '../internal/peri-common.js';

/** Options of {@link periEventMatrix}. */
export interface PeriEventOptions {
  /** Seconds of signal before each event. @defaultValue 2 */
  preSec?: number;
  /** Seconds of signal after each event. @defaultValue 5 */
  postSec?: number;
  /** Column rate, Hz: `'signal'` keeps the signal's rate; a number resamples (linear interpolation). @defaultValue 'signal' */
  sampleRate?: 'signal' | number;
  /** How values between samples are read: straight line between neighbours (numpy.interp) or the nearest sample. @defaultValue 'linear' */
  method?: 'linear' | 'nearest';
  /** Events whose window leaves the recording: leave them out, pad with NaN, or throw. @defaultValue 'drop' */
  edges?: 'drop' | 'nan' | 'error';
  /** Per-row baseline: none, subtract the baseline mean, or z-score by the baseline mean and sd (n − 1). @defaultValue 'none' */
  baseline?: 'none' | 'subtract' | 'zscore';
  /** Baseline window [start, end) in seconds relative to the anchor; `'pre'` is [−preSec, 0). @defaultValue 'pre' */
  baselineSec?: 'pre' | readonly [number, number];
  /** Per-event anchor times of the baseline window (e.g. each trial's cue), same length as events; null anchors at the event. @defaultValue null */
  baselineAnchors?: ArrayLike<number> | null;
  /** Times of other events that must not fall inside a window (NaN entries ignored); null for none. @defaultValue null */
  competing?: ArrayLike<number> | null;
  /** Window [start, end) relative to the event checked for competing events; `'window'` is [−preSec, postSec). @defaultValue 'window' */
  competingSec?: 'window' | readonly [number, number];
  /** With competing events: leave the event out, or NaN-mask the row from the competing event onward (backward for earlier ones). @defaultValue 'exclude' */
  competingAction?: 'exclude' | 'mask';
  /** Preallocated output (length ≥ rows × cols) reused across calls; the result's data is then a view into it. null allocates. @defaultValue null */
  out?: Float64Array | null;
  /** NaN samples inside a kept window: keep them (the row holds NaN where it reads them), leave the event out, or throw; 'drop' and 'error' look at every sample the window spans. @defaultValue 'propagate' */
  nan?: 'propagate' | 'drop' | 'error';
}

/** Result of {@link periEventMatrix}: the matrix plus what was left out and why. */
export interface PeriEventResult extends PeriEventMatrix {
  /** Rate of the columns, Hz. */
  readonly sampleRate: number;
  /** Events without a row, with reasons, in input order. */
  readonly excluded: PeriExclusions;
  /** Non-NaN rows per column. */
  readonly nPerColumn: Uint32Array;
  /** Documented repairs and caveats (exclusions, NaN rows, masking, aliasing). */
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({
  preSec: 2,
  postSec: 5,
  sampleRate: 'signal' as 'signal' | number,
  method: 'linear' as 'linear' | 'nearest',
  edges: 'drop' as 'drop' | 'nan' | 'error',
  baseline: 'none' as 'none' | 'subtract' | 'zscore',
  baselineSec: 'pre' as 'pre' | readonly [number, number],
  baselineAnchors: null as ArrayLike<number> | null,
  competing: null as ArrayLike<number> | null,
  competingSec: 'window' as 'window' | readonly [number, number],
  competingAction: 'exclude' as 'exclude' | 'mask',
  nan: 'propagate' as 'propagate' | 'drop' | 'error',
  out: null as Float64Array | null,
});

/**
 * Peri-event matrix (PETH rows) of a uniformly sampled signal: one row per kept event, one column
 * per time bin from −preSec to +postSec.
 *
 * Columns sit on the grid `r = arange(−nPre, nPost) / rate` with `nPre = round(preSec·rate)` and
 * `nPost = round(postSec·rate)`, where `rate` is the signal's rate or `options.sampleRate`. Row k
 * holds the signal at `events[kept[k]] + r`, read by linear interpolation between neighbouring
 * samples (numpy.interp's rule; positions within 1e-9 samples of a sample read that sample
 * exactly) or by the nearest sample (`method: 'nearest'`, ties up as core.timeToIndex). Linear
 * interpolation at a lower rate does not low-pass first: filter the signal before downsampling
 * (a `downsampled-without-filter` warning says so).
 *
 * Exclusions keep their reason in `excluded`: NaN event times (`missing-time`, e.g. trials without
 * a choice), windows leaving the recording (`outside-recording`, per `edges`), competing events in
 * the window (`competing-event`, per `competingAction`; an event within half a sample of the
 * aligned event is ignored, so the aligned list itself can be passed), NaN samples (`nan-in-window`
 * with `nan: 'drop'`), and baseline problems.
 *
 * Baseline: 'subtract' removes each row's mean over the baseline window, 'zscore' also divides by
 * its sample sd (divisor n − 1); the window is [−preSec, 0) relative to the event, or
 * `baselineSec` relative to `baselineAnchors[k]` (e.g. pre-cue baseline for outcome-aligned rows).
 * A zero baseline sd makes that row NaN and adds a `baseline-zero-sd` warning.
 *
 * NaN: with `nan: 'propagate'` a NaN sample makes the interpolated values that touch it NaN; a NaN
 * in the baseline window makes the whole row NaN. Padding from `edges: 'nan'` is not a NaN sample.
 *
 * @param signal - Uniform signal (values, Hz, t0 in seconds).
 * @param events - Event times, seconds, strictly increasing among finite values; NaN = did not occur.
 * @returns `{ data, rows, cols, offsets, kept, sampleRate, excluded, nPerColumn, warnings }`,
 *   data row-major rows × cols; `offsets[c]` seconds relative to the event.
 * @throws {TuningforkError} TF_BAD_EVENTS (unsorted, duplicate or infinite event times, naming
 *   the index); TF_WINDOW_OUT_OF_RANGE (window longer than the recording, or an event's window
 *   leaves it with `edges: 'error'`); TF_NON_FINITE (NaN in a window with `nan: 'error'`);
 *   TF_SHAPE_MISMATCH (baselineAnchors length); TF_BAD_OPTION / TF_UNKNOWN_OPTION for options.
 *
 * @example
 * ```ts
 * const s = { values: Float64Array.from({ length: 400 }, (_, i) => i / 20), sampleRate: 20, t0: 0 };
 * const m = periEventMatrix(s, Float64Array.of(12.34), { preSec: 2, postSec: 5 });
 * // m.cols = 140; m.data[0] ≈ 10.34, m.data[40] ≈ 12.34, m.data[139] ≈ 17.29
 * ```
 */
export function periEventMatrix(signal: UniformSignal, events: ArrayLike<number>, options: PeriEventOptions = {}): PeriEventResult {
  const fn = 'periEventMatrix';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkSignal(fn, 'signal', signal);
  const preSec = checkFinite(fn, 'preSec', o.preSec);
  const postSec = checkFinite(fn, 'postSec', o.postSec);
  if (!(preSec + postSec > 0)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: preSec + postSec must be > 0, got ${preSec} + ${postSec}.`, { fn, preSec, postSec });
  }
  const rate = o.sampleRate === 'signal' ? signal.sampleRate : checkPositive(fn, 'sampleRate', o.sampleRate);
  const method = checkOneOf(fn, 'method', o.method, ['linear', 'nearest'] as const);
  const edges = checkOneOf(fn, 'edges', o.edges, ['drop', 'nan', 'error'] as const);
  const baseline = checkOneOf(fn, 'baseline', o.baseline, ['none', 'subtract', 'zscore'] as const);
  const nanPolicy = checkOneOf(fn, 'nan', o.nan, ['propagate', 'drop', 'error'] as const);
  const competingAction = checkOneOf(fn, 'competingAction', o.competingAction, ['exclude', 'mask'] as const);
  const ev = toFloat64(checkNumberArray(fn, 'events', events));
  checkEventTimes(fn, 'events', ev, true);

  const x = signal.values;
  const n = x.length;
  const fsIn = signal.sampleRate;
  const durationSec = (n - 1) / fsIn;
  if (preSec + postSec > durationSec) {
    throw new TuningforkError(
      'TF_WINDOW_OUT_OF_RANGE',
      `${fn}: the window [-${preSec}, ${postSec}) s lasts ${preSec + postSec} s, longer than the recording (${durationSec} s from t=${signal.t0} s). Shorten preSec/postSec.`,
      { fn, preSec, postSec, durationSec },
    );
  }
  const { nPre, cols, offsets } = windowGrid(preSec, postSec, rate);
  const step = fsIn / rate;

  // Baseline window grid and anchors.
  let bGrid: Float64Array | null = null;
  let anchors: Float64Array | null = null;
  if (baseline !== 'none') {
    const [ba, bb] = o.baselineSec === 'pre' ? [-preSec, 0] : checkInterval(fn, 'baselineSec', o.baselineSec);
    const k0 = Math.round(ba * rate);
    const k1 = Math.round(bb * rate);
    const nb = k1 - k0;
    if (nb < (baseline === 'zscore' ? 2 : 1)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: baseline window [${ba}, ${bb}) s holds ${nb} sample(s) at ${rate} Hz; '${baseline}' needs at least ${baseline === 'zscore' ? 2 : 1}.`, { fn, baselineSec: [ba, bb] });
    }
    bGrid = new Float64Array(nb);
    for (let k = 0; k < nb; k++) bGrid[k] = (k0 + k) / rate;
    if (o.baselineAnchors !== null) {
      anchors = toFloat64(checkNumberArray(fn, 'baselineAnchors', o.baselineAnchors));
      if (anchors.length !== ev.length) {
        throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: baselineAnchors has ${anchors.length} entries, events has ${ev.length}; give one anchor per event.`, { fn });
      }
    }
  }

  // Competing events.
  const comp = sortedCompeting(fn, o.competing);
  const [ca, cb] = o.competingSec === 'window' ? [-preSec, postSec] : checkInterval(fn, 'competingSec', o.competingSec);
  const selfTol = 0.5 / fsIn;

  const fill = method === 'linear' ? fillLinear : fillNearest;
  const inRange = (pFirst: number, pLast: number): boolean =>
    method === 'linear' ? snap(pFirst) >= 0 && snap(pLast) <= n - 1 : Math.floor(snap(pFirst) + 0.5) >= 0 && Math.floor(snap(pLast) + 0.5) <= n - 1;

  const excluded = new ExclusionLog();
  const bVals = bGrid === null ? null : new Float64Array(bGrid.length);
  // NaN prefix counts of the signal, needed only to leave out rows with NaN before filling.
  let nanPrefix: Int32Array | null = null;
  if (nanPolicy !== 'propagate') {
    nanPrefix = new Int32Array(n + 1);
    for (let i = 0; i < n; i++) nanPrefix[i + 1] = nanPrefix[i]! + (x[i] !== x[i] ? 1 : 0);
  }
  const nanBetween = (pA: number, pB: number): number => {
    // NaN samples that positions pA … pB (snapped, clipped to the record) read.
    const lo = Math.max(0, method === 'linear' ? Math.floor(snap(pA)) : Math.floor(snap(pA) + 0.5));
    const hi = Math.min(n - 1, method === 'linear' ? Math.ceil(snap(pB)) : Math.floor(snap(pB) + 0.5));
    return hi < lo ? 0 : nanPrefix![hi + 1]! - nanPrefix![lo]!;
  };

  // Pass 1: decide which events get a row (no matrix memory touched yet).
  const keptList: number[] = [];
  const rowInside: boolean[] = [];
  const rowBaselineOk: boolean[] = [];
  const rowComp: number[] = []; // lo, hi pairs into comp
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
    const p0 = (te - signal.t0) * fsIn - nPre * step;
    const pLast = p0 + (cols - 1) * step;
    const inside = inRange(p0, pLast);
    if (!inside) {
      if (edges === 'error') {
        const tFirst = te - nPre / rate;
        const tLast = te + (cols - 1 - nPre) / rate;
        throw new TuningforkError(
          'TF_WINDOW_OUT_OF_RANGE',
          `${fn}: event ${e} at t=${te} s needs signal from t=${tFirst} s to t=${tLast} s, but the recording covers t=${signal.t0} s to t=${signal.t0 + durationSec} s. Pass { edges: 'drop' } to skip such events or { edges: 'nan' } to pad with NaN.`,
          { fn, index: e, time: te },
        );
      }
      if (edges === 'drop') {
        excluded.add(e, 'outside-recording');
        continue;
      }
    }
    let bOk = true;
    let bNaN = 0;
    if (bGrid !== null) {
      const anchor = anchors === null ? te : anchors[e]!;
      if (anchor !== anchor) {
        excluded.add(e, 'missing-baseline-anchor');
        continue;
      }
      const q0 = (anchor + bGrid[0]! - signal.t0) * fsIn;
      const qLast = (anchor + bGrid[bGrid.length - 1]! - signal.t0) * fsIn;
      if (!inRange(q0, qLast)) {
        if (edges === 'error') {
          throw new TuningforkError(
            'TF_WINDOW_OUT_OF_RANGE',
            `${fn}: the baseline window of event ${e} (anchor t=${anchor} s) leaves the recording (t=${signal.t0} s to t=${signal.t0 + durationSec} s). Pass { edges: 'drop' } to skip such events.`,
            { fn, index: e, time: anchor },
          );
        }
        if (edges === 'drop') {
          excluded.add(e, 'baseline-outside-recording');
          continue;
        }
        bOk = false;
      } else if (nanPrefix !== null) {
        bNaN = nanBetween(q0, qLast);
      }
    }
    if (nanPrefix !== null) {
      const nanCount = nanBetween(p0, pLast) + bNaN;
      if (nanCount > 0) {
        if (nanPolicy === 'error') {
          throw new TuningforkError(
            'TF_NON_FINITE',
            `${fn}: the window of event ${e} at t=${te} s reads ${nanCount} NaN sample(s)${bNaN > 0 ? ' (some in the baseline window)' : ''}. Pass { nan: 'drop' } to leave such events out or { nan: 'propagate' } to keep NaN.`,
            { fn, index: e, time: te },
          );
        }
        excluded.add(e, 'nan-in-window');
        continue;
      }
    }
    keptList.push(e);
    rowInside.push(inside);
    rowBaselineOk.push(bOk);
    rowComp.push(compLo, compHi);
  }

  // Pass 2: fill the kept rows straight into the result.
  const rows = keptList.length;
  let data: Float64Array;
  if (o.out === null) {
    data = new Float64Array(rows * cols);
  } else {
    if (!(o.out instanceof Float64Array) || o.out.length < rows * cols) {
      throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: out must be a Float64Array of at least rows × cols = ${rows} × ${cols} = ${rows * cols} values, got ${o.out instanceof Float64Array ? o.out.length : typeof o.out}.`, { fn, needed: rows * cols });
    }
    data = o.out.subarray(0, rows * cols);
  }
  let nanRows = 0;
  let zeroSd = 0;
  let padded = 0;
  let masked = 0;
  let baselineNanRows = 0;
  const nanRowList: number[] = [];
  for (let r = 0; r < rows; r++) {
    const e = keptList[r]!;
    const te = ev[e]!;
    const off = r * cols;
    const p0 = (te - signal.t0) * fsIn - nPre * step;
    let hasNaN = fill(x, p0, step, cols, data, off);
    const row = data.subarray(off, off + cols);
    const inside = rowInside[r]!;
    if (!inside) padded++;
    let rowNaN = hasNaN || !inside;
    if (bGrid !== null && bVals !== null) {
      if (!rowBaselineOk[r]) {
        row.fill(NaN);
        baselineNanRows++;
        rowNaN = true;
      } else {
        const anchor = anchors === null ? te : anchors[e]!;
        fill(x, (anchor + bGrid[0]! - signal.t0) * fsIn, step, bGrid.length, bVals, 0);
        for (let k = 0; k < bVals.length; k++) if (bVals[k] !== bVals[k]) hasNaN = rowNaN = true;
        if (!applyBaseline(row, bVals, baseline as 'subtract' | 'zscore')) {
          zeroSd++;
          rowNaN = true;
        }
      }
    }
    if (hasNaN) nanRows++;
    const compLo = rowComp[2 * r]!;
    const compHi = rowComp[2 * r + 1]!;
    if (compHi > compLo) {
      masked += maskCompeting(row, offsets, comp, compLo, compHi, te, selfTol);
      rowNaN = true;
    }
    if (rowNaN) nanRowList.push(r);
  }
  // Non-NaN rows per column: every row counts, minus NaN cells of the rows that may hold them.
  const nPerColumn = new Uint32Array(cols).fill(rows);
  for (const r of nanRowList) {
    const o = r * cols;
    for (let c = 0; c < cols; c++) if (data[o + c] !== data[o + c]) nPerColumn[c]!--;
  }

  const out = data;
  const warnings: ResultWarning[] = [...excluded.warning(fn)];
  if (nanRows > 0) warnings.push({ code: 'nan-in-window', message: `${fn}: ${nanRows} kept row(s) contain NaN samples (nan: 'propagate').`, details: { rows: nanRows } });
  if (padded > 0) warnings.push({ code: 'padded-with-nan', message: `${fn}: ${padded} row(s) reach past the recording and were padded with NaN (edges: 'nan').`, details: { rows: padded } });
  if (baselineNanRows > 0) warnings.push({ code: 'baseline-outside-recording', message: `${fn}: ${baselineNanRows} row(s) are NaN because their baseline window leaves the recording (edges: 'nan').`, details: { rows: baselineNanRows } });
  if (zeroSd > 0) warnings.push({ code: 'baseline-zero-sd', message: `${fn}: ${zeroSd} row(s) are NaN because their baseline sd is 0 (z-score undefined).`, details: { rows: zeroSd } });
  if (masked > 0) warnings.push({ code: 'competing-masked', message: `${fn}: ${masked} cell(s) were NaN-masked around competing events.`, details: { cells: masked } });
  if (rate < fsIn && method === 'linear') warnings.push({ code: 'downsampled-without-filter', message: `${fn}: columns at ${rate} Hz read a ${fsIn} Hz signal by linear interpolation without low-pass filtering; low-pass the signal first if it has power above ${rate / 2} Hz.`, details: { rate, signalRate: fsIn } });
  return {
    data: out, rows, cols, offsets, kept: Uint32Array.from(keptList), sampleRate: rate,
    excluded: excluded.result(), nPerColumn, warnings,
  };
}

/**
 * The bad-input catalogue: malformed or hostile inputs across every stage, each with the coded
 * error (TuningforkError.code) or the reported repair (a warning code in the result) it must give.
 * Never a silent NaN or a number where an error belongs. Run by catalogue.test.ts.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { makeEventTable, rng } from '@tuningfork/core';
import type { PhotometrySite, UniformSignal } from '@tuningfork/core';
import { loadSession, parseCsv, readEvents, readTrace, validateManifest } from '@tuningfork/io';
import { binSpikes, conditionSite, estimateSnr, fitControl, lockInDemodulate, sosfiltfilt, butterworth } from '@tuningfork/signal';
import { decodeBarcodes, fitClockMap, mapDeviceTimes, movementOnsets, periEventMatrix, lickBouts } from '@tuningfork/align';
import { adjustPValues, bootstrapTimecourse, clusterPermutationTest, significantRunsFromPValues } from '@tuningfork/stats';
import { choiceLogLikelihood, fitChoiceModel, rescorlaWagner } from '@tuningfork/learning';
import { designMatrix, fitPoissonGLM, fitRidgeCV, raisedCosineBasis } from '@tuningfork/encode';
import { periEventFigure, sessionReport } from '@tuningfork/report';
import { simulateSession } from '@tuningfork/simulate';
import { syncDeviceEvents } from 'tuningfork';

export interface BadInput {
  readonly id: string;
  readonly area: 'ingest' | 'manifest' | 'events' | 'alignment' | 'statistics' | 'models' | 'reports' | 'simulation';
  readonly what: string;
  /** Runs the call; returns its result (for repairs) or throws. */
  readonly run: () => unknown;
  /** The coded error it must throw, or the warning code its result must report. */
  readonly expect: { readonly code: string } | { readonly warning: string; readonly check?: (result: any) => void };
}

const dir = mkdtempSync(join(tmpdir(), 'tuningfork-bad-'));
const file = (name: string, text: string | Uint8Array) => {
  const p = join(dir, name);
  writeFileSync(p, text);
  return p;
};
const sig = (values: ArrayLike<number>, sampleRate = 100, t0 = 0): UniformSignal => ({ values: Float64Array.from(values), sampleRate, t0 });
const noise = (n: number, seed = 1) => { const r = rng(seed); return Float64Array.from({ length: n }, () => r.normal()); };
const site = (n = 4000): PhotometrySite => {
  const r = rng(2);
  const c = Float64Array.from({ length: n }, (_, i) => 1 + 0.05 * Math.sin(i / 50) + 0.002 * r.normal());
  return { name: 'site', signal: sig(c.map((v) => 2 * v + 0.01 * r.normal())), control: sig(c) };
};
const validManifest = () => ({
  schemaVersion: 1, session: 's1',
  files: [{ kind: 'events', path: 'events.csv' }],
});

export const CATALOGUE: readonly BadInput[] = [
  // ---- ingest ----
  { id: 'csv-empty-file', area: 'ingest', what: 'an empty trace file', run: () => readTrace(file('empty.csv', '')), expect: { code: 'TF_BAD_FILE' } },
  { id: 'csv-header-only', area: 'ingest', what: 'a header with no data rows', run: () => readTrace(file('header.csv', 'time,signal\n'), { channels: ['signal'] }), expect: { code: 'TF_TOO_FEW_SAMPLES' } },
  { id: 'csv-missing-column', area: 'ingest', what: 'a misspelled channel column', run: () => parseCsv('time,signl\n0,1\n', { columns: ['time', 'signal'] }), expect: { code: 'TF_MISSING_COLUMN' } },
  { id: 'csv-non-numeric', area: 'ingest', what: 'a non-numeric cell', run: () => parseCsv('time,signal\n0,1\n0.01,abc\n', { columns: ['time', 'signal'] }), expect: { code: 'TF_BAD_CELL' } },
  { id: 'csv-ragged-row', area: 'ingest', what: 'a row with too many fields', run: () => parseCsv('time,signal\n0,1\n0.01,2,3\n'), expect: { code: 'TF_BAD_FILE' } },
  { id: 'csv-unclosed-quote', area: 'ingest', what: 'an unclosed quoted field', run: () => parseCsv('time,name\n0,"cue\n'), expect: { code: 'TF_BAD_FILE' } },
  { id: 'csv-truncated-last-line', area: 'ingest', what: 'a file cut off in the middle of its last line', run: () => parseCsv('time,signal\n0,1\n0.01,2\n0.02'), expect: { warning: 'IO_TRUNCATED_LAST_LINE' } },
  { id: 'trace-non-monotonic', area: 'ingest', what: 'timestamps that go backwards', run: () => readTrace(file('back.csv', 'time,signal\n0,1\n0.01,2\n0.005,3\n0.02,4\n'), { channels: ['signal'] }), expect: { code: 'TF_IRREGULAR_SAMPLING' } },
  { id: 'trace-duplicate-time', area: 'ingest', what: 'a duplicated timestamp', run: () => readTrace(file('dup.csv', 'time,signal\n0,1\n0.01,2\n0.01,3\n0.02,4\n'), { channels: ['signal'] }), expect: { code: 'TF_IRREGULAR_SAMPLING' } },
  { id: 'trace-nan-run', area: 'ingest', what: 'a run of empty (missing) samples', run: () => readTrace(file('nan.csv', 'time,signal\n0,1\n0.01,\n0.02,\n0.03,4\n0.04,5\n'), { channels: ['signal'] }), expect: { warning: 'IO_NAN_RUNS' } },
  { id: 'trace-enormous-value', area: 'ingest', what: 'a value that overflows a double', run: () => parseCsv('time,signal\n0,1e400\n', { columns: ['time', { name: 'signal', finite: true }] }), expect: { code: 'TF_NON_FINITE' } },
  { id: 'events-unsorted', area: 'events', what: 'events out of time order', run: () => readEvents(file('unsorted.csv', 'time,name\n2,cue\n1,reward\n')), expect: { warning: 'IO_EVENTS_SORTED' } },
  { id: 'events-duplicated', area: 'events', what: 'the same event logged twice', run: () => readEvents(file('dupev.csv', 'time,name\n1,cue\n1,cue\n2,reward\n')), expect: { warning: 'IO_DUPLICATE_EVENTS' } },
  { id: 'events-non-finite-time', area: 'events', what: 'an event with a non-finite time', run: () => makeEventTable([1, Number.POSITIVE_INFINITY], ['cue', 'reward']), expect: { code: 'TF_BAD_EVENTS' } },
  { id: 'events-empty-name', area: 'events', what: 'an event without a name', run: () => makeEventTable([1], ['']), expect: { code: 'TF_BAD_EVENTS' } },
  { id: 'events-ms-as-seconds', area: 'events', what: 'events in ms declared as seconds fall outside the recording', run: () => periEventMatrix(sig(noise(1000)), Float64Array.of(1500, 2500), { preSec: 1, postSec: 1 }), expect: { warning: 'events-excluded', check: (r) => { if (r.rows !== 0) throw new Error('events beyond the recording must not give rows'); } } },
  // ---- manifest ----
  { id: 'manifest-not-object', area: 'manifest', what: 'a manifest that is a JSON array', run: () => validateManifest([]), expect: { code: 'TF_BAD_MANIFEST' } },
  { id: 'manifest-clock-unknown-line', area: 'manifest', what: 'a device clock whose sync line is not a continuous channel', run: () => validateManifest({ ...validManifest(), files: [{ kind: 'events', path: 'box.csv', clock: { syncEvent: 'sync', reference: { line: 'ttl' } } }] }), expect: { code: 'TF_BAD_MANIFEST' } },
  { id: 'device-events-no-sync', area: 'events', what: "device events without their sync events (clock.syncEvent misspelled)", run: () => syncDeviceEvents({ id: 's', start: 0, end: 10, photometry: [], units: [], continuous: {}, events: makeEventTable([1, 2], ['sync_in', 'sync_in']), deviceEvents: [{ source: 'box.csv', events: makeEventTable([1.1, 2.1, 3], ['sync', 'sync', 'cue']), clock: { syncEvent: 'sync_out', reference: { events: 'sync_in' }, barcodes: null } }] }), expect: { code: 'TF_SYNC_FAILED' } },
  { id: 'manifest-misspelled-key', area: 'manifest', what: "a misspelled key ('sesion')", run: () => validateManifest({ ...validManifest(), sesion: 'x' }), expect: { code: 'TF_BAD_MANIFEST' } },
  { id: 'manifest-wrong-version', area: 'manifest', what: 'an unknown schema version', run: () => validateManifest({ ...validManifest(), schemaVersion: 99 }), expect: { code: 'TF_BAD_MANIFEST' } },
  { id: 'manifest-bad-kind', area: 'manifest', what: "a file of unknown kind ('video')", run: () => validateManifest({ ...validManifest(), files: [{ kind: 'video', path: 'a.mp4' }] }), expect: { code: 'TF_BAD_MANIFEST' } },
  { id: 'manifest-missing-file', area: 'manifest', what: 'a manifest naming a file that does not exist', run: () => loadSession(file('m.json', JSON.stringify({ schemaVersion: 1, session: 's', files: [{ kind: 'events', path: 'nope.csv' }] }))), expect: { code: 'TF_BAD_FILE' } },
  { id: 'manifest-malformed-json', area: 'manifest', what: 'a manifest that is not valid JSON', run: () => loadSession(file('bad.json', '{ "schemaVersion": 1, ')), expect: { code: 'TF_BAD_MANIFEST' } },
  // ---- signal conditioning ----
  { id: 'signal-nan-run', area: 'alignment', what: 'a NaN run inside a photometry channel', run: () => { const s = site(); const v = Float64Array.from(s.signal.values); v.fill(NaN, 100, 120); return conditionSite({ ...s, signal: { ...s.signal, values: v } }); }, expect: { code: 'TF_NON_FINITE' } },
  { id: 'signal-unequal-channels', area: 'alignment', what: 'sensor and control of different lengths', run: () => { const s = site(); return conditionSite({ ...s, control: { ...s.control, values: s.control.values.subarray(1) } }); }, expect: { code: 'TF_SHAPE_MISMATCH' } },
  { id: 'signal-flat-control', area: 'alignment', what: 'a control channel with no variance', run: () => { const s = site(); return conditionSite({ ...s, control: { ...s.control, values: new Float64Array(s.control.values.length).fill(1) } }, { detrend: 'none' }); }, expect: { warning: 'NO_MOTION_CORRECTION', check: (r) => { if (r.motionCorrected) throw new Error('a flat control must not be used for correction'); } } },
  { id: 'signal-zero-rate', area: 'alignment', what: 'a sample rate of zero', run: () => sosfiltfilt(butterworth({ order: 4, cutoffHz: 10, sampleRate: 0 }), noise(100)), expect: { code: 'TF_BAD_SAMPLE_RATE' } },
  { id: 'signal-cutoff-above-nyquist', area: 'alignment', what: 'a low-pass cutoff above Nyquist', run: () => butterworth({ order: 4, cutoffHz: 80, sampleRate: 100 }), expect: { code: 'TF_BAD_OPTION' } },
  { id: 'signal-short-for-filter', area: 'alignment', what: 'a signal shorter than the filter padding', run: () => sosfiltfilt(butterworth({ order: 4, cutoffHz: 10, sampleRate: 100 }), noise(10)), expect: { code: 'TF_TOO_FEW_SAMPLES' } },
  { id: 'signal-lockin-swapped-drives', area: 'ingest', what: 'LED drives passed in another order than their carriers', run: () => { const fs = 10000; const n = 20000; const tone = (f: number, ph: number) => Float64Array.from({ length: n }, (_, i) => Math.sin(2 * Math.PI * f * (i / fs) + ph)); const det = tone(217, 0.3).map((v, i) => 2 * v + 0.7 * Math.sin(2 * Math.PI * 319 * (i / fs) + 1.1)); return lockInDemodulate(sig(det, fs), { carriersHz: [217, 319], references: [sig(tone(319, 1.1), fs), sig(tone(217, 0.3), fs)] }); }, expect: { code: 'TF_DEGENERATE_SIGNAL' } },
  { id: 'signal-snr-constant', area: 'ingest', what: 'SNR of a channel with no measurable noise (constant)', run: () => estimateSnr(sig(new Float64Array(2000).fill(5))), expect: { code: 'TF_DEGENERATE_SIGNAL' } },
  { id: 'signal-control-fit-nan', area: 'alignment', what: 'a control fit with NaN samples', run: () => fitControl(Float64Array.of(1, 2, NaN, 4), Float64Array.of(2, 4, 6, 8)), expect: { code: 'TF_NON_FINITE' } },
  { id: 'spikes-nan', area: 'alignment', what: 'a NaN spike time', run: () => binSpikes(Float64Array.of(0.3, NaN, 0.2), { binSec: 0.1, endSec: 1 }), expect: { code: 'TF_NON_FINITE' } },
  // ---- alignment ----
  { id: 'peri-window-too-long', area: 'alignment', what: 'a window longer than the recording', run: () => periEventMatrix(sig(noise(100)), Float64Array.of(0.5), { preSec: 5, postSec: 5, edges: 'error' }), expect: { code: 'TF_WINDOW_OUT_OF_RANGE' } },
  { id: 'peri-unsorted-events', area: 'alignment', what: 'event times out of order', run: () => periEventMatrix(sig(noise(1000)), Float64Array.of(3, 2), { preSec: 1, postSec: 1 }), expect: { code: 'TF_BAD_EVENTS' } },
  { id: 'peri-nan-event', area: 'alignment', what: 'a NaN event time (left out, reported)', run: () => periEventMatrix(sig(noise(1000)), Float64Array.of(2, NaN, 3), { preSec: 1, postSec: 1 }), expect: { warning: 'events-excluded', check: (r) => { if (r.rows !== 2) throw new Error(`rows ${r.rows} ≠ 2`); } } },
  { id: 'sync-too-few-pulses', area: 'alignment', what: 'too few sync pulses to fit a clock map', run: () => fitClockMap(Float64Array.of(1, 2), Float64Array.of(1.1, 2.1)), expect: { code: 'TF_SYNC_FAILED' } },
  { id: 'sync-ambiguous', area: 'alignment', what: 'perfectly periodic pulses (every match is ambiguous)', run: () => fitClockMap(Float64Array.from({ length: 50 }, (_, i) => i), Float64Array.from({ length: 50 }, (_, i) => 3 + i)), expect: { code: 'TF_SYNC_FAILED' } },
  { id: 'sync-periodic-with-drops', area: 'alignment', what: 'periodic pulses with a few drops on each side (a coincidental pattern must not yield a map off by whole periods)', run: () => { const keep = (drop: number[]) => Float64Array.from({ length: 200 }, (_, i) => i).filter((i) => !drop.includes(i)); return fitClockMap(keep([20, 21, 90, 140]), keep([35, 36, 120]).map((t) => 5 + t)); }, expect: { code: 'TF_SYNC_FAILED' } },
  { id: 'sync-outside-range', area: 'alignment', what: 'mapping a time outside the synchronised range', run: () => { const r = rng(3); let t = 0; const a = Float64Array.from({ length: 60 }, () => (t += 0.5 + r.uniform())); const m = fitClockMap(a.map((x) => 2 + x * 1.00002), a); return mapDeviceTimes(m, Float64Array.of(1e6)); }, expect: { code: 'TF_SYNC_FAILED' } },
  { id: 'barcode-wrong-bit-duration', area: 'alignment', what: 'barcodes decoded with the wrong cell duration (rejected, reported, no value)', run: () => decodeBarcodes({ starts: [0, 0.04, 0.07], ends: [0.02, 0.05, 0.09] }, { bitSec: 0.012, nBits: 8 }), expect: { warning: 'barcodes-rejected', check: (r) => { if (r.values.length !== 0) throw new Error(`decoded ${r.values.length} values`); } } },
  { id: 'barcode-format-missing', area: 'alignment', what: 'barcode decoding without the number of bits', run: () => decodeBarcodes({ starts: [0], ends: [0.02] }, { bitSec: 0.01 } as never), expect: { code: 'TF_BAD_OPTION' } },
  { id: 'sync-codes-one-side', area: 'alignment', what: 'barcode codes for the reference train only', run: () => fitClockMap(Float64Array.from({ length: 30 }, (_, i) => i), Float64Array.from({ length: 30 }, (_, i) => 3 + i), { referenceCodes: Float64Array.from({ length: 30 }, (_, i) => i) }), expect: { code: 'TF_SHAPE_MISMATCH' } },
  { id: 'sync-codes-wrapped', area: 'alignment', what: 'periodic barcodes whose 4-bit counter wraps (placeable at several offsets)', run: () => fitClockMap(Float64Array.from({ length: 100 }, (_, i) => i), Float64Array.from({ length: 100 }, (_, i) => 3 + i), { referenceCodes: Float64Array.from({ length: 100 }, (_, i) => i % 16), deviceCodes: Float64Array.from({ length: 100 }, (_, i) => i % 16) }), expect: { code: 'TF_SYNC_FAILED' } },
  { id: 'movement-flat', area: 'alignment', what: 'an accelerometer that never moves (zero robust sd)', run: () => movementOnsets(sig(new Float64Array(1000).fill(1)), { baseline: 'median' }), expect: { code: 'TF_DEGENERATE_SIGNAL' } },
  { id: 'licks-unsorted', area: 'alignment', what: 'lick times out of order (sorted, reported)', run: () => lickBouts(Float64Array.of(1, 0.5, 2)), expect: { warning: 'licks-sorted' } },
  { id: 'licks-nan', area: 'alignment', what: 'a NaN lick time', run: () => lickBouts(Float64Array.of(1, NaN, 2)), expect: { code: 'TF_BAD_EVENTS' } },
  { id: 'learning-rw-diverging', area: 'models', what: 'Rescorla–Wagner with cue intensities in dB (α·x² ≫ 2: the recursion diverges)', run: () => rescorlaWagner(new Float64Array(200).fill(1), { alpha: 0.1, cues: { data: new Float64Array(200).fill(70), rows: 200, cols: 1 } }), expect: { code: 'TF_NON_FINITE' } },
  // ---- statistics ----
  { id: 'runs-from-t-values', area: 'statistics', what: 't values passed where p-values belong', run: () => significantRunsFromPValues([0.4, -2.1, -3.5, -2.8], { sampleRate: 10 }), expect: { code: 'TF_BAD_VALUE' } },
  { id: 'bootstrap-one-trial', area: 'statistics', what: 'a band from a single trial', run: () => bootstrapTimecourse({ data: Float64Array.of(1, 2, 3), rows: 1, cols: 3 }), expect: { code: 'TF_TOO_FEW_SAMPLES' } },
  { id: 'bootstrap-shape', area: 'statistics', what: 'a matrix whose data length disagrees with rows × cols', run: () => bootstrapTimecourse({ data: new Float64Array(5), rows: 2, cols: 3 }), expect: { code: 'TF_SHAPE_MISMATCH' } },
  { id: 'bootstrap-constant-bca', area: 'statistics', what: 'a constant statistic with BCa (degenerate)', run: () => bootstrapTimecourse({ data: new Float64Array(20).fill(3), rows: 10, cols: 2 }, { method: 'bca' }), expect: { warning: 'degenerate-bca' } },
  { id: 'bootstrap-all-nan-bin', area: 'statistics', what: 'a time bin that is NaN in every trial', run: () => bootstrapTimecourse({ data: Float64Array.from({ length: 20 }, (_, i) => (i % 2 ? NaN : i)), rows: 10, cols: 2 }, { nan: 'omit' }), expect: { warning: 'too-few-trials-in-column', check: (r) => { if (!Number.isNaN(r.low[1]) || !Number.isNaN(r.high[1])) throw new Error('an all-NaN bin must give a NaN band'); } } },
  { id: 'cluster-mismatched', area: 'statistics', what: 'two conditions with different time bins', run: () => clusterPermutationTest({ data: new Float64Array(12), rows: 4, cols: 3 }, { data: new Float64Array(16), rows: 4, cols: 4 }), expect: { code: 'TF_SHAPE_MISMATCH' } },
  { id: 'fdr-p-out-of-range', area: 'statistics', what: 'a p-value above 1', run: () => adjustPValues(Float64Array.of(0.01, 1.5)), expect: { code: 'TF_BAD_VALUE' } },
  // ---- models ----
  { id: 'learning-choice-outside', area: 'models', what: 'a choice outside the option set', run: () => choiceLogLikelihood({ choice: [0, 1, 2], reward: [1, 0, 1] }, { alpha: 0.3, beta: 2, alphaC: 0.2, betaC: 1 }), expect: { code: 'TF_BAD_VALUE' } },
  { id: 'learning-missing-outcome', area: 'models', what: 'a choice whose outcome is missing', run: () => fitChoiceModel({ choice: [0, 1, 0, 1], reward: [1, NaN, 0, 1] }), expect: { code: 'TF_NON_FINITE' } },
  { id: 'learning-single-trial', area: 'models', what: 'a session with one trial', run: () => fitChoiceModel({ choice: [0], reward: [1] }), expect: { code: 'TF_TOO_FEW_SAMPLES' } },
  { id: 'learning-param-out-of-bounds', area: 'models', what: 'a learning rate above 1', run: () => choiceLogLikelihood({ choice: [0, 1], reward: [1, 0] }, { alpha: 1.5, beta: 2, alphaC: 0.2, betaC: 1 }), expect: { code: 'TF_BAD_OPTION' } },
  { id: 'learning-minus-infinity', area: 'models', what: 'a deterministic policy contradicted by a choice (log-likelihood −∞)', run: () => choiceLogLikelihood({ choice: [0, 0, 1, 1, 1], reward: [1, 1, 1, 0, 0] }, { alpha: 1, beta: 1e308 }, { model: 'q' }), expect: { code: 'TF_BAD_LIKELIHOOD' } },
  { id: 'encode-empty-group', area: 'models', what: 'an event regressor with no events', run: () => designMatrix([{ name: 'cue', group: 'cue', times: [] }], { startSec: 0, endSec: 10, binRate: 50 }), expect: { code: 'TF_TOO_FEW_SAMPLES' } },
  { id: 'encode-kernel-longer-than-session', area: 'models', what: 'a kernel longer than the session', run: () => designMatrix([{ name: 'cue', group: 'cue', times: [0.5], basis: { postSec: 30 } }], { startSec: 0, endSec: 2, binRate: 50 }), expect: { code: 'TF_WINDOW_OUT_OF_RANGE' } },
  { id: 'encode-collinear-groups', area: 'models', what: 'two groups with identical regressors', run: () => { const t = Float64Array.from({ length: 40 }, (_, i) => 2 + i * 4.7); const d = designMatrix([{ name: 'a', group: 'reward', times: t }, { name: 'b', group: 'movement', times: t }], { startSec: 0, endSec: 200, binRate: 20 }); return fitRidgeCV(d, [{ name: 'c', values: noise(d.nRows) }]); }, expect: { warning: 'TF_FIT_FAILED' } },
  { id: 'encode-nan-signal', area: 'models', what: 'NaN samples in a cell signal (masked, counted)', run: () => { const t = Float64Array.from({ length: 40 }, (_, i) => 2 + i * 4.7); const d = designMatrix([{ name: 'a', group: 'reward', times: t }], { startSec: 0, endSec: 200, binRate: 20 }); const y = noise(d.nRows); y.fill(NaN, 100, 150); return fitRidgeCV(d, [{ name: 'c', values: y }]); }, expect: { warning: 'TF_NON_FINITE', check: (r) => { if (r.cells[0].nMissing !== 50) throw new Error(`nMissing ${r.cells[0].nMissing} ≠ 50`); } } },
  { id: 'encode-all-zero-counts', area: 'models', what: 'a unit with no spikes at all', run: () => fitPoissonGLM({ data: Float64Array.from({ length: 200 }, (_, i) => Math.sin(i)), rows: 200, cols: 1 }, new Float64Array(200)), expect: { code: 'TF_DEGENERATE_SIGNAL' } },
  { id: 'encode-too-few-trials-for-folds', area: 'models', what: 'fewer trials than cross-validation folds', run: () => { const d = designMatrix([{ name: 'a', group: 'reward', times: [2, 5, 9, 14] }], { startSec: 0, endSec: 20, binRate: 10 }); return fitRidgeCV(d, [{ name: 'c', values: noise(d.nRows) }], { nFolds: 5, foldCutTimes: [2, 9, 14] }); }, expect: { code: 'TF_TOO_FEW_SAMPLES' } },
  { id: 'encode-basis-bad', area: 'models', what: 'a raised-cosine basis with zero bumps', run: () => raisedCosineBasis({ nBumps: 0 }), expect: { code: 'TF_BAD_OPTION' } },
  // ---- reports ----
  { id: 'report-markup-in-names', area: 'reports', what: 'markup in a channel name is escaped, not executed', run: () => periEventFigure({ cell: '<img src=x onerror=alert(1)>', event: '</svg><script>x()</script>', conditions: [{ label: '"&', times: Float64Array.of(0, 1), mean: Float64Array.of(0, 1), low: Float64Array.of(-1, 0), high: Float64Array.of(1, 2) }] }), expect: { warning: 'escaped', check: (svg: string) => { if (svg.includes('<img') || svg.includes('<script')) throw new Error('markup leaked into the SVG'); } } },
  { id: 'report-no-provenance', area: 'reports', what: 'a report without provenance', run: () => sessionReport({ session: 's' } as never), expect: { code: 'TF_BAD_OPTION' } },
  { id: 'report-band-length', area: 'reports', what: 'a band whose bounds do not match its times', run: () => periEventFigure({ cell: 'c', event: 'e', conditions: [{ label: 'a', times: Float64Array.of(0, 1, 2), mean: Float64Array.of(0, 1, 2), low: Float64Array.of(0), high: Float64Array.of(1, 2, 3) }] }), expect: { code: 'TF_SHAPE_MISMATCH' } },
  // ---- simulation ----
  { id: 'simulate-negative-duration', area: 'simulation', what: 'a negative session length', run: () => simulateSession({ durationSec: -10 }), expect: { code: 'TF_BAD_OPTION' } },
  { id: 'simulate-unknown-option', area: 'simulation', what: "a misspelled option ('nsites')", run: () => simulateSession({ nsites: 2 } as object), expect: { code: 'TF_UNKNOWN_OPTION' } },
];

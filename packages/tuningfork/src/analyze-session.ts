import {
  TuningforkError, checkBoolean, checkInteger, checkOneOf, checkPositive, eventTimes, eventValues, hashInput, makeEventTable,
  makeProvenance, resolveOptions, rng,
} from '@tuningfork/core';
import type { EventTable, PhotometrySite, ResultWarning, Session, TrialTable, UniformSignal } from '@tuningfork/core';
import { binSpikes, conditionSite, siteQuality } from '@tuningfork/signal';
import type { ConditionSiteOptions, ConditionedSite, SiteQuality } from '@tuningfork/signal';
import { movementOnsets, periEventCounts, periEventMatrix } from '@tuningfork/align';
import type { MovementOnsetOptions, MovementOnsetsResult } from '@tuningfork/align';
import { bootstrapTimecourse, significantRunsFromInterval } from '@tuningfork/stats';
import type { SignificantRun, TimecourseInterval } from '@tuningfork/stats';
import { choiceRegressors, fitChoiceModel } from '@tuningfork/learning';
import type { ChoiceModelFit, ChoiceRegressors, FitChoiceModelOptions } from '@tuningfork/learning';
import { designMatrix, encodeCells } from '@tuningfork/encode';
import type { CellSignal, EncodeCellsOptions, EncodeCellsResult, EncodingDesign, Regressor } from '@tuningfork/encode';
import { binMean } from './internal/bin-mean.js';
import { EVENT_NAMES, trialsFromEvents } from './internal/trials.js';
import { buildOutputs } from './internal/outputs.js';
import type { ProgressCallback, SessionOutputs } from './pipeline-types.js';
import { syncDeviceEvents } from './sync-device-events.js';
import type { DeviceClockResult, SyncDeviceEventsOptions } from './sync-device-events.js';

/** Which events make up each peri-event response: event label → condition label → event names. */
export type ResponseSpec = Readonly<Record<string, Readonly<Record<string, readonly string[]>>>>;

/** Default responses: outcome (rewarded vs omitted), bonus, choice, movement onset and cue. */
export const DEFAULT_RESPONSES: ResponseSpec = Object.freeze({
  outcome: { rewarded: [EVENT_NAMES.reward], omitted: [EVENT_NAMES.omission] },
  bonus: { bonus: [EVENT_NAMES.bonus] },
  choice: { choice: [...EVENT_NAMES.choices] },
  movement: { onset: [EVENT_NAMES.moveOnset] },
  cue: { cue: [EVENT_NAMES.cue] },
});

/** Options of the peri-event step. */
export interface PeriEventStepOptions {
  /** Responses to compute for photometry sites. @defaultValue DEFAULT_RESPONSES */
  responses?: ResponseSpec;
  /** Event labels of `responses` also computed for units (PETHs). @defaultValue ['outcome', 'movement', 'choice'] */
  unitEvents?: readonly string[];
  /** Window before and after each event, s. @defaultValue 2 and 5 */
  preSec?: number;
  postSec?: number;
  /** Column rate of site matrices, Hz, or 'signal' for the native rate. @defaultValue 50 */
  sampleRate?: 'signal' | number;
  /** Bin width of unit PETHs, s. @defaultValue 0.05 */
  unitBinSec?: number;
  /** Per-trial baseline subtracted before averaging: window [start, end) s relative to the event, or null for none. @defaultValue [-2, -1] */
  baselineSec?: readonly [number, number] | null;
  /** Bootstrap resamples of each band (percentile, 95 %). @defaultValue 1000 */
  resamples?: number;
  /** Confidence level of the bands. @defaultValue 0.95 */
  confidenceLevel?: number;
  /** Shortest significant run (consecutive-threshold rule), s. @defaultValue 0.1 */
  minRunSec?: number;
}

/** Options of the encoding step. */
export interface EncodeStepOptions {
  /** Bin rate of the design and of the cells' signals, Hz. @defaultValue 50 */
  binRate?: number;
  /** Add a lick kernel (nuisance group 'lick'). @defaultValue false */
  licks?: boolean;
  /** Post-event span of event kernels, s. @defaultValue 3 */
  postSec?: number;
  /** Pre-event span of the movement kernel, s (movement starts before the logged onset). @defaultValue 0.6 */
  movementPreSec?: number;
  /** Options passed to encode.encodeCells (ridge, null, classify, poisson). The null's seed comes from `seed`. @defaultValue {} */
  model?: EncodeCellsOptions;
}

/** Options of analyzeSession. Each step's options go to that stage's function, which validates them. */
export interface AnalyzeSessionOptions {
  /** Seed of every random draw (learning starts, bootstraps, shift nulls). @defaultValue 0 */
  seed?: number;
  /** Putting `session.deviceEvents` on the session clock (syncDeviceEvents). @defaultValue {} */
  sync?: SyncDeviceEventsOptions;
  /** Photometry conditioning (signal.conditionSite). @defaultValue {} */
  condition?: ConditionSiteOptions;
  /** Per-site quality report (signal.siteQuality). @defaultValue true */
  qc?: boolean;
  /** Continuous signal holding movement (accelerometer magnitude, g); null: use `move_onset` events of the table. @defaultValue 'accel' */
  movementSignal?: string | null;
  /** Movement-onset detection (align.movementOnsets). @defaultValue { baseline: 'median', refine: 'off-threshold' } */
  movement?: MovementOnsetOptions;
  /** Learning model fitted to the choices (learning.fitChoiceModel). @defaultValue { model: 'q-ck' } */
  learning?: FitChoiceModelOptions;
  /** Peri-event matrices, bootstrap bands and significant runs. @defaultValue {} */
  periEvent?: PeriEventStepOptions;
  /** Encoding models and classification; false skips the step. @defaultValue {} */
  encode?: EncodeStepOptions | false;
  /** Rate of the corrected traces in the 'traces' output table, Hz. @defaultValue 50 */
  traceRateHz?: number;
  /** Build the HTML report into the outputs. @defaultValue true */
  report?: boolean;
  /**
   * Which per-site intermediates to keep: 'all', or 'outputs' — only what the tables and report use
   * (filtered sensor, fitted control, bleaching baseline of the sensor, ΔF/F, z). With 'outputs' the
   * filtered control and the bleaching-detrended copies are empty signals (length 0), which saves
   * about 4 full-rate arrays per site (≈ 115 MB per site-hour at 1 kHz); batch runs use it.
   * @defaultValue 'all'
   */
  intermediates?: 'all' | 'outputs';
}

/** One photometry site after conditioning. */
export interface SiteResult {
  readonly name: string;
  readonly conditioned: ConditionedSite;
  readonly quality: SiteQuality | null;
}

/** One peri-event response of one site or unit under one condition. */
export interface ResponseResult {
  readonly cell: string;
  readonly kind: 'site' | 'unit';
  readonly event: string;
  readonly condition: string;
  /** Trials × time matrix (z-scored ΔF/F for sites, rate in Hz for units), baseline-subtracted when asked. */
  readonly matrix: { readonly data: Float64Array; readonly rows: number; readonly cols: number; readonly offsets: Float64Array; readonly kept: Uint32Array };
  /** Event times of the rows (seconds on the session clock). */
  readonly eventTimes: Float64Array;
  readonly band: TimecourseInterval;
  readonly runs: readonly SignificantRun[];
}

/** Everything analyzeSession computed, step by step, plus what a writer needs. */
export interface SessionAnalysis {
  readonly sessionId: string;
  readonly seed: number;
  readonly sites: readonly SiteResult[];
  readonly trials: TrialTable;
  /** Events on the session clock (other devices' events mapped in), with detected movement onsets added as `move_onset` (value = vigour). */
  readonly events: EventTable;
  /** Clock maps of the devices whose events were mapped onto the session clock (empty when none). */
  readonly clocks: readonly DeviceClockResult[];
  readonly movement: { readonly source: 'detected' | 'events' | 'none'; readonly onsets: Float64Array; readonly vigour: Float64Array; readonly detection: MovementOnsetsResult | null };
  readonly learning: { readonly fit: ChoiceModelFit; readonly regressors: ChoiceRegressors } | null;
  readonly responses: readonly ResponseResult[];
  readonly encoding: { readonly design: EncodingDesign; readonly result: EncodeCellsResult } | null;
  /** Wall-clock seconds per step. */
  readonly timings: Readonly<Record<string, number>>;
  readonly warnings: readonly ResultWarning[];
  readonly outputs: SessionOutputs;
}

/** Hooks of analyzeSession. */
export interface AnalyzeHooks {
  /** Called with (step, fraction of that step done) as the analysis advances. */
  readonly onProgress?: ProgressCallback;
}

const DEFAULTS = Object.freeze({
  seed: 0,
  sync: {} as SyncDeviceEventsOptions,
  condition: {} as ConditionSiteOptions,
  qc: true,
  movementSignal: 'accel' as string | null,
  movement: { baseline: 'median', refine: 'off-threshold' } as MovementOnsetOptions,
  learning: { model: 'q-ck' } as FitChoiceModelOptions,
  periEvent: {} as PeriEventStepOptions,
  encode: {} as EncodeStepOptions | false,
  traceRateHz: 50,
  report: true,
  intermediates: 'all' as 'all' | 'outputs',
});

const PERI_DEFAULTS: Readonly<Required<PeriEventStepOptions>> = Object.freeze({
  responses: DEFAULT_RESPONSES,
  unitEvents: ['outcome', 'movement', 'choice'] as readonly string[],
  preSec: 2,
  postSec: 5,
  sampleRate: 50 as 'signal' | number,
  unitBinSec: 0.05,
  baselineSec: [-2, -1] as readonly [number, number] | null,
  resamples: 1000,
  confidenceLevel: 0.95,
  minRunSec: 0.1,
});

const ENCODE_DEFAULTS: Readonly<Required<EncodeStepOptions>> = Object.freeze({
  binRate: 50,
  licks: false,
  postSec: 3,
  movementPreSec: 0.6,
  model: {} as EncodeCellsOptions,
});

/** What each band assumes, stated with every band the pipeline reports. */
export const BAND_ASSUMPTIONS =
  'pointwise percentile bootstrap over trials (not simultaneous over time); assumes trials are independent and exchangeable within the condition; ' +
  'significant runs use the consecutive-threshold rule (a heuristic, not exact family-wise control)';

/**
 * Analyse one session end to end: other devices' events onto the session clock (syncDeviceEvents,
 * when `session.deviceEvents` is set), photometry conditioning and QC, movement onsets, the learning
 * model and its per-trial RPE/APE, peri-event matrices with bootstrap bands and significant runs,
 * encoding models with unique ΔR² and circular-shift nulls, and per-cell classes with FDR control.
 * Every step's options can be overridden; every intermediate result is returned, and the tidy
 * tables and report a writer needs are in `outputs`.
 *
 * Event names follow tuningfork's convention: `cue`, `choice_left`/`choice_right`, `reward`,
 * `omission`, `bonus`, `lick`, `move_onset`. Trials come from `session.trials` or, when absent,
 * from the events (cue → first choice → first outcome).
 *
 * Same session, options and seed give bit-identical results.
 *
 * @throws {TuningforkError} TF_UNKNOWN_OPTION / TF_BAD_OPTION for options; the stages' codes for
 *   data they cannot analyse (each names the step and the site, unit or trial).
 */
export async function analyzeSession(input: Session, options: AnalyzeSessionOptions = {}, hooks: AnalyzeHooks = {}): Promise<SessionAnalysis> {
  const fn = 'analyzeSession';
  const o = resolveOptions(fn, DEFAULTS, options);
  const seed = checkInteger(fn, 'seed', o.seed, 0, 2 ** 32 - 1);
  const wantQc = checkBoolean(fn, 'qc', o.qc);
  const wantReport = checkBoolean(fn, 'report', o.report);
  const traceRate = checkPositive(fn, 'traceRateHz', o.traceRateHz);
  const compact = checkOneOf(fn, 'intermediates', o.intermediates, ['all', 'outputs'] as const) === 'outputs';
  const peri = resolveOptions(`${fn} periEvent`, PERI_DEFAULTS, o.periEvent) as Required<PeriEventStepOptions>;
  const enc = o.encode === false ? null : (resolveOptions(`${fn} encode`, ENCODE_DEFAULTS, o.encode) as Required<EncodeStepOptions>);
  checkSession(fn, input);
  const progress = hooks.onProgress ?? (() => {});
  const root = rng(seed);
  const subSeed = (k: number) => root.stream(k).nextUint32();
  const timings: Record<string, number> = {};
  const warnings: ResultWarning[] = [];
  const timed = async <T>(step: string, f: () => T): Promise<T> => {
    progress(step, 0);
    const t0 = performance.now();
    const out = f();
    timings[step] = (performance.now() - t0) / 1000;
    progress(step, 1);
    await new Promise((r) => setImmediate(r)); // let progress output and signals through
    return out;
  };

  // 0. Other devices' events onto the session clock.
  const synced = input.deviceEvents?.length ? await timed('sync', () => syncDeviceEvents(input, o.sync)) : syncDeviceEvents(input, o.sync);
  const session = synced.session;
  warnings.push(...synced.warnings);

  // 1. Photometry conditioning (and QC).
  const sites = await timed('condition', () => session.photometry.map((site, i) => {
    progress('condition', i / Math.max(1, session.photometry.length));
    const c = conditionSite(site, o.condition);
    return { name: site.name, conditioned: compact ? slim(c) : c, quality: null as SiteQuality | null };
  }));
  if (wantQc) {
    const q = await timed('qc', () => session.photometry.map((site) => siteQuality(site)));
    q.forEach((qq, i) => { (sites[i] as { quality: SiteQuality | null }).quality = qq; });
  }
  for (const s of sites) warnings.push(...s.conditioned.warnings.map((w) => ({ ...w, details: { ...w.details, site: s.name } })));

  // 2. Movement onsets.
  const movement = await timed('movement', () => detectMovement(session, o.movementSignal, o.movement));
  const events = movement.source === 'detected' ? withMoveOnsets(session.events, movement.onsets, movement.vigour) : session.events;

  // 3. Trials and the learning model.
  const trials = session.trials ?? trialsFromEvents(events);
  const learning = await timed('learning', () => fitLearning(trials, o.learning, subSeed(1), warnings));

  // 4. Peri-event matrices, then bootstrap bands and significant runs.
  const pending = await timed('peri_event', () => periEventMatrices(session, sites, events, peri, subSeed(2)));
  const responses = await timed('bootstrap', () => responseBands(pending, peri, warnings, progress));

  // 5. Encoding models and classification.
  let encoding: SessionAnalysis['encoding'] = null;
  if (enc && (sites.length > 0 || session.units.length > 0)) {
    encoding = await timed('encode', () => runEncoding(session, sites, trials, events, learning, movement, enc, subSeed(3)));
    warnings.push(...encoding.result.warnings, ...encoding.design.warnings);
  }

  const provenance = makeProvenance('analyzeSession', o, seed, [
    ...session.photometry.flatMap((p: PhotometrySite) => [hashInput(`${p.name}/signal`, p.signal.values), hashInput(`${p.name}/control`, p.control.values)]),
    ...session.units.map((u) => hashInput(`${u.name}/spikes`, u.times)),
    hashInput('events/time', session.events.time),
  ]);
  const partial = { sessionId: session.id, seed, sites, trials, events, clocks: synced.clocks, movement, learning, responses, encoding, timings, warnings };
  const outputs = await timed('outputs', () => buildOutputs(session, partial, { traceRate, report: wantReport, provenance, assumptions: BAND_ASSUMPTIONS }));
  return { ...partial, outputs };
}

/** A zero-length signal on the same clock (stands for a dropped intermediate). */
function emptyLike(s: UniformSignal): UniformSignal {
  return { values: new Float64Array(0), sampleRate: s.sampleRate, t0: s.t0 };
}

/** Drop the intermediates no output uses (see `intermediates: 'outputs'`). */
function slim(c: ConditionedSite): ConditionedSite {
  const b = c.bleaching;
  return {
    ...c,
    filtered: { signal: c.filtered.signal, control: emptyLike(c.filtered.control) },
    bleaching: b ? {
      signal: { ...b.signal, detrended: emptyLike(b.signal.detrended) },
      control: b.control ? { ...b.control, baseline: emptyLike(b.control.baseline), detrended: emptyLike(b.control.detrended) } : null,
    } : null,
  };
}

function checkSession(fn: string, s: Session): void {
  if (!s || typeof s !== 'object' || !Array.isArray(s.photometry) || !Array.isArray(s.units) || !s.events) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: session must be a Session { id, start, end, photometry, units, events, continuous }.`, { fn });
  }
  if (!(s.end > s.start)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: session end (${s.end} s) must be after its start (${s.start} s).`, { fn });
  const seen = new Set<string>();
  for (const name of [...s.photometry.map((p) => p.name), ...s.units.map((u) => u.name)]) {
    if (seen.has(name)) throw new TuningforkError('TF_BAD_VALUE', `${fn}: cell name '${name}' is used twice; site and unit names must be unique.`, { fn, cell: name });
    seen.add(name);
  }
}

function detectMovement(session: Session, signalName: string | null, opts: MovementOnsetOptions): SessionAnalysis['movement'] {
  if (signalName !== null && session.continuous[signalName]) {
    const det = movementOnsets(session.continuous[signalName]!, opts);
    return { source: 'detected', onsets: det.onsets, vigour: det.vigour, detection: det };
  }
  const on = eventTimes(session.events, EVENT_NAMES.moveOnset);
  if (on.length > 0) return { source: 'events', onsets: on, vigour: eventValues(session.events, EVENT_NAMES.moveOnset), detection: null };
  return { source: 'none', onsets: new Float64Array(0), vigour: new Float64Array(0), detection: null };
}

function withMoveOnsets(ev: EventTable, onsets: Float64Array, vigour: Float64Array): EventTable {
  const keep = ev.name.map((n, i) => (n === EVENT_NAMES.moveOnset ? -1 : i)).filter((i) => i >= 0);
  const time = [...keep.map((i) => ev.time[i]!), ...onsets];
  const name = [...keep.map((i) => ev.name[i]!), ...Array.from(onsets, () => EVENT_NAMES.moveOnset)];
  const value = [...keep.map((i) => ev.value[i]!), ...vigour];
  return makeEventTable(time, name, value);
}

function fitLearning(trials: TrialTable, opts: FitChoiceModelOptions, seed: number, warnings: ResultWarning[]): SessionAnalysis['learning'] {
  const n = trials.choice.filter((c, k) => c >= 0 && !Number.isNaN(trials.reward[k]!)).length;
  if (n < 2) {
    warnings.push({ code: 'PIPELINE_NO_LEARNING', message: `analyzeSession: only ${n} trial(s) with a choice; the learning model and the RPE/APE regressors are skipped.` });
    return null;
  }
  // A choice without an outcome (e.g. the session ended before it) carries no prediction error:
  // the trial is left out of the likelihood (values unchanged), with a warning naming it.
  const choice = Int32Array.from(trials.choice, (c, k) => (c >= 0 && Number.isNaN(trials.reward[k]!) ? -1 : c));
  const dropped = trials.choice.reduce((a, c, k) => a + (c >= 0 && choice[k] === -1 ? 1 : 0), 0);
  if (dropped > 0) {
    const first = trials.choice.findIndex((c, k) => c >= 0 && choice[k] === -1);
    warnings.push({ code: 'PIPELINE_CHOICE_WITHOUT_OUTCOME', message: `analyzeSession: ${dropped} trial(s) with a choice but no outcome (first: trial ${trials.trial[first]}) are left out of the learning model.`, details: { trials: dropped } });
  }
  const data = { choice, reward: trials.reward, trial: trials.trial, nOptions: trials.nOptions };
  const fit = fitChoiceModel(data, { seed, ...opts });
  warnings.push(...fit.warnings);
  const regressors = choiceRegressors(data, fit.params, { model: fit.model });
  return { fit, regressors };
}

interface PendingResponse {
  readonly cell: string;
  readonly kind: 'site' | 'unit';
  readonly event: string;
  readonly condition: string;
  readonly matrix: ResponseResult['matrix'];
  readonly eventTimes: Float64Array;
  readonly seed: number;
}

/** Peri-event matrices of every site and unit for every response condition (no statistics yet). */
function periEventMatrices(
  session: Session, sites: readonly SiteResult[], events: EventTable, p: Required<PeriEventStepOptions>, seed: number,
): PendingResponse[] {
  const out: PendingResponse[] = [];
  const root = rng(seed);
  let job = 0;
  const spec = p.responses;
  const timesOf = (names: readonly string[]) => Float64Array.from(names.flatMap((n) => Array.from(eventTimes(events, n)))).sort();
  const push = (cell: string, kind: 'site' | 'unit', event: string, condition: string, m: ResponseResult['matrix'], times: Float64Array) => {
    const s = root.stream(job++).nextUint32(); // one stream per response, in a fixed order
    out.push({ cell, kind, event, condition, matrix: m, eventTimes: Float64Array.from(m.kept, (k) => times[k]!), seed: s });
  };
  const baseline = p.baselineSec ? { baseline: 'subtract' as const, baselineSec: p.baselineSec } : { baseline: 'none' as const };
  for (const site of sites) {
    const z = site.conditioned.z.signal;
    for (const [event, conds] of Object.entries(spec)) {
      for (const [condition, names] of Object.entries(conds)) {
        const times = timesOf(names);
        if (times.length === 0) { job++; continue; }
        push(site.name, 'site', event, condition, periEventMatrix(z, times, { preSec: p.preSec, postSec: p.postSec, sampleRate: p.sampleRate, ...baseline }), times);
      }
    }
  }
  for (const unit of session.units) {
    for (const event of p.unitEvents) {
      const conds = spec[event];
      if (!conds) throw new TuningforkError('TF_BAD_OPTION', `analyzeSession: periEvent.unitEvents names '${event}', which is not in periEvent.responses (${Object.keys(spec).join(', ')}).`, { option: 'periEvent.unitEvents' });
      for (const [condition, names] of Object.entries(conds)) {
        const times = timesOf(names);
        if (times.length === 0) { job++; continue; }
        const m = periEventCounts(unit.times, times, {
          preSec: p.preSec, postSec: p.postSec, binSec: p.unitBinSec, units: 'rate', recordingSec: [session.start, session.end], ...baseline,
        });
        push(unit.name, 'unit', event, condition, m, times);
      }
    }
  }
  return out;
}

/** Bootstrap band and significant runs of each response (responses with < 2 trials are left out, with a warning). */
function responseBands(pending: readonly PendingResponse[], p: Required<PeriEventStepOptions>, warnings: ResultWarning[], progress: ProgressCallback): ResponseResult[] {
  const out: ResponseResult[] = [];
  pending.forEach((x, i) => {
    progress('bootstrap', i / Math.max(1, pending.length));
    if (x.matrix.rows < 2) {
      warnings.push({ code: 'PIPELINE_RESPONSE_SKIPPED', message: `analyzeSession: ${x.cell} ${x.event}/${x.condition} has ${x.matrix.rows} usable trial(s); no band is computed.`, details: { cell: x.cell, event: x.event, condition: x.condition } });
      return;
    }
    const band = bootstrapTimecourse(x.matrix, { resamples: p.resamples, confidenceLevel: p.confidenceLevel, seed: x.seed });
    const runs = significantRunsFromInterval(band, { minRunSec: p.minRunSec }).runs;
    out.push({ cell: x.cell, kind: x.kind, event: x.event, condition: x.condition, matrix: x.matrix, eventTimes: x.eventTimes, band, runs });
  });
  return out;
}

function runEncoding(
  session: Session, sites: readonly SiteResult[], trials: TrialTable, events: EventTable,
  learning: SessionAnalysis['learning'], movement: SessionAnalysis['movement'], e: Required<EncodeStepOptions>, seed: number,
): { design: EncodingDesign; result: EncodeCellsResult } {
  const binRate = e.binRate;
  const start = session.start;
  const nRows = Math.floor((session.end - session.start) * binRate + 1e-9);
  const end = start + nRows / binRate;
  const basis = { postSec: e.postSec };
  const cue = eventTimes(events, EVENT_NAMES.cue);
  const bonusT = eventTimes(events, EVENT_NAMES.bonus);
  const regs: Regressor[] = [];
  if (cue.length) regs.push({ name: 'cue', group: 'cue', times: cue, basis });
  // Reward group: an outcome kernel at every outcome of a trial with a choice and at every bonus
  // drop, plus the same kernel scaled by the centred RPE (bonus drops are unpredicted: RPE = 1 − 0).
  // Together they fit any response linear in RPE at rewards, omissions and bonuses alike.
  const outcomeTimes: number[] = [];
  const outcomeRpe: number[] = [];
  const choiceTimes: number[] = [];
  const choiceApe: number[] = [];
  for (let k = 0; k < trials.trial.length; k++) {
    if (trials.choice[k]! < 0) continue;
    if (Number.isFinite(trials.outcomeTime[k]!)) { outcomeTimes.push(trials.outcomeTime[k]!); outcomeRpe.push(learning ? learning.regressors.rpe[k]! : NaN); }
    if (Number.isFinite(trials.choiceTime[k]!)) { choiceTimes.push(trials.choiceTime[k]!); choiceApe.push(learning ? learning.regressors.ape[k]! : NaN); }
  }
  for (const t of bonusT) { outcomeTimes.push(t); outcomeRpe.push(1); }
  if (outcomeTimes.length) regs.push({ name: 'outcome', group: 'reward', times: outcomeTimes, basis });
  if (learning && outcomeTimes.length) regs.push({ name: 'outcome_x_rpe', group: 'reward', times: outcomeTimes, modulator: outcomeRpe, basis });
  const allChoices = Float64Array.from(trials.choiceTime.filter((t) => Number.isFinite(t)));
  if (allChoices.length) regs.push({ name: 'choice', group: 'choice', times: allChoices, basis });
  if (learning && choiceTimes.length) regs.push({ name: 'choice_x_ape', group: 'action-prediction', times: choiceTimes, modulator: choiceApe, basis });
  if (movement.onsets.length) {
    const mb = { postSec: Math.min(e.postSec, 1.5), preSec: e.movementPreSec, nBumps: 5 };
    regs.push({ name: 'movement', group: 'movement', times: movement.onsets, basis: mb });
    regs.push({ name: 'movement_x_vigour', group: 'movement', times: movement.onsets, modulator: movement.vigour, basis: mb });
  }
  const licks = eventTimes(events, EVENT_NAMES.lick);
  if (e.licks && licks.length) regs.push({ name: 'lick', group: 'lick', times: licks, basis: { postSec: 1, nBumps: 4 } });
  const design = designMatrix(regs, { startSec: start, endSec: end, binRate });
  const cells: CellSignal[] = [
    ...sites.map((s) => ({ name: s.name, values: binMean(s.conditioned.z.signal, start, binRate, design.nRows), sampleRate: binRate, t0: start })),
    ...session.units.map((u) => ({
      name: u.name, kind: 'counts' as const, sampleRate: binRate, t0: start,
      values: binSpikes(u.times, { binSec: 1 / binRate, startSec: start, endSec: end }).signal.values.subarray(0, design.nRows),
    })),
  ];
  const foldCutTimes = trials.cueTime.filter((t) => Number.isFinite(t));
  const model = e.model;
  const nuisance = ['cue', 'choice', 'lick'].filter((g) => design.groups.includes(g));
  const result = encodeCells(design, cells, {
    ...model,
    ridge: { foldCutTimes, nuisanceGroups: nuisance, ...model.ridge },
    null: { seed, ...model.null },
  });
  return { design, result };
}


import type { Provenance, ResultWarning, Session, UniformSignal } from '@tuningfork/core';
import { sessionReport } from '@tuningfork/report';
import type {
  KernelInput, QcInput, RasterInput, ReportTable, ResponseInput, SessionReportInput, TrialHeatmapInput, TuningInput,
} from '@tuningfork/report';
import type { SessionAnalysis } from '../analyze-session.js';
import type { ColumnTable, SessionOutputs } from '../pipeline-types.js';
import { binMean } from './bin-mean.js';

type Partial = Omit<SessionAnalysis, 'outputs'>;

interface OutputOptions {
  readonly traceRate: number;
  readonly report: boolean;
  readonly provenance: Provenance;
  readonly assumptions: string;
}

type Col = Float64Array | Int32Array | readonly string[];

function makeTable(columns: Record<string, Col>): ColumnTable {
  const lengths = Object.values(columns).map((c) => c.length);
  const rows = lengths[0] ?? 0;
  if (lengths.some((l) => l !== rows)) throw new Error(`internal: table columns of unequal length (${lengths.join(', ')})`);
  return { columns, rows };
}

/** An arquero table as a ColumnTable: numbers → Float64Array, booleans → 0/1, the rest as text. */
function fromArquero(dt: { columnNames(): string[]; array(name: string): ArrayLike<unknown> }): ColumnTable {
  const columns: Record<string, Col> = {};
  for (const name of dt.columnNames()) {
    const a = Array.from(dt.array(name));
    if (a.every((v) => typeof v === 'number')) columns[name] = Float64Array.from(a as number[]);
    else if (a.every((v) => typeof v === 'boolean')) columns[name] = Float64Array.from(a as boolean[], (v) => (v ? 1 : 0));
    else columns[name] = a.map((v) => (v === null || v === undefined ? '' : String(v)));
  }
  return makeTable(columns);
}

/** Tidy tables, report and provenance of an analysis. */
export function buildOutputs(session: Session, r: Partial, o: OutputOptions): SessionOutputs {
  const tables: Record<string, ColumnTable> = {};
  const warnings: ResultWarning[] = [...r.warnings];

  // Corrected traces at the chosen rate (long form: one row per site × time bin).
  if (r.sites.length) {
    const n = Math.floor((session.end - session.start) * o.traceRate + 1e-9);
    const site: string[] = [];
    const time = new Float64Array(n * r.sites.length);
    const dff = new Float64Array(n * r.sites.length);
    const z = new Float64Array(n * r.sites.length);
    r.sites.forEach((s, k) => {
      dff.set(binMean(s.conditioned.dff, session.start, o.traceRate, n), k * n);
      z.set(binMean(s.conditioned.z.signal, session.start, o.traceRate, n), k * n);
      for (let i = 0; i < n; i++) { site.push(s.name); time[k * n + i] = session.start + (i + 0.5) / o.traceRate; }
    });
    tables.traces = makeTable({ site, time, dff, z });
    tables.qc = makeTable({
      site: r.sites.map((s) => s.name),
      motion_corrected: Float64Array.from(r.sites, (s) => (s.conditioned.motionCorrected ? 1 : 0)),
      fit_slope: Float64Array.from(r.sites, (s) => s.conditioned.fit?.slope ?? NaN),
      fit_intercept: Float64Array.from(r.sites, (s) => s.conditioned.fit?.intercept ?? NaN),
      fit_iterations: Float64Array.from(r.sites, (s) => s.conditioned.fit?.iterations ?? NaN),
      fit_converged: Float64Array.from(r.sites, (s) => (s.conditioned.fit ? (s.conditioned.fit.converged ? 1 : 0) : NaN)),
      bleached_signal: Float64Array.from(r.sites, (s) => s.quality?.signal.bleachingFraction ?? NaN),
      bleached_control: Float64Array.from(r.sites, (s) => s.quality?.control.bleachingFraction ?? NaN),
      snr: Float64Array.from(r.sites, (s) => s.quality?.snr?.snr ?? NaN),
      control_signal_r: Float64Array.from(r.sites, (s) => s.quality?.controlSignalR ?? NaN),
      flags: r.sites.map((s) => [...s.conditioned.flags, ...(s.quality?.flags ?? [])].join(';')),
    });
  }

  if (r.clocks.length > 0) tables.clock_sync = makeTable(clockSyncColumns(r));

  tables.movement_onsets = makeTable({ time: r.movement.onsets, vigour: r.movement.vigour, source: Array.from(r.movement.onsets, () => r.movement.source) });

  // Trials with the learning model's regressors.
  const tr = r.trials;
  const reg = r.learning?.regressors;
  const nT = tr.trial.length;
  const nanCol = () => new Float64Array(nT).fill(NaN);
  tables.trials = makeTable({
    trial: tr.trial, cue_time: tr.cueTime, choice_time: tr.choiceTime, choice: tr.choice, outcome_time: tr.outcomeTime, reward: tr.reward,
    rpe: reg ? reg.rpe : nanCol(), ape: reg ? reg.ape : nanCol(), q_chosen: reg ? reg.qChosen : nanCol(),
    v_cue: reg ? reg.vCue : nanCol(), p_choice: reg ? reg.pChoice : nanCol(),
  });
  if (r.learning) {
    const f = r.learning.fit;
    const k = f.paramNames.length;
    tables.learning_fit = makeTable({
      model: Array.from({ length: k }, () => f.model.name), parameter: [...f.paramNames], estimate: f.estimates, se: f.se,
      at_bound: Float64Array.from(f.atBound), nll: new Float64Array(k).fill(f.nll), aic: new Float64Array(k).fill(f.aic),
      bic: new Float64Array(k).fill(f.bic), n_choices: new Float64Array(k).fill(f.n), starts_at_best: new Float64Array(k).fill(f.nAtBest),
      seed: new Float64Array(k).fill(f.seed),
    });
  }

  // Peri-event summaries and the bands' descriptions.
  {
    const cell: string[] = [], kind: string[] = [], event: string[] = [], condition: string[] = [];
    const offset: number[] = [], mean: number[] = [], low: number[] = [], high: number[] = [], nCol: number[] = [], sig: number[] = [];
    for (const x of r.responses) {
      const inRun = new Int8Array(x.matrix.cols);
      for (const run of x.runs) for (let c = run.start; c <= run.end; c++) inRun[c] = run.sign;
      for (let c = 0; c < x.matrix.cols; c++) {
        cell.push(x.cell); kind.push(x.kind); event.push(x.event); condition.push(x.condition);
        offset.push(x.matrix.offsets[c]!); mean.push(x.band.estimate[c]!); low.push(x.band.low[c]!); high.push(x.band.high[c]!);
        nCol.push(x.band.trialsPerBin[0]?.[c] ?? x.matrix.rows); sig.push(inRun[c]!);
      }
    }
    tables.peri_event = makeTable({
      cell, kind, event, condition, offset_s: Float64Array.from(offset), mean: Float64Array.from(mean), low: Float64Array.from(low),
      high: Float64Array.from(high), n: Float64Array.from(nCol), significant: Float64Array.from(sig),
    });
    tables.responses = makeTable({
      cell: r.responses.map((x) => x.cell), kind: r.responses.map((x) => x.kind), event: r.responses.map((x) => x.event),
      condition: r.responses.map((x) => x.condition), trials: Float64Array.from(r.responses, (x) => x.matrix.rows),
      method: r.responses.map((x) => x.band.method), level: Float64Array.from(r.responses, (x) => x.band.confidenceLevel),
      resamples: Float64Array.from(r.responses, (x) => x.band.resamples), seed: Float64Array.from(r.responses, (x) => x.band.seed),
      runs: Float64Array.from(r.responses, (x) => x.runs.length),
      first_run_onset_s: Float64Array.from(r.responses, (x) => x.runs[0]?.onsetSec ?? NaN),
      first_run_sign: Float64Array.from(r.responses, (x) => x.runs[0]?.sign ?? 0),
      assumptions: r.responses.map(() => o.assumptions),
    });
  }

  if (r.encoding) {
    tables.cells = fromArquero(r.encoding.result.cells);
    tables.groups = fromArquero(r.encoding.result.groups);
    tables.kernels = fromArquero(r.encoding.result.kernels);
  }

  const texts: Record<string, string> = {};
  if (o.report) texts['report.html'] = sessionReport(reportInput(session, r, o));
  return { sessionId: r.sessionId, tables, texts, provenance: o.provenance, warnings };
}

function sig(values: Float64Array, s: UniformSignal): UniformSignal {
  return { values, sampleRate: s.sampleRate, t0: s.t0 };
}

/** Build the report's input from the analysis (conversions only; the report draws). */
function reportInput(session: Session, r: Partial, o: OutputOptions): SessionReportInput {
  const qc: QcInput[] = r.sites.map((s) => {
    const c = s.conditioned;
    const raw = c.filtered.signal;
    // Prediction of the sensor from the control, in the sensor's raw units.
    let predicted: Float64Array;
    if (c.fittedControl && c.bleaching) {
      const bs = c.bleaching.signal.baseline.values;
      const fc = c.fittedControl.values;
      predicted = new Float64Array(fc.length); // a loop: Float64Array.from with a callback is ~50× slower on 1 kHz traces
      for (let i = 0; i < fc.length; i++) predicted[i] = bs[i]! * (1 + fc[i]!);
    } else if (c.fittedControl) predicted = c.fittedControl.values;
    else predicted = c.bleaching ? c.bleaching.signal.baseline.values : new Float64Array(raw.values.length).fill(NaN);
    const spec = s.quality?.signal.spectrum;
    return {
      site: s.name, raw, fittedControl: sig(predicted, raw), dff: c.dff, rawUnit: 'a.u.',
      spectrum: spec ? { frequencies: spec.frequencies, power: spec.power } : { frequencies: Float64Array.of(1), power: Float64Array.of(NaN) },
      metrics: {
        slope: c.fit?.slope ?? NaN, iterations: c.fit?.iterations ?? NaN, snr: s.quality?.snr?.snr ?? NaN,
        bleached: s.quality?.signal.bleachingFraction ?? NaN, 'control r': s.quality?.controlSignalR ?? NaN,
      },
    };
  });
  const byCellEvent = new Map<string, ResponseInput>();
  for (const x of r.responses) {
    const key = `${x.cell}\u0000${x.event}`;
    const prev = byCellEvent.get(key);
    const cond = {
      label: x.condition, times: x.matrix.offsets, mean: x.band.estimate, low: x.band.low, high: x.band.high, n: x.matrix.rows,
      runs: x.runs.map((run) => ({ onset: run.onsetSec, offset: run.offsetSec, sign: run.sign })),
    };
    if (prev) byCellEvent.set(key, { ...prev, conditions: [...prev.conditions, cond] });
    else byCellEvent.set(key, {
      cell: x.cell, event: x.event, level: x.band.confidenceLevel, conditions: [cond],
      valueLabel: x.kind === 'site' ? 'z(ΔF/F) − baseline' : 'rate − baseline', unit: x.kind === 'site' ? '' : 'Hz',
    });
  }
  // Outcome-locked trials of each site sorted by RPE.
  const heatmaps: TrialHeatmapInput[] = [];
  const rpeAt = new Map<number, number>();
  if (r.learning) r.trials.outcomeTime.forEach((t, k) => { if (Number.isFinite(t)) rpeAt.set(t, r.learning!.regressors.rpe[k]!); });
  for (const s of r.sites) {
    const parts = r.responses.filter((x) => x.cell === s.name && x.event === 'outcome');
    if (!parts.length || !r.learning) continue;
    const cols = parts[0]!.matrix.cols;
    const rows = parts.reduce((a, x) => a + x.matrix.rows, 0);
    const data = new Float64Array(rows * cols);
    const key = new Float64Array(rows);
    let at = 0;
    for (const x of parts) {
      data.set(x.matrix.data.subarray(0, x.matrix.rows * cols), at * cols);
      x.eventTimes.forEach((t, i) => { key[at + i] = rpeAt.get(t) ?? NaN; });
      at += x.matrix.rows;
    }
    heatmaps.push({ cell: s.name, event: 'outcome', matrix: { data, rows, cols }, times: parts[0]!.matrix.offsets, sortBy: { label: 'RPE', values: key }, valueLabel: 'z(ΔF/F)' });
  }
  const rasters: RasterInput[] = [];
  for (const u of session.units) {
    const x = r.responses.find((y) => y.cell === u.name && y.event === 'outcome');
    if (!x) continue;
    const pre = -x.matrix.offsets[0]!;
    const post = x.matrix.offsets[x.matrix.cols - 1]!;
    const trials = Array.from(x.eventTimes, (t) => relativeSpikes(u.times, t, -pre, post));
    rasters.push({ unit: u.name, event: `outcome (${x.condition})`, window: [-pre, post], trials, peth: { times: x.matrix.offsets, rate: x.band.estimate, low: x.band.low, high: x.band.high } });
  }
  const kernels: KernelInput[] = [];
  let tuning: TuningInput | undefined;
  if (r.encoding) {
    const fit = r.encoding.result.fit;
    for (const c of fit.cells) {
      const groups = new Map<string, { label: string; lags: Float64Array; estimate: Float64Array; low: Float64Array; high: Float64Array }[]>();
      for (const k of c.kernels) {
        const list = groups.get(k.group) ?? [];
        list.push({ label: k.term, lags: k.lagsSec, estimate: k.estimate, low: k.low, high: k.high });
        groups.set(k.group, list);
      }
      kernels.push({ cell: c.name, groups: [...groups].map(([group, ks]) => ({ group, kernels: ks })) });
    }
    const gi = (name: string) => fit.groups.indexOf(name);
    const classes = r.encoding.result.classes.cells;
    const cells = fit.cells.map((c, i) => ({
      cell: c.name, kind: session.units.some((u) => u.name === c.name) ? 'unit' : 'site',
      rewardUnique: gi('reward') >= 0 ? c.deltaR2[gi('reward')]! : NaN, movementUnique: gi('movement') >= 0 ? c.deltaR2[gi('movement')]! : NaN,
      class: classes[i]!.class, sign: classes[i]!.sign,
    }));
    const counts = new Map<string, number>();
    for (const c of cells) counts.set(c.class, (counts.get(c.class) ?? 0) + 1);
    tuning = { cells, counts: [...counts].map(([cls, count]) => ({ class: cls, count })) };
  }
  return {
    session: session.id, qc, responses: [...byCellEvent.values()], heatmaps, rasters, kernels,
    ...(tuning ? { tuning } : {}),
    tables: [...(r.clocks.length > 0 ? [clockReportTable(r)] : []), {
      caption: 'Peri-event bands: what each assumes',
      columns: [{ key: 'what', label: 'bands' }, { key: 'assumptions', label: 'assumptions' }],
      rows: [{ what: 'all peri-event bands', assumptions: o.assumptions }],
    }],
    warnings: r.warnings, provenance: o.provenance,
  };
}

/** Spike times in [t + from, t + to] relative to t (binary search; spikes sorted). */
function relativeSpikes(spikes: Float64Array, t: number, from: number, to: number): Float64Array {
  let lo = 0, hi = spikes.length;
  while (lo < hi) { const m = (lo + hi) >> 1; if (spikes[m]! < t + from) lo = m + 1; else hi = m; }
  let end = lo;
  while (end < spikes.length && spikes[end]! <= t + to) end++;
  return Float64Array.from(spikes.subarray(lo, end), (s) => s - t);
}

/** One row per clock piece of every device whose events were mapped onto the session clock. */
function clockSyncColumns(r: Partial): Record<string, Col> {
  const rows = r.clocks.flatMap((c) => c.map.pieces.map((p, k) => ({ c, p, k })));
  const num = (f: (x: (typeof rows)[number]) => number) => Float64Array.from(rows, f);
  return {
    source: rows.map((x) => x.c.source),
    piece: num((x) => x.k),
    offset_s: num((x) => x.p.offsetSec),
    slope: num((x) => x.p.slope),
    drift_ppm: num((x) => x.p.driftPpm),
    device_start_s: num((x) => x.p.deviceStart),
    device_end_s: num((x) => x.p.deviceEnd),
    pairs: num((x) => x.p.nPairs),
    rms_residual_ms: num((x) => x.p.rmsResidualSec * 1e3),
    max_residual_ms: num((x) => x.p.maxResidualSec * 1e3),
    unmatched_reference: num((x) => x.c.map.unmatchedReference.length),
    unmatched_device: num((x) => x.c.map.unmatchedDevice.length),
    events_mapped: num((x) => x.c.mapped),
    events_outside: num((x) => x.c.outside),
  };
}

/** The report's view of the same rows. */
function clockReportTable(r: Partial): ReportTable {
  return {
    caption: 'Other devices on the session clock: one row per clock piece (drift, residuals of the sync pulses, events mapped)',
    columns: [
      { key: 'source', label: 'events from' }, { key: 'piece', label: 'piece' }, { key: 'drift', label: 'drift (ppm)', decimals: 2 },
      { key: 'pairs', label: 'sync pairs' }, { key: 'rms', label: 'RMS residual (ms)', decimals: 3 }, { key: 'max', label: 'max residual (ms)', decimals: 3 },
      { key: 'mapped', label: 'events mapped' }, { key: 'outside', label: 'left out (outside sync)' },
    ],
    rows: r.clocks.flatMap((c) => c.map.pieces.map((p, k) => ({
      source: c.source, piece: k, drift: p.driftPpm, pairs: p.nPairs, rms: p.rmsResidualSec * 1e3, max: p.maxResidualSec * 1e3, mapped: c.mapped, outside: c.outside,
    }))),
  };
}

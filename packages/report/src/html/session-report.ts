import { resolveOptions, TuningforkError, VERSION, type Provenance } from '@tuningfork/core';
import { classCountsFigure } from '../figures/class-counts-figure.js';
import { kernelFigure } from '../figures/kernel-figure.js';
import { periEventFigure } from '../figures/peri-event-figure.js';
import { qcFigure } from '../figures/qc-figure.js';
import { rasterFigure } from '../figures/raster-figure.js';
import { trialHeatmapFigure } from '../figures/trial-heatmap-figure.js';
import { tuningMapFigure } from '../figures/tuning-map-figure.js';
import { classStyle } from '../primitives/color.js';
import type { ReportTable, SessionReportInput, TuningCell } from '../types.js';
import { figureBlock, htmlPage, type PageSection } from './page.js';
import { provenanceBlock, warningsBlock } from './provenance-block.js';
import { htmlTable } from './table.js';

/** Options of sessionReport. */
export interface SessionReportOptions {
  /** Spikes above which rasters become bitmaps (see rasterFigure). @defaultValue 5000 */
  maxVectorSpikes?: number;
}

const DEFAULTS = Object.freeze({ maxVectorSpikes: 5000 });

/** The QC metrics of all sites as one table (union of metric names, in first-seen order). */
function qcTable(input: SessionReportInput): ReportTable | null {
  const sites = input.qc ?? [];
  const names: string[] = [];
  for (const s of sites) for (const k of Object.keys(s.metrics ?? {})) if (!names.includes(k)) names.push(k);
  if (!names.length) return null;
  return {
    caption: 'QC metrics per site',
    columns: [{ key: '__site', label: 'site', type: 'text' }, ...names.map((n, j) => ({ key: `m${j}`, label: n, type: 'number' as const }))],
    rows: sites.map((s) => {
      const row: Record<string, string | number> = { __site: s.site };
      names.forEach((n, j) => {
        const v = s.metrics?.[n];
        if (v !== undefined) row[`m${j}`] = v;
      });
      return row;
    }),
  };
}

/** Table of tuning cells: name, (session), kind, class, sign, unique ΔR² values. */
export function tuningTable(cells: readonly TuningCell[], caption: string, withSession: boolean): ReportTable {
  return {
    caption,
    columns: [
      ...(withSession ? [{ key: 'session', label: 'session', type: 'text' as const }] : []),
      { key: 'cell', label: 'cell', type: 'text' },
      { key: 'kind', label: 'kind', type: 'text' },
      { key: 'class', label: 'class', type: 'text' },
      { key: 'sign', label: 'sign', type: 'text' },
      { key: 'reward', label: 'unique ΔR², reward', type: 'number', decimals: 4 },
      { key: 'movement', label: 'unique ΔR², movement', type: 'number', decimals: 4 },
    ],
    rows: cells.map((c) => ({
      ...(withSession ? { session: c.session ?? '' } : {}),
      cell: c.cell,
      kind: c.kind ?? '',
      class: classStyle(c.class).label,
      sign: c.sign > 0 ? '+' : c.sign < 0 ? '−' : '0',
      reward: c.rewardUnique,
      movement: c.movementUnique,
    })),
  };
}

/** Normalise one or many provenance records to a list. */
export function provenanceList(p: Provenance | readonly Provenance[]): readonly Provenance[] {
  return Array.isArray(p) ? (p as readonly Provenance[]) : [p as Provenance];
}

/**
 * A self-contained HTML report of one session: header (session, files), sections QC (one figure
 * per site and a metrics table), Responses (peri-event averages, sorted trial heatmaps, rasters with
 * PETHs), Models (fitted kernels per cell), Tuning (tuning map, class counts, sortable cell table),
 * extra tables, and Provenance (version, options, seed, input hashes). Sections without input are
 * left out.
 *
 * The page loads nothing: figures are inline SVG (heatmaps as data: PNGs), CSS and the sort script
 * are inline, and a Content-Security-Policy (REPORT_CSP) forbids any network load. Every
 * user-supplied string is escaped in HTML and in SVG. Figure ids: qc-i, response-i, heatmap-i,
 * raster-i, kernels-i, tuning-map, class-counts (each SVG also has data-figure = its kind).
 * Numbers are formatted, never recomputed: the report draws exactly what it is given.
 *
 * @param input - Session data and results (see SessionReportInput).
 * @returns The HTML document as a string (write it as UTF-8).
 * @throws {TuningforkError} TF_BAD_OPTION when provenance is missing; figure errors (e.g.
 *   TF_SHAPE_MISMATCH) name the figure's cell and event.
 */
export function sessionReport(input: SessionReportInput, options: SessionReportOptions = {}): string {
  const o = resolveOptions('sessionReport', DEFAULTS, options);
  if (!input.provenance) throw new TuningforkError('TF_BAD_OPTION', 'sessionReport: provenance is required (version, options, seed, input hashes).', {});
  const sections: PageSection[] = [];
  const prov = provenanceList(input.provenance);

  if (input.qc?.length) {
    const figs = input.qc.map((q, i) => figureBlock(qcFigure(q, { id: `qc-${i}` }), `Site ${q.site}. A: raw signal and fitted control. B: corrected trace (shaded: excerpt window). C: excerpt. D: power spectrum.`));
    const t = qcTable(input);
    sections.push({ id: 'qc', heading: 'Quality control', body: `<div class="figures">${figs.join('')}</div>${t ? htmlTable(t, 'qc-table') : ''}` });
  }

  const resp: string[] = [];
  if (input.responses?.length) {
    resp.push('<h3>Peri-event averages</h3><div class="figures">');
    input.responses.forEach((r, i) => {
      const lvl = r.level !== undefined ? `${Math.round(r.level * 1000) / 10}% ` : '';
      resp.push(figureBlock(periEventFigure(r, { id: `response-${i}` }), `${r.cell}, ${r.event}: mean per condition with ${lvl}interval band; bars under the axis mark significant runs.`));
    });
    resp.push('</div>');
  }
  if (input.heatmaps?.length) {
    resp.push('<h3>Trials sorted by per-trial variables</h3><div class="figures">');
    input.heatmaps.forEach((h, i) => resp.push(figureBlock(trialHeatmapFigure(h, { id: `heatmap-${i}` }), `${h.cell}, ${h.event}: one row per trial, sorted by ${h.sortBy.label} (ascending from the top; right strip shows its value).`)));
    resp.push('</div>');
  }
  if (input.rasters?.length) {
    resp.push('<h3>Units: rasters and PETHs</h3><div class="figures">');
    input.rasters.forEach((r, i) => resp.push(figureBlock(rasterFigure(r, { id: `raster-${i}`, maxVectorSpikes: o.maxVectorSpikes }), `${r.unit}, ${r.event}: spikes per trial (top) and firing rate (bottom).`)));
    resp.push('</div>');
  }
  if (resp.length) sections.push({ id: 'responses', heading: 'Responses', body: resp.join('') });

  if (input.kernels?.length) {
    const figs = input.kernels.map((k, i) => figureBlock(kernelFigure(k, { id: `kernels-${i}` }), `${k.cell}: fitted kernels per variable group with interval bands (shared y scale).`));
    sections.push({ id: 'models', heading: 'Models', body: `<div class="figures">${figs.join('')}</div>` });
  }

  if (input.tuning) {
    const parts = ['<div class="figures">', figureBlock(tuningMapFigure(input.tuning.cells, { id: 'tuning-map' }), 'Each cell at its unique reward and movement explained variance; colour and shape give the class, fill the sign.')];
    if (input.tuning.counts) parts.push(figureBlock(classCountsFigure(input.tuning.counts, { id: 'class-counts' }), 'Cells per class.'));
    parts.push('</div>', htmlTable(tuningTable(input.tuning.cells, 'Cells', false), 'tuning-table'));
    sections.push({ id: 'tuning', heading: 'Tuning', body: parts.join('') });
  }

  if (input.tables?.length) {
    sections.push({ id: 'tables', heading: 'Tables', body: input.tables.map((t, i) => htmlTable(t, `table-${i}`)).join('') });
  }

  sections.push({ id: 'provenance', heading: 'Provenance', body: warningsBlock(input.warnings) + provenanceBlock(prov) });

  const title = input.title ?? `tuningfork report: ${input.session}`;
  const sub = [`Session ${input.session}`];
  if (input.files?.length) sub.push(`Files: ${input.files.join(', ')}`);
  if (input.warnings?.length) sub.push(`${input.warnings.length} warning${input.warnings.length > 1 ? 's' : ''} (see Provenance)`);
  return htmlPage(title, sub, sections, `Made by tuningfork ${VERSION}. Self-contained: no network requests.`);
}

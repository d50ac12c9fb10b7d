import { checkPositive, checkRange, resolveOptions, TuningforkError } from '@tuningfork/core';
import { drawText } from '../primitives/annotate.js';
import { axisTitle, drawAxis } from '../primitives/axes.js';
import { COLOR_MAPS, INK } from '../primitives/color.js';
import { svgFigure } from '../primitives/figure.js';
import { colorLimitsInRange, drawColorBar, drawHeatmap } from '../primitives/heatmap.js';
import { drawRule } from '../primitives/marks.js';
import type { TrialHeatmapInput } from '../types.js';
import { finiteExtent, sortOrder } from '../internal/validate.js';
import { px } from '../internal/num.js';

/** Options of trialHeatmapFigure. */
export interface TrialHeatmapFigureOptions {
  /** @defaultValue 'trial-heatmap' */
  id?: string;
  /** @defaultValue 480 */
  width?: number;
  /** @defaultValue 360 */
  height?: number;
  /** Share of values inside the colour limits (see colorLimits). @defaultValue 0.99 */
  coverage?: number;
  /** Explicit colour limits [low, high]; null = from the data. @defaultValue null */
  limits?: readonly [number, number] | null;
}

const DEFAULTS = Object.freeze({ id: 'trial-heatmap', width: 480, height: 360, coverage: 0.99, limits: null as readonly [number, number] | null });

/**
 * Trial-by-time heatmap of one site or unit around an event, rows sorted by a per-trial variable
 * (e.g. RPE, APE, latency; ascending from the top, NaN rows last), with a side strip showing the
 * sorted variable and a colour bar. Signed data uses the diverging map centred on 0, unsigned the
 * sequential map; colour limits default to the central 99 % of values (clipped ends are marked on
 * the colour bar). Wide matrices are averaged to the pixel grid before embedding (see drawHeatmap).
 *
 * @returns SVG markup with data-figure="trial-heatmap".
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when times or sortBy.values do not match the matrix;
 *   TF_TOO_FEW_SAMPLES for a matrix without rows or columns; TF_UNKNOWN_OPTION, TF_BAD_OPTION.
 */
export function trialHeatmapFigure(input: TrialHeatmapInput, options: TrialHeatmapFigureOptions = {}): string {
  const fn = 'trialHeatmapFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'height', o.height);
  checkRange(fn, 'coverage', o.coverage, 0.5, 1);
  const m = input.matrix;
  if (m.rows < 1 || m.cols < 2) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${JSON.stringify(input.cell)} / ${JSON.stringify(input.event)} needs at least 1 trial and 2 time points, got ${m.rows} × ${m.cols}.`, { cell: input.cell, event: input.event });
  }
  if (m.data.length !== m.rows * m.cols) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: matrix data has ${m.data.length} values, expected ${m.rows} × ${m.cols}.`, { rows: m.rows, cols: m.cols });
  }
  if (input.times.length !== m.cols) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: times has ${input.times.length} values, expected one per column (${m.cols}).`, { times: input.times.length, cols: m.cols });
  }
  if (input.sortBy.values.length !== m.rows) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: sortBy.values (${JSON.stringify(input.sortBy.label)}) has ${input.sortBy.values.length} values, expected one per trial (${m.rows}).`, { sortBy: input.sortBy.values.length, rows: m.rows });
  }
  const W = o.width;
  const H = o.height;
  const title = `${input.cell} · ${input.event}, trials by ${input.sortBy.label}`;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'trial-heatmap', name: `${input.cell} / ${input.event}`, title, description: 'Trial-by-time heatmap sorted by a per-trial variable.' });
  fig.add(drawText(10, 18, title, { size: 13, weight: 'bold' }));

  const ext = finiteExtent([m.data]);
  const signed = input.signed ?? (ext !== null && ext[0] < 0 && ext[1] > 0);
  const map = signed ? COLOR_MAPS.diverging : COLOR_MAPS.sequential;
  let limits: [number, number];
  let clippedLow = false;
  let clippedHigh = false;
  if (o.limits) {
    if (!(o.limits[1] > o.limits[0])) throw new TuningforkError('TF_BAD_OPTION', `${fn}: limits must be [low, high] with low < high, got [${o.limits[0]}, ${o.limits[1]}].`, { limits: o.limits });
    limits = [o.limits[0], o.limits[1]];
    clippedLow = ext !== null && ext[0] < limits[0];
    clippedHigh = ext !== null && ext[1] > limits[1];
  } else {
    const cl = colorLimitsInRange(m.data, signed ? 'diverging' : 'sequential', o.coverage, ext?.[0] ?? Infinity, ext?.[1] ?? -Infinity);
    limits = cl.limits;
    clippedLow = cl.clippedLow;
    clippedHigh = cl.clippedHigh;
  }

  const left = 60;
  const top = 34;
  const bottom = 46;
  const cbW = 12;
  const stripW = 56;
  const cbSpace = 70;
  const hmW = W - left - 14 - stripW - 16 - cbSpace;
  const ph = H - top - bottom;
  const dt = (input.times[m.cols - 1]! - input.times[0]!) / (m.cols - 1);
  const x0 = input.times[0]! - dt / 2;
  const x1 = input.times[m.cols - 1]! + dt / 2;
  const order = sortOrder(input.sortBy.values);
  const pH = fig.panel({ left, top, width: hmW, height: ph }, { domain: [x0, x1] }, { domain: [0, m.rows], reversed: true });
  fig.add(
    drawHeatmap(pH, m, { colorMap: map, limits, x: [x0, x1], y: [0, m.rows], rowOrder: order }),
    drawRule(pH, 'x', 0, { color: INK, dash: '4 3', width: 1 }),
    `<rect x="${pH.left}" y="${pH.top}" width="${pH.width}" height="${pH.height}" fill="none" stroke="#222222" stroke-width="0.6"/>`,
    drawAxis(pH, 'left', { label: 'Trial', unit: `sorted by ${input.sortBy.label}` }),
    drawAxis(pH, 'bottom', { label: `Time from ${input.event}`, unit: 's' }),
  );

  // Side strip: the sorted key, one point per row at the row centre.
  const sorted = new Float64Array(m.rows);
  const rowsY = new Float64Array(m.rows);
  for (let i = 0; i < m.rows; i++) {
    sorted[i] = input.sortBy.values[order[i]!]!;
    rowsY[i] = i + 0.5;
  }
  const kExt = finiteExtent([sorted]);
  const sLeft = left + hmW + 14;
  if (kExt) {
    const pS = fig.panel({ left: sLeft, top, width: stripW, height: ph }, { domain: kExt, nice: true, tickCount: 2 }, { domain: [0, m.rows], reversed: true });
    // Draw as x = key, y = row: a line through the row centres.
    let d = '';
    let pen = false;
    for (let i = 0; i < m.rows; i++) {
      const X = pS.x.map(sorted[i]!);
      const Y = pS.y.map(rowsY[i]!);
      if (!Number.isFinite(X)) { pen = false; continue; }
      d += `${pen ? 'L' : 'M'}${px(X)} ${px(Y)}`;
      pen = true;
    }
    fig.add(
      drawRule(pS, 'x', 0, { color: '#9a9a9a', dash: '2 3' }),
      d ? `<path class="line sort-key" d="${d}" fill="none" stroke="${INK}" stroke-width="1.3" clip-path="url(#${pS.clipId})"/>` : '',
      `<rect x="${pS.left}" y="${pS.top}" width="${pS.width}" height="${pS.height}" fill="none" stroke="#222222" stroke-width="0.6"/>`,
      drawAxis(pS, 'bottom', { label: input.sortBy.label, unit: input.sortBy.unit ?? '' }),
    );
  }
  const cbLeft = sLeft + stripW + 16;
  fig.add(drawColorBar({ left: cbLeft, top: top + 12, width: cbW, height: ph - 24 }, map, limits, { label: axisTitle(input.valueLabel ?? 'ΔF/F', ''), unit: input.unit ?? '', extendLow: clippedLow, extendHigh: clippedHigh }));
  return fig.render();
}

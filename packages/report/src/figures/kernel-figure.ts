import { checkInteger, checkPositive, resolveOptions, TuningforkError } from '@tuningfork/core';
import { drawText } from '../primitives/annotate.js';
import { drawAxis } from '../primitives/axes.js';
import { CONDITION_COLORS } from '../primitives/color.js';
import { svgFigure } from '../primitives/figure.js';
import { drawLegend, measureLegend, type LegendItem } from '../primitives/legend.js';
import { drawBand, drawLine, drawRule } from '../primitives/marks.js';
import { niceDomain } from '../primitives/scale.js';
import type { KernelInput } from '../types.js';
import { checkLengths, finiteExtent } from '../internal/validate.js';

/** Options of kernelFigure. */
export interface KernelFigureOptions {
  /** @defaultValue 'kernels' */
  id?: string;
  /** Width, px; panel sizes follow. @defaultValue 760 */
  width?: number;
  /** Height of one row of panels, px. @defaultValue 190 */
  rowHeight?: number;
  /** Panels per row. @defaultValue 4 */
  columns?: number;
}

const DEFAULTS = Object.freeze({ id: 'kernels', width: 760, rowHeight: 190, columns: 4 });

/**
 * Fitted kernels of one site or unit as small multiples: one panel per variable group, each
 * kernel a line over its interval band, all panels on one shared y scale (so weights compare
 * across groups, labelled on the first column only) with a zero line. Panels with several
 * kernels carry their own legend.
 *
 * @returns SVG markup with data-figure="kernels".
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when a kernel's arrays differ in length;
 *   TF_TOO_FEW_SAMPLES when there is no group; TF_UNKNOWN_OPTION, TF_BAD_OPTION.
 */
export function kernelFigure(input: KernelInput, options: KernelFigureOptions = {}): string {
  const fn = 'kernelFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'rowHeight', o.rowHeight);
  checkInteger(fn, 'columns', o.columns, 1, 12);
  const groups = input.groups;
  if (groups.length === 0) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${JSON.stringify(input.cell)} has no kernel group to draw.`, { cell: input.cell });
  }
  groups.forEach((g) => g.kernels.forEach((k) => checkLengths(fn, `kernel ${g.group}/${k.label}`, { lags: k.lags, estimate: k.estimate, low: k.low, high: k.high })));
  const cols = Math.min(o.columns, groups.length);
  const nRows = Math.ceil(groups.length / cols);
  const W = o.width;
  const left0 = 66;
  const gap = 22;
  const cellW = (W - left0 - 12 - gap * (cols - 1)) / cols;
  const legendOpts = { maxWidth: cellW, fontSize: 10 };
  const legendH = Math.max(0, ...groups.map((g) => (g.kernels.length > 1 ? measureLegend(legendItems(g.kernels.map((k) => k.label)), legendOpts).height : 0)));
  const headH = 34;
  const rowH = o.rowHeight + legendH;
  const H = headH + nRows * rowH + 8;
  const title = `${input.cell} · fitted kernels`;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'kernels', name: input.cell, title, description: 'Fitted kernels per variable group with interval bands.' });
  fig.add(drawText(10, 18, title, { size: 13, weight: 'bold' }));
  const yExt = finiteExtent(groups.flatMap((g) => g.kernels.flatMap((k) => [k.low, k.high, k.estimate]))) ?? [-1, 1];
  const yDom = niceDomain(Math.min(0, yExt[0]), Math.max(0, yExt[1]), 4).domain;
  groups.forEach((g, gi) => {
    const r = Math.floor(gi / cols);
    const c = gi % cols;
    const left = left0 + c * (cellW + gap);
    const top0 = headH + r * rowH;
    fig.add(drawText(left, top0 + 10, g.group, { size: 12, weight: 'bold' }));
    const top = top0 + 18 + legendH;
    if (g.kernels.length > 1) fig.add(drawLegend(legendItems(g.kernels.map((k) => k.label)), { left: left - 2, top: top0 + 14, ...legendOpts }).svg);
    const ph = rowH - (top - top0) - 42;
    const xExt = finiteExtent(g.kernels.map((k) => k.lags)) ?? [0, 1];
    const p = fig.panel({ left, top, width: cellW, height: ph }, { domain: xExt, tickCount: 4 }, { domain: yDom, tickCount: 4 });
    fig.add(drawRule(p, 'y', 0, { color: '#9a9a9a', dash: '2 3' }), drawRule(p, 'x', 0, { color: '#bbbbbb', dash: '2 3' }));
    g.kernels.forEach((k, ki) => fig.add(drawBand(p, k.lags, k.low, k.high, { color: CONDITION_COLORS[ki % CONDITION_COLORS.length]!, opacity: 0.2 })));
    g.kernels.forEach((k, ki) => fig.add(drawLine(p, k.lags, k.estimate, { color: CONDITION_COLORS[ki % CONDITION_COLORS.length]!, width: 1.7 })));
    fig.add(
      drawAxis(p, 'left', c === 0 ? { label: input.valueLabel ?? 'Weight', unit: input.unit ?? '' } : { tickLabels: false }),
      drawAxis(p, 'bottom', { label: 'Lag', unit: 's' }),
    );
  });
  return fig.render();
}

function legendItems(labels: readonly string[]): LegendItem[] {
  return labels.map((l, i) => ({ label: l, color: CONDITION_COLORS[i % CONDITION_COLORS.length]!, kind: 'band' as const }));
}

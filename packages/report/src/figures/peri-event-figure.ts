import { checkPositive, resolveOptions, TuningforkError } from '@tuningfork/core';
import { drawText } from '../primitives/annotate.js';
import { drawAxis } from '../primitives/axes.js';
import { CONDITION_COLORS, INK } from '../primitives/color.js';
import { svgFigure } from '../primitives/figure.js';
import { formatTick } from '../primitives/format.js';
import { drawLegend, type LegendItem } from '../primitives/legend.js';
import { drawBand, drawLine, drawRule, drawRunBars } from '../primitives/marks.js';
import type { ResponseInput } from '../types.js';
import { checkLengths, finiteExtent } from '../internal/validate.js';

/** Options of periEventFigure. */
export interface PeriEventFigureOptions {
  /** Element id, unique in the page. @defaultValue 'peri-event' */
  id?: string;
  /** @defaultValue 420 */
  width?: number;
  /** @defaultValue 320 */
  height?: number;
}

const DEFAULTS = Object.freeze({ id: 'peri-event', width: 420, height: 320 });

/**
 * Peri-event average of one site or unit: each condition's mean as a line over its interval band
 * (e.g. a bootstrap CI), conditions overlaid in the categorical palette, and each condition's
 * significant runs as a row of bars under the plot (filled: above baseline; open: below).
 * A dashed vertical line marks the event (t = 0). The legend gives each condition's n and the
 * interval level when known.
 *
 * @param input - Cell and event names, units and conditions.
 * @returns SVG markup with data-figure="peri-event".
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when a condition's arrays differ in length;
 *   TF_TOO_FEW_SAMPLES when there is no condition; TF_UNKNOWN_OPTION, TF_BAD_OPTION.
 */
export function periEventFigure(input: ResponseInput, options: PeriEventFigureOptions = {}): string {
  const fn = 'periEventFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'height', o.height);
  if (input.conditions.length === 0) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: ${JSON.stringify(input.cell)} / ${JSON.stringify(input.event)} has no condition to draw.`, { cell: input.cell, event: input.event });
  }
  input.conditions.forEach((c, i) => checkLengths(fn, `condition ${i} (${c.label})`, { times: c.times, mean: c.mean, low: c.low, high: c.high }));
  const W = o.width;
  const H = o.height;
  const title = `${input.cell} · ${input.event}`;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'peri-event', name: `${input.cell} / ${input.event}`, title, description: 'Peri-event average with interval bands and significant runs.' });
  fig.add(drawText(10, 18, title, { size: 13, weight: 'bold' }));

  const left = 66;
  const right = 14;
  const level = input.level !== undefined && Number.isFinite(input.level) ? ` ${formatTick(Math.round(input.level * 1000) / 10, 0.1).replace(/\.0$/, '')}% CI` : '';
  const items: LegendItem[] = input.conditions.map((c, i) => ({
    label: `${c.label}${c.n !== undefined ? ` (n = ${c.n})` : ''}`,
    color: CONDITION_COLORS[i % CONDITION_COLORS.length]!,
    kind: 'band' as const,
  }));
  const anyRuns = input.conditions.some((c) => (c.runs?.length ?? 0) > 0);
  if (anyRuns) {
    items.push({ label: 'significant, above', color: INK, kind: 'bar' }, { label: 'below', color: INK, kind: 'bar', filled: false });
  }
  const legend = drawLegend(items, { left: left - 4, top: 24, maxWidth: W - left });
  fig.add(legend.svg);
  const top = 24 + legend.height + 8;
  const stripRow = 7;
  const strip = anyRuns ? input.conditions.length * stripRow + 6 : 0;
  const bottom = 44 + strip;
  const ph = H - top - bottom;
  const xExt = finiteExtent(input.conditions.map((c) => c.times)) ?? [0, 1];
  const yExt = finiteExtent(input.conditions.flatMap((c) => [c.low, c.high, c.mean])) ?? [0, 1];
  const p = fig.panel({ left, top, width: W - left - right, height: ph }, { domain: xExt }, { domain: [Math.min(yExt[0], 0), Math.max(yExt[1], 0)], nice: true, tickCount: 5 });
  fig.add(drawRule(p, 'y', 0, { color: '#9a9a9a', dash: '2 3' }), drawRule(p, 'x', 0, { color: '#555555', dash: '4 3' }));
  input.conditions.forEach((c, i) => {
    fig.add(drawBand(p, c.times, c.low, c.high, { color: CONDITION_COLORS[i % CONDITION_COLORS.length]!, opacity: 0.2 }));
  });
  input.conditions.forEach((c, i) => {
    fig.add(drawLine(p, c.times, c.mean, { color: CONDITION_COLORS[i % CONDITION_COLORS.length]!, width: 1.8 }));
  });
  if (anyRuns) {
    input.conditions.forEach((c, i) => {
      fig.add(drawRunBars(p, c.runs ?? [], { top: top + ph + 5 + i * stripRow, height: 4, color: CONDITION_COLORS[i % CONDITION_COLORS.length]! }));
    });
  }
  fig.add(
    drawAxis(p, 'left', { label: input.valueLabel ?? 'ΔF/F', unit: input.unit ?? '' }),
    drawAxis(p, 'bottom', { label: `Time from ${input.event}`, unit: 's', offset: strip }),
  );
  if (level) fig.add(drawText(W - right, top - 3, `bands:${level}`, { anchor: 'end', size: 10, color: '#666666' }));
  return fig.render();
}

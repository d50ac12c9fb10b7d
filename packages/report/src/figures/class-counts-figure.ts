import { checkPositive, resolveOptions, TuningforkError } from '@tuningfork/core';
import { drawText } from '../primitives/annotate.js';
import { drawAxis } from '../primitives/axes.js';
import { svgFigure } from '../primitives/figure.js';
import { markerPath } from '../primitives/marker.js';
import { drawBars } from '../primitives/marks.js';
import { niceStep, ticksAt, type Tick } from '../primitives/scale.js';
import { escapeXml } from '../primitives/escape.js';
import type { ClassCount } from '../types.js';
import { classesPresent } from './tuning-map-figure.js';
import { px } from '../internal/num.js';

/** Options of classCountsFigure. */
export interface ClassCountsFigureOptions {
  /** @defaultValue 'class-counts' */
  id?: string;
  /** @defaultValue 420 */
  width?: number;
  /** @defaultValue 280 */
  height?: number;
  /** @defaultValue 'Cells per class' */
  title?: string;
}

const DEFAULTS = Object.freeze({ id: 'class-counts', width: 420, height: 280, title: 'Cells per class' });

/**
 * Bar chart of the number of cells per class (counts as given), bars in the class colours, each
 * labelled with its count and with the class marker under its name, classes in CLASS_ORDER then
 * order of appearance. The count axis has whole-number ticks.
 *
 * @returns SVG markup with data-figure="class-counts".
 * @throws {TuningforkError} TF_BAD_VALUE for a negative or non-integer count; TF_UNKNOWN_OPTION, TF_BAD_OPTION.
 */
export function classCountsFigure(counts: readonly ClassCount[], options: ClassCountsFigureOptions = {}): string {
  const fn = 'classCountsFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'height', o.height);
  counts.forEach((c, i) => {
    if (!Number.isInteger(c.count) || c.count < 0) {
      throw new TuningforkError('TF_BAD_VALUE', `${fn}: counts[${i}] (class ${JSON.stringify(c.class)}) must be a whole number ≥ 0, got ${c.count}.`, { index: i, count: c.count });
    }
  });
  const W = o.width;
  const H = o.height;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'class-counts', title: o.title, description: 'Number of cells in each class.' });
  fig.add(drawText(10, 18, o.title, { size: 13, weight: 'bold' }));
  const classes = classesPresent(counts.map((c) => c.class));
  const total = new Map<string, number>();
  for (const c of counts) total.set(c.class, (total.get(c.class) ?? 0) + c.count);
  const values = classes.map((c) => total.get(c.name) ?? 0);
  const maxV = Math.max(1, ...values);
  const step = Math.max(1, niceStep(maxV, 4));
  const top = Math.ceil((maxV * 1.12) / step) * step;
  const left = 56;
  const ptop = 34;
  const pb = 58;
  const n = Math.max(1, classes.length);
  const p = fig.panel({ left, top: ptop, width: W - left - 14, height: H - ptop - pb }, { domain: [0, n] }, { domain: [0, top] });
  const ticks: Tick[] = Array.from(ticksAt(0, top, step), (v) => ({ value: v, label: String(v), minor: false }));
  const xs = classes.map((_, i) => i + 0.5);
  fig.add(drawBars(p, xs, values, { width: 0.62, colors: classes.map((c) => c.style.color) }));
  classes.forEach((c, i) => {
    const x = p.x.map(xs[i]!);
    fig.add(
      `<text class="count" x="${px(x)}" y="${px(p.y.map(values[i]!) - 4)}" text-anchor="middle" data-value="${values[i]}">${values[i]}</text>`,
      `<path d="${markerPath(c.style.shape, x, p.top + p.height + 12, 8)}" fill="${c.style.shape === 'cross' || c.style.shape === 'plus' ? 'none' : c.style.color}" stroke="${c.style.shape === 'cross' || c.style.shape === 'plus' ? c.style.color : '#ffffff'}" stroke-width="${c.style.shape === 'cross' || c.style.shape === 'plus' ? 1.6 : 0.8}"/>`,
      `<text x="${px(x)}" y="${px(p.top + p.height + 32)}" text-anchor="middle">${escapeXml(c.style.label)}</text>`,
    );
  });
  fig.add(
    `<path d="M${px(p.left)} ${px(p.top + p.height)}h${px(p.width)}" stroke="#222222" fill="none"/>`,
    drawAxis(p, 'left', { label: 'Cells', ticks }),
  );
  if (!classes.length) fig.add(drawText(p.left + p.width / 2, p.top + p.height / 2, 'no classified cells', { anchor: 'middle', color: '#777777' }));
  return fig.render();
}

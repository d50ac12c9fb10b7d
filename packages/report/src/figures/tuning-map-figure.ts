import { checkPositive, resolveOptions } from '@tuningfork/core';
import { drawText } from '../primitives/annotate.js';
import { drawAxis } from '../primitives/axes.js';
import { classStyle, INK, type ClassStyle } from '../primitives/color.js';
import { svgFigure } from '../primitives/figure.js';
import { drawLegend, type LegendItem } from '../primitives/legend.js';
import { drawMarkers, drawRule } from '../primitives/marks.js';
import { niceDomain } from '../primitives/scale.js';
import { formatNumber } from '../primitives/format.js';
import type { TuningCell } from '../types.js';
import { finiteExtent } from '../internal/validate.js';
import { px } from '../internal/num.js';

/** Built-in class order in legends and bar charts; other classes follow in order of appearance. */
export const CLASS_ORDER: readonly string[] = Object.freeze(['reward', 'movement', 'mixed', 'action-prediction', 'none']);

/** Classes present, in CLASS_ORDER then first appearance, each with its style. */
export function classesPresent(names: readonly string[]): { name: string; style: ClassStyle }[] {
  const seen = new Set(names);
  const out: { name: string; style: ClassStyle }[] = [];
  for (const c of CLASS_ORDER) if (seen.has(c)) out.push({ name: c, style: classStyle(c) });
  let extra = 0;
  const done = new Set(CLASS_ORDER);
  for (const c of names) {
    if (done.has(c)) continue;
    done.add(c);
    out.push({ name: c, style: classStyle(c, extra++) });
  }
  return out;
}

/** Options of tuningMapFigure. */
export interface TuningMapFigureOptions {
  /** @defaultValue 'tuning-map' */
  id?: string;
  /** @defaultValue 500 */
  width?: number;
  /** @defaultValue 345 */
  height?: number;
  /** Title. @defaultValue 'Tuning map' */
  title?: string;
}

const DEFAULTS = Object.freeze({ id: 'tuning-map', width: 500, height: 345, title: 'Tuning map' });

/**
 * Tuning map: each cell at (unique reward ΔR², unique movement ΔR²), its class shown by colour
 * AND marker shape (CLASS_STYLES), its sign by fill (filled: positive response, open: negative).
 * Both axes share one scale, with the identity diagonal dashed and the zero lines dotted.
 * Hovering a marker in a browser shows the cell name, class and both values. Cells with a
 * non-finite coordinate are left out and counted in a note.
 *
 * @returns SVG markup with data-figure="tuning-map".
 * @throws {TuningforkError} TF_UNKNOWN_OPTION, TF_BAD_OPTION.
 */
export function tuningMapFigure(cells: readonly TuningCell[], options: TuningMapFigureOptions = {}): string {
  const fn = 'tuningMapFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'height', o.height);
  const W = o.width;
  const H = o.height;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'tuning-map', title: o.title, description: 'Unique reward versus unique movement explained variance per cell; class by colour and shape.' });
  fig.add(drawText(10, 18, o.title, { size: 13, weight: 'bold' }));
  const classes = classesPresent(cells.map((c) => c.class));
  const items: LegendItem[] = classes.map((c) => ({ label: c.style.label, color: c.style.color, kind: 'marker', shape: c.style.shape }));
  items.push({ label: 'positive', color: INK, kind: 'marker', shape: 'circle' }, { label: 'negative', color: INK, kind: 'marker', shape: 'circle', filled: false });
  const legendW = 150;
  const left = 70;
  const top = 32;
  const side = Math.max(60, Math.min(W - left - legendW - 20, H - top - 52));
  const xs = cells.map((c) => c.rewardUnique);
  const ys = cells.map((c) => c.movementUnique);
  const ext = finiteExtent([xs, ys]) ?? [0, 0.1];
  const dom = niceDomain(Math.min(0, ext[0]), Math.max(ext[1], 1e-3), 5).domain;
  const p = fig.panel({ left, top, width: side, height: side }, { domain: dom }, { domain: dom });
  fig.add(
    `<rect x="${px(p.left)}" y="${px(p.top)}" width="${px(side)}" height="${px(side)}" fill="none" stroke="#dddddd"/>`,
    drawRule(p, 'x', 0, { color: '#aaaaaa', dash: '1 3' }),
    drawRule(p, 'y', 0, { color: '#aaaaaa', dash: '1 3' }),
    `<path class="diagonal" d="M${px(p.x.map(dom[0]))} ${px(p.y.map(dom[0]))}L${px(p.x.map(dom[1]))} ${px(p.y.map(dom[1]))}" stroke="#bbbbbb" stroke-dasharray="5 4" fill="none"/>`,
  );
  let dropped = 0;
  for (const cl of classes) {
    for (const filled of [true, false]) {
      const sel = cells.filter((c) => c.class === cl.name && (c.sign < 0 ? !filled : filled));
      const keep = sel.filter((c) => Number.isFinite(c.rewardUnique) && Number.isFinite(c.movementUnique));
      if (filled) dropped += cells.filter((c) => c.class === cl.name).length - cells.filter((c) => c.class === cl.name && Number.isFinite(c.rewardUnique) && Number.isFinite(c.movementUnique)).length;
      if (!keep.length) continue;
      fig.add(drawMarkers(p, keep.map((c) => c.rewardUnique), keep.map((c) => c.movementUnique), {
        shape: cl.style.shape,
        color: cl.style.color,
        size: 8,
        filled,
        titles: keep.map((c) => `${c.session ? `${c.session} / ` : ''}${c.cell}: ${cl.style.label}, ΔR² reward ${formatNumber(c.rewardUnique)}, movement ${formatNumber(c.movementUnique)}`),
      }));
    }
  }
  fig.add(
    drawAxis(p, 'left', { label: 'Unique ΔR², movement' }),
    drawAxis(p, 'bottom', { label: 'Unique ΔR², reward' }),
  );
  const lg = drawLegend(items, { left: left + side + 22, top: top, direction: 'column' });
  fig.add(lg.svg);
  const notes = [`${cells.length - dropped} cells`];
  if (dropped) notes.push(`${dropped} without values not shown`);
  fig.add(drawText(left + side + 22, top + lg.height + 14, notes.join('; '), { size: 10, color: '#666666' }));
  return fig.render();
}

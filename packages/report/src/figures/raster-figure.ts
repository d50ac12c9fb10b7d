import { checkPositive, resolveOptions, TuningforkError } from '@tuningfork/core';
import { drawText } from '../primitives/annotate.js';
import { drawAxis } from '../primitives/axes.js';
import { INK, PALETTE } from '../primitives/color.js';
import { svgFigure, type Panel } from '../primitives/figure.js';
import { drawBand, drawLine, drawRule } from '../primitives/marks.js';
import { encodePng, pngDataUrl } from '../primitives/png.js';
import type { RasterInput } from '../types.js';
import { checkLengths, finiteExtent, sortOrder } from '../internal/validate.js';
import { px } from '../internal/num.js';

/** Options of rasterFigure. */
export interface RasterFigureOptions {
  /** @defaultValue 'raster' */
  id?: string;
  /** @defaultValue 420 */
  width?: number;
  /** @defaultValue 380 */
  height?: number;
  /** Up to this many spikes are drawn as vector ticks; more are drawn as a bitmap on the pixel grid. @defaultValue 5000 */
  maxVectorSpikes?: number;
}

const DEFAULTS = Object.freeze({ id: 'raster', width: 420, height: 380, maxVectorSpikes: 5000 });

/** Spike ticks of all trials as one path (row i spans [i, i+1) on the reversed y axis). */
function vectorRaster(p: Panel, trials: readonly Float64Array[], order: ArrayLike<number>, window: readonly [number, number]): string {
  let d = '';
  const n = trials.length;
  for (let i = 0; i < n; i++) {
    const t = trials[order[i]!]!;
    const y0 = p.y.map(i + 0.1);
    const h = p.y.map(i + 0.9) - y0;
    for (let k = 0; k < t.length; k++) {
      const s = t[k]!;
      if (!(s >= window[0] && s <= window[1])) continue;
      d += `M${px(p.x.map(s))} ${px(y0)}v${px(h)}`;
    }
  }
  return d ? `<path class="spikes" d="${d}" stroke="${INK}" stroke-width="1" fill="none"/>` : '';
}

/** Spikes as a 2-colour bitmap: one column per pixel, one row per trial (or per pixel row pair when there are many trials). */
function bitmapRaster(p: Panel, trials: readonly Float64Array[], order: ArrayLike<number>, window: readonly [number, number]): string {
  const n = trials.length;
  const cols = Math.max(1, Math.ceil(p.width));
  const rows = n <= 2 * Math.ceil(p.height) ? n : Math.ceil(2 * p.height);
  const pix = new Uint8Array(cols * rows);
  const k = cols / (window[1] - window[0]);
  for (let i = 0; i < n; i++) {
    const r = Math.min(rows - 1, Math.floor((i * rows) / n));
    const t = trials[order[i]!]!;
    for (let j = 0; j < t.length; j++) {
      const s = t[j]!;
      if (!(s >= window[0] && s <= window[1])) continue;
      const c = Math.min(cols - 1, Math.floor((s - window[0]) * k));
      pix[r * cols + c] = 1;
    }
  }
  const png = encodePng({ width: cols, height: rows, pixels: pix, palette: Uint8Array.of(255, 255, 255, 0x22, 0x22, 0x22), bitDepth: 1 });
  const crisp = rows <= p.height + 0.5;
  return `<image class="spikes" x="${px(p.left)}" y="${px(p.top)}" width="${px(p.width)}" height="${px(p.height)}" preserveAspectRatio="none"${crisp ? ' image-rendering="optimizeSpeed" style="image-rendering:pixelated"' : ''} xlink:href="${pngDataUrl(png)}"/>`;
}

/**
 * Spike raster of one unit around an event (one row per trial, optionally sorted by a per-trial
 * variable, NaN last) above its peri-event time histogram (rate in Hz, with its interval band when
 * given), sharing the time axis. Up to `maxVectorSpikes` spikes are vector ticks; beyond that the
 * raster is a bitmap with one column per pixel, so the size is bounded by the figure, not the data.
 *
 * @returns SVG markup with data-figure="raster".
 * @throws {TuningforkError} TF_BAD_OPTION for a window with end ≤ start; TF_SHAPE_MISMATCH for PETH
 *   arrays of unequal length or a sort key not one per trial; TF_UNKNOWN_OPTION.
 */
export function rasterFigure(input: RasterInput, options: RasterFigureOptions = {}): string {
  const fn = 'rasterFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'height', o.height);
  const win = input.window;
  if (!Number.isFinite(win[0]) || !Number.isFinite(win[1]) || !(win[1] > win[0])) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: window must be [start, end] with end > start (s), got [${win[0]}, ${win[1]}] for unit ${JSON.stringify(input.unit)}.`, { unit: input.unit });
  }
  const peth = input.peth;
  checkLengths(fn, 'peth', { times: peth.times, rate: peth.rate, ...(peth.low ? { low: peth.low } : {}), ...(peth.high ? { high: peth.high } : {}) });
  const n = input.trials.length;
  if (input.sortBy && input.sortBy.values.length !== n) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `${fn}: sortBy.values has ${input.sortBy.values.length} values, expected one per trial (${n}).`, { sortBy: input.sortBy.values.length, trials: n });
  }
  const W = o.width;
  const H = o.height;
  const title = `${input.unit} · ${input.event}`;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'raster', name: `${input.unit} / ${input.event}`, title, description: 'Spike raster and peri-event time histogram.' });
  fig.add(drawText(10, 18, title, { size: 13, weight: 'bold' }));
  const left = 62;
  const right = 14;
  const top = 30;
  const pw = W - left - right;
  const avail = H - top - 50 - 10;
  const rH = Math.round(avail * 0.62);
  const hH = avail - rH;
  const order = input.sortBy ? sortOrder(input.sortBy.values) : Uint32Array.from({ length: n }, (_, i) => i);
  const pR = fig.panel({ left, top, width: pw, height: rH }, { domain: win }, { domain: [0, Math.max(1, n)], reversed: true });
  let total = 0;
  for (const t of input.trials) total += t.length;
  fig.add(
    total <= o.maxVectorSpikes ? vectorRaster(pR, input.trials, order, win) : bitmapRaster(pR, input.trials, order, win),
    drawRule(pR, 'x', 0, { color: PALETTE.orange, dash: '4 3', width: 1.2 }),
    drawAxis(pR, 'left', { label: input.sortBy ? `Trial, by ${input.sortBy.label}` : 'Trial' }),
    drawAxis(pR, 'bottom', { tickLabels: false }),
  );
  const hTop = top + rH + 10;
  const yExt = finiteExtent([peth.rate, ...(peth.high ? [peth.high] : [])]) ?? [0, 1];
  const pP = fig.panel({ left, top: hTop, width: pw, height: hH }, { domain: win }, { domain: [0, Math.max(yExt[1], 1e-9)], nice: true, tickCount: 3 });
  if (peth.low && peth.high) fig.add(drawBand(pP, peth.times, peth.low, peth.high, { color: PALETTE.blue, opacity: 0.22 }));
  fig.add(
    drawLine(pP, peth.times, peth.rate, { color: PALETTE.blue, width: 1.8 }),
    drawRule(pP, 'x', 0, { color: PALETTE.orange, dash: '4 3', width: 1.2 }),
    drawAxis(pP, 'left', { label: 'Rate', unit: 'Hz' }),
    drawAxis(pP, 'bottom', { label: `Time from ${input.event}`, unit: 's' }),
  );
  return fig.render();
}

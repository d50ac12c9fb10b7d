import { TuningforkError } from '@tuningfork/core';
import { decimateBand, decimateLine, type LineX } from './decimate.js';
import { escapeXml } from './escape.js';
import { clipAttr, type Panel } from './figure.js';
import { isStrokeShape, markerPath, type MarkerShape } from './marker.js';
import { px } from '../internal/num.js';

/** Stroke style of a line. */
export interface LineStyle {
  /** '#rrggbb' or any SVG colour. */
  color: string;
  /** Stroke width, px. @defaultValue 1.5 */
  width?: number;
  /** SVG dash array, e.g. '4 3'. @defaultValue none */
  dash?: string;
  /** Stroke opacity 0–1. @defaultValue 1 */
  opacity?: number;
  /** Reduce to ≤ 4 points per pixel column when the line is longer than that (see decimateLine). @defaultValue true */
  decimate?: boolean;
  /** CSS class of the path. @defaultValue 'line' */
  className?: string;
}

function strokeAttrs(color: string, width: number, dash?: string, opacity?: number): string {
  return ` stroke="${escapeXml(color)}" stroke-width="${width}"${dash ? ` stroke-dasharray="${escapeXml(dash)}"` : ''}${opacity !== undefined && opacity < 1 ? ` stroke-opacity="${opacity}"` : ''}`;
}

/** Path data of a polyline in panel coordinates; NaN (or unmappable) points break it. */
function polyline(panel: Panel, x: Float64Array, y: Float64Array): string {
  const parts: string[] = [];
  let pen = false;
  for (let i = 0; i < x.length; i++) {
    const X = panel.x.map(x[i]!);
    const Y = panel.y.map(y[i]!);
    if (!Number.isFinite(X) || !Number.isFinite(Y)) {
      pen = false;
      continue;
    }
    parts.push(`${pen ? 'L' : 'M'}${px(X)} ${px(Y)}`);
    pen = true;
  }
  return parts.join('');
}

/**
 * Draw a line through (x[i], y[i]) in data units.
 *
 * NaN values (and, on log axes, values ≤ 0) break the line. Long lines are decimated to the pixel
 * grid (M4, ≤ 4 points per pixel column) so the SVG size is bounded by the panel width.
 *
 * @param panel - Target panel (its scales map the data; marks are clipped to it).
 * @param x - Increasing x values (Float64Array) or a uniform grid `{ x0, rate }` (rate = points per x unit).
 * @param y - y values.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when x and y lengths differ.
 */
export function drawLine(panel: Panel, x: LineX, y: Float64Array, style: LineStyle): string {
  let xs: Float64Array;
  let ys: Float64Array;
  if (style.decimate ?? true) {
    const d = decimateLine(x, y, panel.x);
    xs = d.x;
    ys = d.y;
  } else {
    if (x instanceof Float64Array) {
      if (x.length !== y.length) throw new TuningforkError('TF_SHAPE_MISMATCH', `drawLine: x has ${x.length} values but y has ${y.length}.`, { x: x.length, y: y.length });
      xs = x;
    } else {
      xs = new Float64Array(y.length);
      for (let i = 0; i < y.length; i++) xs[i] = x.x0 + i / x.rate;
    }
    ys = y;
  }
  const d = polyline(panel, xs, ys);
  if (!d) return '';
  return `<path class="${escapeXml(style.className ?? 'line')}" d="${d}" fill="none"${strokeAttrs(style.color, style.width ?? 1.5, style.dash, style.opacity)} stroke-linejoin="round"${clipAttr(panel)}/>`;
}

/** Fill style of a band. */
export interface BandStyle {
  color: string;
  /** Fill opacity 0–1. @defaultValue 0.22 */
  opacity?: number;
  /** CSS class. @defaultValue 'band' */
  className?: string;
}

/**
 * Draw a filled band between low[i] and high[i] (e.g. a confidence interval) as closed polygons:
 * the upper edge left to right through (x[i], high[i]), then the lower edge back through (x[i], low[i]).
 *
 * A NaN in low or high splits the band. Bands longer than 2 points per pixel column are reduced to
 * their per-column envelope (see decimateBand), so the drawn band still covers every interval.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when lengths differ.
 */
export function drawBand(panel: Panel, x: Float64Array, low: Float64Array, high: Float64Array, style: BandStyle): string {
  const b = decimateBand(x, low, high, panel.x);
  const parts: string[] = [];
  let start = 0;
  const n = b.x.length;
  for (let i = 0; i <= n; i++) {
    const bad = i === n || !Number.isFinite(panel.y.map(b.low[i]!)) || !Number.isFinite(panel.y.map(b.high[i]!)) || !Number.isFinite(panel.x.map(b.x[i]!));
    if (!bad) continue;
    if (i - start >= 1) {
      let d = '';
      for (let j = start; j < i; j++) d += `${j === start ? 'M' : 'L'}${px(panel.x.map(b.x[j]!))} ${px(panel.y.map(b.high[j]!))}`;
      for (let j = i - 1; j >= start; j--) d += `L${px(panel.x.map(b.x[j]!))} ${px(panel.y.map(b.low[j]!))}`;
      parts.push(`${d}Z`);
    }
    start = i + 1;
  }
  if (!parts.length) return '';
  return `<path class="${escapeXml(style.className ?? 'band')}" d="${parts.join('')}" fill="${escapeXml(style.color)}" fill-opacity="${style.opacity ?? 0.22}" stroke="none"${clipAttr(panel)}/>`;
}

/** Style of markers. */
export interface MarkerStyle {
  shape: MarkerShape;
  color: string;
  /** Nominal diameter, px. @defaultValue 7 */
  size?: number;
  /** Filled (true) or outlined (false). Stroke shapes ('cross', 'plus') are always outlined. @defaultValue true */
  filled?: boolean;
  /** Per-marker tooltip text (escaped), shown on hover in browsers; same length as x when given. */
  titles?: readonly string[];
  /** Fill opacity of filled markers. @defaultValue 0.9 */
  opacity?: number;
}

/**
 * Draw markers at (x[i], y[i]). Points with a NaN coordinate are skipped. Without titles all
 * markers form one path; with titles each marker is its own element with a `<title>` child.
 *
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when x, y (and titles) lengths differ.
 */
export function drawMarkers(panel: Panel, x: ArrayLike<number>, y: ArrayLike<number>, style: MarkerStyle): string {
  if (x.length !== y.length || (style.titles && style.titles.length !== x.length)) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `drawMarkers: x, y and titles must have equal lengths, got ${x.length}, ${y.length}, ${style.titles?.length ?? '—'}.`, {});
  }
  const size = style.size ?? 7;
  const stroke = isStrokeShape(style.shape) || style.filled === false;
  const paint = stroke
    ? ` fill="${style.filled === false && !isStrokeShape(style.shape) ? '#ffffff' : 'none'}" stroke="${escapeXml(style.color)}" stroke-width="1.6"`
    : ` fill="${escapeXml(style.color)}" fill-opacity="${style.opacity ?? 0.9}" stroke="#ffffff" stroke-width="0.8"`;
  const out: string[] = [];
  let d = '';
  for (let i = 0; i < x.length; i++) {
    const X = panel.x.map(x[i]!);
    const Y = panel.y.map(y[i]!);
    if (!Number.isFinite(X) || !Number.isFinite(Y)) continue;
    const m = markerPath(style.shape, X, Y, size);
    if (style.titles) out.push(`<path class="marker" d="${m}"${paint}><title>${escapeXml(style.titles[i])}</title></path>`);
    else d += m;
  }
  if (d) out.push(`<path class="marker" d="${d}"${paint}/>`);
  return out.length ? `<g class="markers" data-shape="${style.shape}"${clipAttr(panel)}>${out.join('')}</g>` : '';
}

/**
 * A reference line across a panel at a data value: vertical at x = value ('x') or horizontal at
 * y = value ('y'), e.g. the event time or zero.
 */
export function drawRule(panel: Panel, axis: 'x' | 'y', value: number, style: { color?: string; width?: number; dash?: string } = {}): string {
  const p = (axis === 'x' ? panel.x : panel.y).map(value);
  if (!Number.isFinite(p)) return '';
  const d = axis === 'x' ? `M${px(p)} ${px(panel.top)}v${px(panel.height)}` : `M${px(panel.left)} ${px(p)}h${px(panel.width)}`;
  return `<path class="rule" d="${d}" fill="none"${strokeAttrs(style.color ?? '#888888', style.width ?? 1, style.dash ?? '3 3')}/>`;
}

/** A time interval where an effect is significant: [onset, offset] in x units, and its sign. */
export interface Run {
  readonly onset: number;
  readonly offset: number;
  /** +1 above baseline, −1 below. */
  readonly sign: number;
}

/**
 * Horizontal bars marking runs (e.g. significant time windows) at a fixed pixel height band:
 * positive runs filled, negative runs outlined.
 *
 * @param panel - Supplies the x scale (bars are clipped to its x range).
 * @param runs - Intervals in x units.
 * @param style - `top` (px) and `height` (px) of the bar row, `color`.
 */
export function drawRunBars(panel: Panel, runs: readonly Run[], style: { top: number; height?: number; color: string }): string {
  const h = style.height ?? 4;
  const lo = Math.min(panel.x.range[0], panel.x.range[1]);
  const hi = Math.max(panel.x.range[0], panel.x.range[1]);
  let dPos = '';
  let dNeg = '';
  for (const r of runs) {
    let a = panel.x.map(r.onset);
    let b = panel.x.map(r.offset);
    if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
    if (a > b) [a, b] = [b, a];
    a = Math.max(lo, a);
    b = Math.min(hi, b);
    if (b < a) continue;
    const w = Math.max(1, b - a);
    if (r.sign < 0) dNeg += `M${px(a + 0.5)} ${px(style.top + 0.5)}h${px(w - 1)}v${px(h - 1)}h${px(1 - w)}Z`;
    else dPos += `M${px(a)} ${px(style.top)}h${px(w)}v${px(h)}h${px(-w)}Z`;
  }
  const c = escapeXml(style.color);
  return (
    (dPos ? `<path class="run run-positive" d="${dPos}" fill="${c}" stroke="none"/>` : '') +
    (dNeg ? `<path class="run run-negative" d="${dNeg}" fill="#ffffff" stroke="${c}" stroke-width="1"/>` : '')
  );
}

/**
 * Vertical bars from `base` to heights[i], centred at x[i], `width` wide in x units.
 *
 * @param colors - One colour for all bars or one per bar.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when lengths differ.
 */
export function drawBars(panel: Panel, x: ArrayLike<number>, heights: ArrayLike<number>, style: { width: number; colors: string | readonly string[]; base?: number }): string {
  if (x.length !== heights.length || (typeof style.colors !== 'string' && style.colors.length !== x.length)) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `drawBars: x, heights and colors must have equal lengths, got ${x.length}, ${heights.length}, ${typeof style.colors === 'string' ? 1 : style.colors.length}.`, {});
  }
  const base = style.base ?? 0;
  const out: string[] = [];
  for (let i = 0; i < x.length; i++) {
    const x0 = panel.x.map(x[i]! - style.width / 2);
    const x1 = panel.x.map(x[i]! + style.width / 2);
    const y0 = panel.y.map(base);
    const y1 = panel.y.map(heights[i]!);
    if (![x0, x1, y0, y1].every(Number.isFinite)) continue;
    const c = typeof style.colors === 'string' ? style.colors : style.colors[i]!;
    out.push(`<rect class="bar" x="${px(Math.min(x0, x1))}" y="${px(Math.min(y0, y1))}" width="${px(Math.abs(x1 - x0))}" height="${px(Math.abs(y1 - y0))}" fill="${escapeXml(c)}"/>`);
  }
  return out.join('');
}

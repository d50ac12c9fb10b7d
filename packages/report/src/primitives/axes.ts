import { escapeXml } from './escape.js';
import type { Panel } from './figure.js';
import type { Tick } from './scale.js';
import { attrNumber, px, textWidth } from '../internal/num.js';

/** Options of drawAxis. */
export interface AxisOptions {
  /** Axis title, e.g. 'Time from outcome' (escaped). @defaultValue '' */
  label?: string;
  /** Unit shown in parentheses after the label, e.g. 's' (escaped). @defaultValue '' */
  unit?: string;
  /** Ticks to draw instead of the scale's own. */
  ticks?: readonly Tick[];
  /** Tick mark length, px. @defaultValue 4 */
  tickSize?: number;
  /** Gap between the panel edge and the axis line, px. @defaultValue 0 */
  offset?: number;
  /** Font size of tick labels, px (the title is 1 px larger). @defaultValue 11 */
  fontSize?: number;
  /** Draw tick labels. @defaultValue true */
  tickLabels?: boolean;
}

/** Axis title with its unit: 'Label (unit)'. */
export function axisTitle(label: string, unit: string): string {
  if (!label) return unit;
  return unit ? `${label} (${unit})` : label;
}

/**
 * Draw one axis of a panel: line, tick marks (major and minor), tick labels and title.
 *
 * Each tick label is a `<text>` element with `data-value` (the tick's data value) positioned
 * exactly at the tick's pixel coordinate (x for horizontal axes, y for vertical ones), so the
 * axis transform can be read back from the SVG. Minor ticks are shorter and unlabelled.
 *
 * @param panel - The panel whose scale the axis shows.
 * @param side - 'bottom' or 'top' for the x scale, 'left' or 'right' for the y scale.
 * @returns An SVG `<g class="axis">` fragment.
 */
export function drawAxis(panel: Panel, side: 'bottom' | 'top' | 'left' | 'right', options: AxisOptions = {}): string {
  const horizontal = side === 'bottom' || side === 'top';
  const scale = horizontal ? panel.x : panel.y;
  const ticks = options.ticks ?? scale.ticks();
  const ts = options.tickSize ?? 4;
  const off = options.offset ?? 0;
  const fs = options.fontSize ?? 11;
  const showLabels = options.tickLabels ?? true;
  const title = axisTitle(options.label ?? '', options.unit ?? '');
  const lo = Math.min(scale.range[0], scale.range[1]);
  const hi = Math.max(scale.range[0], scale.range[1]);
  const inRange = (p: number) => p >= lo - 0.5 && p <= hi + 0.5;
  const out: string[] = [`<g class="axis axis-${side}">`];
  let marks = '';
  const labels: string[] = [];
  let maxLabelW = 0;
  const dir = side === 'bottom' || side === 'right' ? 1 : -1;
  if (horizontal) {
    const y0 = side === 'bottom' ? panel.top + panel.height + off : panel.top - off;
    out.push(`<path d="M${px(lo)} ${px(y0)}H${px(hi)}" stroke="#222222" stroke-width="1" fill="none"/>`);
    for (const t of ticks) {
      const p = scale.map(t.value);
      if (!inRange(p)) continue;
      const len = t.minor ? ts * 0.55 : ts;
      marks += `M${px(p)} ${px(y0)}v${px(dir * len)}`;
      if (showLabels && t.label) {
        const ty = side === 'bottom' ? y0 + ts + fs + 1 : y0 - ts - 4;
        labels.push(`<text x="${px(p)}" y="${px(ty)}" text-anchor="middle" data-value="${attrNumber(t.value)}">${escapeXml(t.label)}</text>`);
      }
    }
    if (title) {
      const ty = side === 'bottom' ? y0 + ts + 2 * fs + 8 : y0 - ts - fs - 10;
      labels.push(`<text class="axis-title" x="${px((lo + hi) / 2)}" y="${px(ty)}" text-anchor="middle" font-size="${fs + 1}">${escapeXml(title)}</text>`);
    }
  } else {
    const x0 = side === 'left' ? panel.left - off : panel.left + panel.width + off;
    out.push(`<path d="M${px(x0)} ${px(lo)}V${px(hi)}" stroke="#222222" stroke-width="1" fill="none"/>`);
    for (const t of ticks) {
      const p = scale.map(t.value);
      if (!inRange(p)) continue;
      const len = t.minor ? ts * 0.55 : ts;
      marks += `M${px(x0)} ${px(p)}h${px(dir * len)}`;
      if (showLabels && t.label) {
        const tx = side === 'left' ? x0 - ts - 3 : x0 + ts + 3;
        labels.push(`<text x="${px(tx)}" y="${px(p)}" dy="0.35em" text-anchor="${side === 'left' ? 'end' : 'start'}" data-value="${attrNumber(t.value)}">${escapeXml(t.label)}</text>`);
        maxLabelW = Math.max(maxLabelW, textWidth(t.label, fs));
      }
    }
    if (title) {
      const gap = ts + 3 + maxLabelW + 8 + (fs + 1) * 0.35;
      const tx = side === 'left' ? x0 - gap : x0 + gap;
      const cy = (lo + hi) / 2;
      const rot = side === 'left' ? -90 : 90;
      labels.push(`<text class="axis-title" x="${px(tx)}" y="${px(cy)}" text-anchor="middle" font-size="${fs + 1}" transform="rotate(${rot} ${px(tx)} ${px(cy)})">${escapeXml(title)}</text>`);
    }
  }
  if (marks) out.push(`<path d="${marks}" stroke="#222222" stroke-width="1" fill="none"/>`);
  out.push(...labels, '</g>');
  return out.join('');
}

/** Width in px that a left/right axis needs for its tick labels and title (for layout). */
export function axisWidth(ticks: readonly Tick[], options: { fontSize?: number; tickSize?: number; title?: boolean } = {}): number {
  const fs = options.fontSize ?? 11;
  let w = 0;
  for (const t of ticks) if (t.label) w = Math.max(w, textWidth(t.label, fs));
  return (options.tickSize ?? 4) + 3 + w + (options.title === false ? 0 : 8 + fs + 4);
}

/**
 * Light grid lines across a panel at the major ticks of one scale. Draw before the data.
 *
 * @param panel - The panel.
 * @param axis - 'x' for vertical lines at x ticks, 'y' for horizontal lines at y ticks.
 * @param color - Line colour. @defaultValue '#e6e6e6'
 */
export function drawGrid(panel: Panel, axis: 'x' | 'y', color = '#e6e6e6'): string {
  const scale = axis === 'x' ? panel.x : panel.y;
  let d = '';
  for (const t of scale.ticks()) {
    if (t.minor) continue;
    const p = scale.map(t.value);
    if (!Number.isFinite(p)) continue;
    d += axis === 'x' ? `M${px(p)} ${px(panel.top)}v${px(panel.height)}` : `M${px(panel.left)} ${px(p)}h${px(panel.width)}`;
  }
  return d ? `<path class="grid" d="${d}" stroke="${escapeXml(color)}" stroke-width="1" fill="none"/>` : '';
}

import { escapeXml } from './escape.js';
import { isStrokeShape, markerPath, type MarkerShape } from './marker.js';
import { px, textWidth } from '../internal/num.js';

/** One legend entry: a glyph (line, band with line, marker or swatch) and its label. */
export interface LegendItem {
  /** Label text (escaped). */
  readonly label: string;
  readonly color: string;
  /** @defaultValue 'line' */
  readonly kind?: 'line' | 'band' | 'marker' | 'swatch' | 'bar';
  /** Marker shape for kind 'marker'. @defaultValue 'circle' */
  readonly shape?: MarkerShape;
  /** Filled marker or outlined bar. @defaultValue true */
  readonly filled?: boolean;
  /** Dash array for kind 'line'. */
  readonly dash?: string;
}

/** Options of drawLegend. */
export interface LegendOptions {
  left: number;
  top: number;
  /** 'row' lays items left to right, wrapping at maxWidth; 'column' stacks them. @defaultValue 'row' */
  direction?: 'row' | 'column';
  /** Wrap width for 'row', px. @defaultValue Infinity */
  maxWidth?: number;
  /** @defaultValue 11 */
  fontSize?: number;
}

/** A laid-out legend: its SVG fragment and the size it takes. */
export interface LegendBlock {
  readonly svg: string;
  readonly width: number;
  readonly height: number;
}

function glyph(item: LegendItem, x: number, cy: number): string {
  const c = escapeXml(item.color);
  switch (item.kind ?? 'line') {
    case 'line':
      return `<path d="M${px(x)} ${px(cy)}h18" stroke="${c}" stroke-width="2"${item.dash ? ` stroke-dasharray="${escapeXml(item.dash)}"` : ''} fill="none"/>`;
    case 'band':
      return `<rect x="${px(x)}" y="${px(cy - 5)}" width="18" height="10" fill="${c}" fill-opacity="0.22"/><path d="M${px(x)} ${px(cy)}h18" stroke="${c}" stroke-width="2" fill="none"/>`;
    case 'swatch':
      return `<rect x="${px(x + 3)}" y="${px(cy - 6)}" width="12" height="12" fill="${c}"/>`;
    case 'bar':
      return item.filled === false
        ? `<rect x="${px(x + 1.5)}" y="${px(cy - 2.5)}" width="15" height="5" fill="#ffffff" stroke="${c}" stroke-width="1"/>`
        : `<rect x="${px(x + 1)}" y="${px(cy - 3)}" width="16" height="6" fill="${c}"/>`;
    case 'marker': {
      const shape = item.shape ?? 'circle';
      const d = markerPath(shape, x + 9, cy, 8);
      const open = isStrokeShape(shape) || item.filled === false;
      return open
        ? `<path d="${d}" fill="${isStrokeShape(shape) ? 'none' : '#ffffff'}" stroke="${c}" stroke-width="1.6"/>`
        : `<path d="${d}" fill="${c}" stroke="#ffffff" stroke-width="0.8"/>`;
    }
  }
}

/**
 * Lay out and draw a legend. Items flow left to right (wrapping at maxWidth) or stack in a column.
 * Glyphs are 18 px wide; labels are escaped.
 *
 * @returns `{ svg, width, height }` so callers can reserve the space.
 */
export function drawLegend(items: readonly LegendItem[], options: LegendOptions): LegendBlock {
  const fs = options.fontSize ?? 11;
  const rowH = Math.max(16, fs + 5);
  const dir = options.direction ?? 'row';
  const maxW = options.maxWidth ?? Infinity;
  const parts: string[] = ['<g class="legend">'];
  let x = options.left;
  let y = options.top;
  let width = 0;
  let lineW = 0;
  for (const it of items) {
    const w = 18 + 5 + textWidth(it.label, fs) + 14;
    if (dir === 'row' && lineW > 0 && lineW + w > maxW) {
      y += rowH;
      x = options.left;
      lineW = 0;
    }
    const cy = y + rowH / 2;
    parts.push(glyph(it, x, cy));
    parts.push(`<text x="${px(x + 23)}" y="${px(cy)}" dy="0.35em" font-size="${fs}">${escapeXml(it.label)}</text>`);
    if (dir === 'row') {
      x += w;
      lineW += w;
      width = Math.max(width, lineW - 14);
    } else {
      y += rowH;
      width = Math.max(width, w - 14);
    }
  }
  parts.push('</g>');
  const height = items.length === 0 ? 0 : dir === 'row' ? y - options.top + rowH : y - options.top;
  return { svg: items.length ? parts.join('') : '', width, height };
}

/** Size a legend would take without drawing it. */
export function measureLegend(items: readonly LegendItem[], options: Omit<LegendOptions, 'left' | 'top'>): { width: number; height: number } {
  const b = drawLegend(items, { ...options, left: 0, top: 0 });
  return { width: b.width, height: b.height };
}

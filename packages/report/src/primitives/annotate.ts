import { escapeXml } from './escape.js';
import type { Panel } from './figure.js';
import { niceStep } from './scale.js';
import { px } from '../internal/num.js';

/** Options of drawText. */
export interface TextOptions {
  /** Font size, px. @defaultValue 11 */
  size?: number;
  /** @defaultValue 'start' */
  anchor?: 'start' | 'middle' | 'end';
  /** @defaultValue 'normal' */
  weight?: 'normal' | 'bold';
  /** @defaultValue '#222222' */
  color?: string;
  /** Rotation in degrees about (x, y). @defaultValue 0 */
  rotate?: number;
  /** Vertical alignment of (x, y): text baseline or middle. @defaultValue 'baseline' */
  baseline?: 'baseline' | 'middle' | 'hanging';
  /** CSS class. */
  className?: string;
}

/** A `<text>` element at (x, y) px; the text is escaped. */
export function drawText(x: number, y: number, text: string, options: TextOptions = {}): string {
  const a = [`x="${px(x)}"`, `y="${px(y)}"`];
  if (options.className) a.push(`class="${escapeXml(options.className)}"`);
  if (options.baseline === 'middle') a.push('dy="0.35em"');
  else if (options.baseline === 'hanging') a.push('dy="0.8em"');
  if (options.anchor && options.anchor !== 'start') a.push(`text-anchor="${options.anchor}"`);
  if (options.size !== undefined) a.push(`font-size="${options.size}"`);
  if (options.weight === 'bold') a.push('font-weight="bold"');
  if (options.color) a.push(`fill="${escapeXml(options.color)}"`);
  if (options.rotate) a.push(`transform="rotate(${options.rotate} ${px(x)} ${px(y)})"`);
  return `<text ${a.join(' ')}>${escapeXml(text)}</text>`;
}

/**
 * A nice length for a scale bar: the largest 1, 2 or 5 × 10^k not above `fraction` of `span`.
 *
 * @param span - Axis span in data units (> 0).
 * @param fraction - Largest share of the span the bar may take. @defaultValue 0.25
 */
export function niceLength(span: number, fraction = 0.25): number {
  const target = span * fraction;
  let s = niceStep(target, 1);
  while (s > target) {
    const k = Math.floor(Math.log10(s) + 1e-9);
    const m = Math.round(s / 10 ** k);
    s = m === 1 ? 5 * 10 ** (k - 1) : m === 2 ? 10 ** k : 2 * 10 ** k;
  }
  return s;
}

/** One arm of a scale bar: its length in data units and its label (escaped). */
export interface ScaleBarArm {
  readonly length: number;
  readonly label: string;
}

/**
 * An L-shaped scale bar at a corner of a panel, for figures drawn without axes: a horizontal arm of
 * `x.length` x units and/or a vertical arm of `y.length` y units, each labelled. Labels go on the
 * outer side of each arm.
 *
 * @param corner - Which corner. @defaultValue 'bottom-right'
 * @param placement - 'inside' insets the bar 6 px into the panel; 'outside' sets it 6 px outside
 *   the panel edges (clear of the data). @defaultValue 'inside'
 */
export function drawScaleBar(panel: Panel, arms: { x?: ScaleBarArm; y?: ScaleBarArm }, corner: 'bottom-right' | 'bottom-left' | 'top-right' | 'top-left' = 'bottom-right', placement: 'inside' | 'outside' = 'inside'): string {
  const inset = placement === 'outside' ? -6 : 6;
  const right = corner.endsWith('right');
  const bottom = corner.startsWith('bottom');
  const cx = right ? panel.left + panel.width - inset : panel.left + inset;
  const cy = bottom ? panel.top + panel.height - inset : panel.top + inset;
  const parts: string[] = ['<g class="scalebar">'];
  let d = '';
  if (arms.x) {
    const w = Math.abs(panel.x.map(panel.x.domain[0] + arms.x.length) - panel.x.map(panel.x.domain[0]));
    const x0 = right ? cx - w : cx;
    d += `M${px(x0)} ${px(cy)}h${px(w)}`;
    const ty = bottom ? cy + 13 : cy - 5;
    parts.push(`<text x="${px(x0 + w / 2)}" y="${px(ty)}" text-anchor="middle">${escapeXml(arms.x.label)}</text>`);
  }
  if (arms.y) {
    const h = Math.abs(panel.y.map(panel.y.domain[0] + arms.y.length) - panel.y.map(panel.y.domain[0]));
    const y0 = bottom ? cy - h : cy;
    d += `M${px(cx)} ${px(y0)}v${px(h)}`;
    const tx = right ? cx + 5 : cx - 5;
    parts.push(`<text x="${px(tx)}" y="${px(y0 + h / 2)}" dy="0.35em" text-anchor="${right ? 'start' : 'end'}">${escapeXml(arms.y.label)}</text>`);
  }
  parts.splice(1, 0, `<path d="${d}" stroke="#222222" stroke-width="2" fill="none" stroke-linecap="square"/>`);
  parts.push('</g>');
  return parts.join('');
}

import { TuningforkError } from '@tuningfork/core';
import { escapeXml } from './escape.js';
import { linearScale, logScale, type Scale } from './scale.js';
import { px } from '../internal/num.js';

/** A rectangle in figure pixels (origin top-left, y down). */
export interface Frame {
  readonly left: number;
  readonly top: number;
  readonly width: number;
  readonly height: number;
}

/** How a panel maps one data axis. */
export interface AxisSpec {
  /** Data interval [start, end]. */
  readonly domain: readonly [number, number];
  /** @defaultValue 'linear' */
  readonly type?: 'linear' | 'log';
  /** Extend the domain to nice tick values (linear) or whole decades (log). @defaultValue false */
  readonly nice?: boolean;
  /** Desired number of tick intervals (linear). @defaultValue 5 */
  readonly tickCount?: number;
  /** Draw the axis reversed (x: right to left; y: top to bottom, as for trial rows). @defaultValue false */
  readonly reversed?: boolean;
}

/** A plotting area: its frame, its x and y scales, and the id of the clip path that bounds its marks. */
export interface Panel extends Frame {
  readonly x: Scale;
  readonly y: Scale;
  /** Id of the clipPath of this panel ('' when marks are not clipped). */
  readonly clipId: string;
}

function makeScale(spec: AxisSpec, range: readonly [number, number]): Scale {
  const r: readonly [number, number] = spec.reversed ? [range[1], range[0]] : range;
  if (spec.type === 'log') return logScale(spec.domain, r, { nice: spec.nice ?? false });
  return linearScale(spec.domain, r, { nice: spec.nice ?? false, tickCount: spec.tickCount ?? 5 });
}

/**
 * A panel over `frame` with scales for the x and y axes (y increases upwards unless reversed).
 *
 * @param frame - Pixel rectangle.
 * @param x - x axis: domain, type, niceness.
 * @param y - y axis.
 * @param clipId - Clip path id to bound marks ('' for none; SvgFigure.panel creates one).
 * @throws {TuningforkError} TF_BAD_OPTION for a frame with non-positive size.
 */
export function makePanel(frame: Frame, x: AxisSpec, y: AxisSpec, clipId = ''): Panel {
  if (!(frame.width > 0) || !(frame.height > 0) || !Number.isFinite(frame.left) || !Number.isFinite(frame.top)) {
    throw new TuningforkError('TF_BAD_OPTION', `makePanel: frame must have finite position and positive size, got ${JSON.stringify(frame)}.`, { frame });
  }
  return {
    left: frame.left,
    top: frame.top,
    width: frame.width,
    height: frame.height,
    x: makeScale(x, [frame.left, frame.left + frame.width]),
    y: makeScale(y, [frame.top + frame.height, frame.top]),
    clipId,
  };
}

/** The clip-path attribute of a panel (empty when it has no clip). */
export function clipAttr(panel: Panel): string {
  return panel.clipId ? ` clip-path="url(#${panel.clipId})"` : '';
}

/** Options of svgFigure. */
export interface SvgFigureOptions {
  /** Width, px. */
  width: number;
  /** Height, px. */
  height: number;
  /** Element id, unique in the page: a letter, then letters, digits, '-' or '_'. */
  id: string;
  /** Figure kind, written as data-figure (e.g. 'peri-event'). @defaultValue 'custom' */
  kind?: string;
  /** Accessible title (escaped). @defaultValue '' */
  title?: string;
  /** Accessible description (escaped). @defaultValue '' */
  description?: string;
  /** Subject of the figure (site, unit, session), written as data-name (escaped). @defaultValue '' */
  name?: string;
  /** Background fill; 'none' for transparent. @defaultValue '#ffffff' */
  background?: string;
}

const ID_RE = /^[A-Za-z][A-Za-z0-9_-]*$/;
const FONT = "'Helvetica Neue', Helvetica, Arial, 'DejaVu Sans', 'Liberation Sans', sans-serif";

/**
 * An SVG figure assembled from primitive fragments (strings made by the draw* functions).
 *
 * `panel()` creates a panel and its clip path (ids derived from the figure id, so several figures
 * can share one HTML page); `add()` appends fragments in drawing order; `render()` returns the
 * `<svg>` element as a string (UTF-8 text; see toSvgFile for a standalone file).
 *
 * @example
 * const fig = svgFigure({ width: 320, height: 200, id: 'demo' });
 * const p = fig.panel({ left: 50, top: 10, width: 260, height: 150 }, { domain: [0, 1] }, { domain: [-1, 1] });
 * fig.add(drawAxis(p, 'bottom', { label: 'Time', unit: 's' }), drawLine(p, x, y, { color: PALETTE.blue }));
 * const svg = fig.render();
 */
export class SvgFigure {
  readonly width: number;
  readonly height: number;
  readonly id: string;
  private readonly opts: Required<SvgFigureOptions>;
  private readonly defs: string[] = [];
  private readonly parts: string[] = [];
  private nPanels = 0;
  private nDefs = 0;

  constructor(options: SvgFigureOptions) {
    const { width, height, id } = options;
    if (!(width > 0) || !(height > 0) || !Number.isFinite(width) || !Number.isFinite(height)) {
      throw new TuningforkError('TF_BAD_OPTION', `svgFigure: width and height must be finite and > 0, got ${width} × ${height}.`, { width, height });
    }
    if (typeof id !== 'string' || !ID_RE.test(id)) {
      throw new TuningforkError('TF_BAD_OPTION', `svgFigure: id must start with a letter and contain only letters, digits, '-' or '_', got ${JSON.stringify(id)}.`, { id });
    }
    this.width = width;
    this.height = height;
    this.id = id;
    this.opts = { kind: 'custom', title: '', description: '', name: '', background: '#ffffff', ...options };
  }

  /** Create a panel clipped to its frame (see makePanel). */
  panel(frame: Frame, x: AxisSpec, y: AxisSpec): Panel {
    const clipId = `${this.id}-clip${this.nPanels++}`;
    const p = makePanel(frame, x, y, clipId);
    this.defs.push(`<clipPath id="${clipId}"><rect x="${px(frame.left - 1)}" y="${px(frame.top - 1)}" width="${px(frame.width + 2)}" height="${px(frame.height + 2)}"/></clipPath>`);
    return p;
  }

  /** A fresh id for a definition (gradient, pattern) inside this figure. */
  newId(stem: string): string {
    return `${this.id}-${stem.replace(/[^A-Za-z0-9_-]/g, '')}${this.nDefs++}`;
  }

  /** Add an element to `<defs>` (markup is inserted as is). */
  addDef(markup: string): this {
    this.defs.push(markup);
    return this;
  }

  /** Append fragments in drawing order (markup is inserted as is). */
  add(...parts: string[]): this {
    for (const p of parts) if (p) this.parts.push(p);
    return this;
  }

  /** The `<svg>` element. */
  render(): string {
    const o = this.opts;
    const titleId = `${this.id}-title`;
    const head =
      `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" id="${this.id}" data-figure="${escapeXml(o.kind)}"` +
      (o.name ? ` data-name="${escapeXml(o.name)}"` : '') +
      ` width="${px(this.width)}" height="${px(this.height)}" viewBox="0 0 ${px(this.width)} ${px(this.height)}" role="img" aria-labelledby="${titleId}"` +
      ` font-family="${FONT}" font-size="11" fill="#222222">`;
    const out = [head, `<title id="${titleId}">${escapeXml(o.title)}</title>`];
    if (o.description) out.push(`<desc>${escapeXml(o.description)}</desc>`);
    if (this.defs.length) out.push(`<defs>${this.defs.join('')}</defs>`);
    if (o.background !== 'none') out.push(`<rect width="100%" height="100%" fill="${escapeXml(o.background)}"/>`);
    out.push(...this.parts, '</svg>');
    return out.join('');
  }
}

/** Create an SvgFigure. */
export function svgFigure(options: SvgFigureOptions): SvgFigure {
  return new SvgFigure(options);
}

/** A standalone .svg file's text: XML declaration, then the figure. */
export function toSvgFile(svg: string): string {
  return `<?xml version="1.0" encoding="UTF-8"?>\n${svg}\n`;
}

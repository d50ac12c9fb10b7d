import { TuningforkError, type Matrix } from '@tuningfork/core';
import { axisTitle } from './axes.js';
import { escapeXml } from './escape.js';
import { clipAttr, type Frame, type Panel } from './figure.js';
import { colorAt, parseHex, type ColorMap } from './color.js';
import { encodePng, pngDataUrl } from './png.js';
import { linearScale } from './scale.js';
import { attrNumber, px, textWidth } from '../internal/num.js';

/** Options of drawHeatmap. */
export interface HeatmapOptions {
  /** Colour map (see COLOR_MAPS). */
  colorMap: ColorMap;
  /** Values at the two ends of the map, [low, high] (low < high); values beyond are clipped to the end colours. */
  limits: readonly [number, number];
  /** Data x of the left edge of column 0 and the right edge of the last column. */
  x: readonly [number, number];
  /** Data y of the edge of row 0 and the far edge of the last row (e.g. [0, rows] on a reversed axis puts row 0 on top). */
  y: readonly [number, number];
  /** Display row i shows matrix row rowOrder[i] (e.g. trials sorted by a variable); same length as rows. @defaultValue identity */
  rowOrder?: ArrayLike<number>;
  /** 'rects' draws one rectangle per cell; 'image' embeds a PNG; 'auto' uses rects up to 1200 cells. @defaultValue 'auto' */
  render?: 'auto' | 'image' | 'rects';
}

const MISSING_INDEX = 255;

function checkLimits(fn: string, limits: readonly [number, number]): void {
  if (!Number.isFinite(limits[0]) || !Number.isFinite(limits[1]) || !(limits[1] > limits[0])) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: limits must be finite with low < high, got [${limits[0]}, ${limits[1]}].`, { limits });
  }
}

/** 256-colour PNG palette: 255 map levels then the missing colour at index 255. */
function paletteOf(map: ColorMap): Uint8Array {
  const pal = new Uint8Array(256 * 3);
  pal.set(map.lut.subarray(0, 255 * 3));
  const [r, g, b] = parseHex(map.missing);
  pal[765] = r;
  pal[766] = g;
  pal[767] = b;
  return pal;
}

/**
 * Draw a matrix as a heatmap filling the data rectangle x × y of a panel.
 *
 * Cell (r, c) of display row i = position of r in rowOrder is coloured by
 * t = (value − low) / (high − low), clipped to [0, 1]; NaN cells take the map's missing colour.
 * With 'image', a matrix wider than the panel's pixel width is first averaged over blocks of
 * columns (one block per pixel; NaN ignored unless the whole block is NaN), and rows are averaged
 * likewise only when there are more than twice as many rows as pixels, so the PNG size follows the
 * pixel grid. The PNG is drawn crisp (pixelated) when it is not downscaled.
 *
 * @param panel - Target panel.
 * @param matrix - Row-major rows × cols values.
 * @returns An SVG fragment (`<image>` or a `<g>` of `<rect>`s).
 * @throws {TuningforkError} TF_SHAPE_MISMATCH for a bad matrix or rowOrder; TF_BAD_OPTION for bad limits.
 */
export function drawHeatmap(panel: Panel, matrix: Matrix, options: HeatmapOptions): string {
  const { rows, cols, data } = matrix;
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || rows < 0 || cols < 0 || data.length !== rows * cols) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `drawHeatmap: matrix data has ${data.length} values, expected rows × cols = ${rows} × ${cols}.`, { rows, cols });
  }
  checkLimits('drawHeatmap', options.limits);
  const order = options.rowOrder;
  if (order && order.length !== rows) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `drawHeatmap: rowOrder has ${order.length} entries, expected ${rows} (one per row).`, { rows, rowOrder: order.length });
  }
  if (order) {
    for (let i = 0; i < rows; i++) {
      const r = order[i]!;
      if (!Number.isInteger(r) || r < 0 || r >= rows) {
        throw new TuningforkError('TF_SHAPE_MISMATCH', `drawHeatmap: rowOrder[${i}] = ${r} is not a row index in [0, ${rows - 1}].`, { index: i, value: r });
      }
    }
  }
  if (rows === 0 || cols === 0) return '';
  const [lo, hi] = options.limits;
  const xa = panel.x.map(options.x[0]);
  const xb = panel.x.map(options.x[1]);
  const ya = panel.y.map(options.y[0]);
  const yb = panel.y.map(options.y[1]);
  if (![xa, xb, ya, yb].every(Number.isFinite)) return '';
  const left = Math.min(xa, xb);
  const top = Math.min(ya, yb);
  const w = Math.abs(xb - xa);
  const h = Math.abs(yb - ya);
  const flipX = xb < xa;
  const flipY = yb < ya; // row 0 at the bottom
  const srcRow = (i: number) => (order ? order[i]! : i);
  const mode = options.render === 'rects' || (options.render !== 'image' && rows * cols <= 1200) ? 'rects' : 'image';

  if (mode === 'rects') {
    const cw = w / cols;
    const rh = h / rows;
    const out: string[] = [];
    for (let i = 0; i < rows; i++) {
      const r = srcRow(i);
      const y = flipY ? top + h - (i + 1) * rh : top + i * rh;
      for (let c = 0; c < cols; c++) {
        const v = data[r * cols + c]!;
        const x = flipX ? left + w - (c + 1) * cw : left + c * cw;
        const color = colorAt(options.colorMap, Number.isNaN(v) ? NaN : Math.max(0, Math.min(1, (v - lo) / (hi - lo))));
        out.push(`<rect x="${px(x)}" y="${px(y)}" width="${px(cw + 0.05)}" height="${px(rh + 0.05)}" fill="${color}" data-row="${r}" data-col="${c}" data-value="${attrNumber(v)}"/>`);
      }
    }
    return `<g class="heatmap" shape-rendering="crispEdges"${clipAttr(panel)}>${out.join('')}</g>`;
  }

  const outW = Math.max(1, Math.min(cols, Math.ceil(w)));
  const outH = rows <= 2 * Math.ceil(h) ? rows : Math.max(1, Math.ceil(2 * h));
  const pixels = new Uint8Array(outW * outH);
  const scale = 254 / (hi - lo);
  const sums = new Float64Array(outW);
  const counts = new Float64Array(outW);
  const colStart = new Int32Array(outW + 1);
  for (let b = 0; b <= outW; b++) colStart[b] = Math.floor((b * cols) / outW);
  for (let yb2 = 0; yb2 < outH; yb2++) {
    sums.fill(0);
    counts.fill(0);
    const r0 = Math.floor((yb2 * rows) / outH);
    const r1 = Math.max(r0 + 1, Math.floor(((yb2 + 1) * rows) / outH));
    for (let i = r0; i < r1; i++) {
      const base = srcRow(i) * cols;
      for (let b = 0; b < outW; b++) {
        let s = 0;
        let n = 0;
        for (let c = colStart[b]!, e = colStart[b + 1]!; c < e; c++) {
          const v = data[base + c]!;
          if (v === v) {
            s += v;
            n++;
          }
        }
        sums[b]! += s;
        counts[b]! += n;
      }
    }
    const dst = (flipY ? outH - 1 - yb2 : yb2) * outW;
    for (let b = 0; b < outW; b++) {
      const n = counts[b]!;
      let idx = MISSING_INDEX;
      if (n > 0) {
        const t = Math.round((sums[b]! / n - lo) * scale);
        idx = t < 0 ? 0 : t > 254 ? 254 : t;
      }
      pixels[dst + (flipX ? outW - 1 - b : b)] = idx;
    }
  }
  const png = encodePng({ width: outW, height: outH, pixels, palette: paletteOf(options.colorMap) });
  const crisp = outW <= w + 0.5 && outH <= h + 0.5;
  return (
    `<image class="heatmap" x="${px(left)}" y="${px(top)}" width="${px(w)}" height="${px(h)}" preserveAspectRatio="none"` +
    `${crisp ? ' image-rendering="optimizeSpeed" style="image-rendering:pixelated"' : ''} data-rows="${rows}" data-cols="${cols}"` +
    ` xlink:href="${pngDataUrl(png)}"${clipAttr(panel)}/>`
  );
}

/** Result of colorLimits. */
export interface ColorLimits {
  /** [low, high] for the colour map. */
  readonly limits: [number, number];
  /** True when some finite values lie below low / above high (the colour bar then shows arrow ends). */
  readonly clippedLow: boolean;
  readonly clippedHigh: boolean;
}

/**
 * Display limits for a heatmap that ignore rare extreme values: for 'sequential' the
 * (1 − coverage)/2 and (1 + coverage)/2 quantiles of the finite values; for 'diverging' ±(the
 * coverage quantile of |value|), symmetric about 0 so 0 stays the map's centre colour.
 *
 * **Method.** One pass finds the exact finite range; the quantiles come from a 4096-bin histogram
 * of at most 2^18 values taken at a fixed stride (deterministic). Each limit is the outer edge of
 * the bin holding its quantile. This is a display choice, not a statistic: the limits are
 * within 1/4096 of the range of the sampled quantile.
 *
 * @param data - Values (NaN and ±Infinity ignored). No finite value gives [0, 1] (sequential) or [−1, 1].
 * @param kind - Map kind.
 * @param coverage - Share of values inside the limits, in (0, 1]. @defaultValue 0.99
 * @returns Limits and whether any finite value lies beyond each (exact, from the full pass).
 */
export function colorLimits(data: Float64Array, kind: 'sequential' | 'diverging', coverage = 0.99): ColorLimits {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < data.length; i++) {
    const v = data[i]!;
    if (v - v !== 0) continue; // NaN or ±Infinity
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return colorLimitsInRange(data, kind, coverage, lo, hi);
}

/** colorLimits given the exact finite range [lo, hi] of data (lo > hi when there is no finite value). */
export function colorLimitsInRange(data: Float64Array, kind: 'sequential' | 'diverging', coverage: number, lo: number, hi: number): ColorLimits {
  if (!(lo <= hi)) return { limits: kind === 'diverging' ? [-1, 1] : [0, 1], clippedLow: false, clippedHigh: false };
  const diverging = kind === 'diverging';
  const mn = diverging ? 0 : lo;
  const mx = diverging ? Math.max(Math.abs(lo), Math.abs(hi)) : hi;
  if (mx === mn) {
    const d = mx === 0 ? 1 : Math.abs(mx) * 0.1;
    return { limits: diverging ? [-(mx + d), mx + d] : [mn - d, mx + d], clippedLow: false, clippedHigh: false };
  }
  const BINS = 4096;
  const hist = new Float64Array(BINS);
  const k = BINS / (mx - mn);
  const stride = Math.max(1, Math.ceil(data.length / 262144));
  let n = 0;
  for (let i = 0; i < data.length; i += stride) {
    let v = data[i]!;
    if (v - v !== 0) continue;
    if (diverging && v < 0) v = -v;
    let b = Math.floor((v - mn) * k);
    if (b >= BINS) b = BINS - 1;
    if (b < 0) b = 0;
    hist[b]!++;
    n++;
  }
  const edge = (b: number) => mn + b / k;
  const upperAt = (q: number): number => {
    let acc = 0;
    const target = q * n;
    for (let b = 0; b < BINS; b++) {
      acc += hist[b]!;
      if (acc >= target - 1e-9) return b === BINS - 1 ? mx : edge(b + 1);
    }
    return mx;
  };
  const lowerAt = (q: number): number => {
    let acc = 0;
    const target = q * n;
    for (let b = 0; b < BINS; b++) {
      if (acc + hist[b]! > target + 1e-9) return b === 0 ? mn : edge(b);
      acc += hist[b]!;
    }
    return mx;
  };
  if (diverging) {
    const a = n > 0 ? upperAt(Math.min(1, coverage)) : mx;
    return { limits: [-a, a], clippedLow: lo < -a, clippedHigh: hi > a };
  }
  const l = n > 0 ? lowerAt((1 - coverage) / 2) : mn;
  let h = n > 0 ? upperAt((1 + coverage) / 2) : mx;
  if (!(h > l)) h = l + (mx - mn) / BINS;
  return { limits: [l, h], clippedLow: lo < l, clippedHigh: hi > h };
}

/** Options of drawColorBar. */
export interface ColorBarOptions {
  /** Title, e.g. 'ΔF/F' (escaped). @defaultValue '' */
  label?: string;
  /** Unit, e.g. '%' (escaped). @defaultValue '' */
  unit?: string;
  /** Draw a triangle beyond the low / high end to show clipped values. @defaultValue false */
  extendLow?: boolean;
  extendHigh?: boolean;
  /** Desired tick intervals. @defaultValue 4 */
  tickCount?: number;
}

/**
 * A vertical colour bar in `frame` (high values at the top) with ticks and title on its right.
 * Tick labels carry `data-value` at their exact pixel y, as for axes.
 */
export function drawColorBar(frame: Frame, colorMap: ColorMap, limits: readonly [number, number], options: ColorBarOptions = {}): string {
  checkLimits('drawColorBar', limits);
  const pixels = new Uint8Array(256);
  for (let i = 0; i < 255; i++) pixels[i] = 254 - i;
  pixels[255] = 0;
  const pal = paletteOf(colorMap);
  const png = encodePng({ width: 1, height: 255, pixels: pixels.subarray(0, 255), palette: pal });
  const { left, top, width, height } = frame;
  const out: string[] = [`<g class="colorbar">`];
  out.push(`<image x="${px(left)}" y="${px(top)}" width="${px(width)}" height="${px(height)}" preserveAspectRatio="none" xlink:href="${pngDataUrl(png)}"/>`);
  const tri = Math.min(width, 10);
  if (options.extendHigh) out.push(`<path d="M${px(left)} ${px(top)}L${px(left + width / 2)} ${px(top - tri)}L${px(left + width)} ${px(top)}Z" fill="${colorAt(colorMap, 1)}" stroke="#222222" stroke-width="0.6"/>`);
  if (options.extendLow) out.push(`<path d="M${px(left)} ${px(top + height)}L${px(left + width / 2)} ${px(top + height + tri)}L${px(left + width)} ${px(top + height)}Z" fill="${colorAt(colorMap, 0)}" stroke="#222222" stroke-width="0.6"/>`);
  out.push(`<rect x="${px(left)}" y="${px(top)}" width="${px(width)}" height="${px(height)}" fill="none" stroke="#222222" stroke-width="0.6"/>`);
  const s = linearScale(limits, [top + height, top], { tickCount: options.tickCount ?? 4 });
  let d = '';
  let maxW = 0;
  for (const t of s.ticks()) {
    const y = s.map(t.value);
    d += `M${px(left + width)} ${px(y)}h4`;
    out.push(`<text x="${px(left + width + 7)}" y="${px(y)}" dy="0.35em" data-value="${attrNumber(t.value)}">${escapeXml(t.label)}</text>`);
    maxW = Math.max(maxW, textWidth(t.label, 11));
  }
  out.push(`<path d="${d}" stroke="#222222" fill="none"/>`);
  const title = axisTitle(options.label ?? '', options.unit ?? '');
  if (title) {
    const tx = left + width + 7 + maxW + 14;
    const cy = top + height / 2;
    out.push(`<text class="axis-title" x="${px(tx)}" y="${px(cy)}" text-anchor="middle" font-size="12" transform="rotate(90 ${px(tx)} ${px(cy)})">${escapeXml(title)}</text>`);
  }
  out.push('</g>');
  return out.join('');
}

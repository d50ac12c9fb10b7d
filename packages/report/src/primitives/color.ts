import { TuningforkError } from '@tuningfork/core';
import type { MarkerShape } from './marker.js';

/**
 * The tuningfork categorical palette: seven colours chosen for this project so that every pair
 * stays apart (OKLab distance ≥ 0.05) for normal vision and under simulated protanopia,
 * deuteranopia and tritanopia (Machado, Oliveira & Fernandes 2009, severity 1), and every colour
 * is readable on white. Order is the order used for overlaid conditions.
 *
 * | name   | hex       | used for                                |
 * | ------ | --------- | --------------------------------------- |
 * | blue   | #2a5aa6   | first condition; movement class         |
 * | orange | #e5891a   | second condition; reward class          |
 * | green  | #1f9a60   | third condition; action-prediction class|
 * | wine   | #9c2a5e   | fourth condition; mixed class           |
 * | violet | #43206e   | fifth condition                         |
 * | sky    | #6fc3e8   | sixth condition                         |
 * | grey   | #a0a0a0   | 'none' class, de-emphasised items       |
 *
 * References
 * - Machado, G. M., Oliveira, M. M. & Fernandes, L. A. F. (2009). A physiologically-based model
 *   for simulation of color vision deficiency. IEEE TVCG 15(6):1291–1298. doi:10.1109/TVCG.2009.113
 * - Ottosson, B. (2020). A perceptual color space for image processing (OKLab). Blog post;
 *   used here only as the distance metric.
 */
export const PALETTE = Object.freeze({
  blue: '#2a5aa6',
  orange: '#e5891a',
  green: '#1f9a60',
  wine: '#9c2a5e',
  violet: '#43206e',
  sky: '#6fc3e8',
  grey: '#a0a0a0',
} as const);

/** Colours for overlaid conditions, in order (then repeating). */
export const CONDITION_COLORS: readonly string[] = Object.freeze([PALETTE.blue, PALETTE.orange, PALETTE.green, PALETTE.wine, PALETTE.violet, PALETTE.sky]);

/** Ink for text and axes. */
export const INK = '#222222';

/** How one cell class is drawn: colour, marker shape and legend label. */
export interface ClassStyle {
  readonly color: string;
  readonly shape: MarkerShape;
  readonly label: string;
}

/**
 * Class → colour and shape. Colour and shape both differ between classes, so a class is
 * recognisable in greyscale print or with any colour-vision deficiency.
 */
export const CLASS_STYLES: Readonly<Record<string, ClassStyle>> = Object.freeze({
  reward: Object.freeze({ color: PALETTE.orange, shape: 'circle', label: 'reward' }),
  movement: Object.freeze({ color: PALETTE.blue, shape: 'square', label: 'movement' }),
  mixed: Object.freeze({ color: PALETTE.wine, shape: 'diamond', label: 'mixed' }),
  'action-prediction': Object.freeze({ color: PALETTE.green, shape: 'triangle', label: 'action prediction' }),
  none: Object.freeze({ color: PALETTE.grey, shape: 'cross', label: 'none' }),
} as const satisfies Record<string, ClassStyle>);

const EXTRA_SHAPES: readonly MarkerShape[] = ['triangle-down', 'plus', 'circle', 'square', 'diamond'];
const EXTRA_COLORS: readonly string[] = [PALETTE.violet, PALETTE.sky, '#5c5c5c'];

/**
 * Style of a class name: the CLASS_STYLES entry, else a deterministic fallback drawn from the
 * classes list order (violet/sky/dark grey with shapes not used by the built-in classes).
 *
 * @param name - Class name (user text is fine; it is only looked up, never inserted unescaped).
 * @param order - Position of the class among unknown classes, for the fallback.
 */
export function classStyle(name: string, order = 0): ClassStyle {
  const known = Object.prototype.hasOwnProperty.call(CLASS_STYLES, name) ? CLASS_STYLES[name] : undefined;
  if (known) return known;
  return {
    color: EXTRA_COLORS[order % EXTRA_COLORS.length]!,
    shape: EXTRA_SHAPES[order % EXTRA_SHAPES.length]!,
    label: name,
  };
}

/** A colour map: 255-level RGB lookup table (odd, so a diverging map's centre is exactly level 127) plus the colour for missing values. */
export interface ColorMap {
  readonly name: string;
  /** 'sequential' for unsigned data, 'diverging' for signed data centred on 0. */
  readonly kind: 'sequential' | 'diverging';
  /** lut[3i], lut[3i+1], lut[3i+2]: RGB (0–255) of position i / 254, i = 0…254. */
  readonly lut: Uint8Array;
  /** Colour for NaN cells, '#rrggbb'. */
  readonly missing: string;
}

/** Number of levels of a colour map's lookup table. */
export const LEVELS = 255;

/** Parse '#rrggbb' to [r, g, b] in 0–255. @throws TF_BAD_OPTION */
export function parseHex(hex: string): [number, number, number] {
  const m = /^#([0-9a-fA-F]{6})$/.exec(hex);
  if (!m) throw new TuningforkError('TF_BAD_OPTION', `parseHex: colour must be '#rrggbb', got ${JSON.stringify(hex)}.`, { hex });
  const v = parseInt(m[1]!, 16);
  return [(v >> 16) & 255, (v >> 8) & 255, v & 255];
}

/** '#rrggbb' of 0–255 components. */
export function toHex(r: number, g: number, b: number): string {
  const h = (x: number) => Math.max(0, Math.min(255, Math.round(x))).toString(16).padStart(2, '0');
  return `#${h(r)}${h(g)}${h(b)}`;
}

function srgbToLinear(c: number): number {
  const x = c / 255;
  return x <= 0.04045 ? x / 12.92 : ((x + 0.055) / 1.055) ** 2.4;
}
function linearToSrgb(x: number): number {
  const c = x <= 0.0031308 ? 12.92 * x : 1.055 * Math.max(0, x) ** (1 / 2.4) - 0.055;
  return Math.max(0, Math.min(255, Math.round(c * 255)));
}

/**
 * sRGB (0–255) → OKLab [L, a, b].
 *
 * References
 * - Ottosson, B. (2020). A perceptual color space for image processing. https://bottosson.github.io/posts/oklab/
 */
export function rgbToOklab(r: number, g: number, b: number): [number, number, number] {
  const lr = srgbToLinear(r), lg = srgbToLinear(g), lb = srgbToLinear(b);
  const l = Math.cbrt(0.4122214708 * lr + 0.5363325363 * lg + 0.0514459929 * lb);
  const m = Math.cbrt(0.2119034982 * lr + 0.6806995451 * lg + 0.1073969566 * lb);
  const s = Math.cbrt(0.0883024619 * lr + 0.2817188376 * lg + 0.6299787005 * lb);
  return [
    0.2104542553 * l + 0.793617785 * m - 0.0040720468 * s,
    1.9779984951 * l - 2.428592205 * m + 0.4505937099 * s,
    0.0259040371 * l + 0.7827717662 * m - 0.808675766 * s,
  ];
}

/** OKLab → sRGB (0–255, clipped). */
export function oklabToRgb(L: number, a: number, b: number): [number, number, number] {
  const l = (L + 0.3963377774 * a + 0.2158037573 * b) ** 3;
  const m = (L - 0.1055613458 * a - 0.0638541728 * b) ** 3;
  const s = (L - 0.0894841775 * a - 1.291485548 * b) ** 3;
  return [
    linearToSrgb(4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s),
    linearToSrgb(-1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s),
    linearToSrgb(-0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s),
  ];
}

/**
 * Build a colour map by interpolating evenly spaced anchor colours in OKLab (perceptually even steps).
 *
 * @param name - Label of the map.
 * @param kind - 'sequential' or 'diverging' (the middle anchor is the colour of 0).
 * @param anchors - At least two '#rrggbb' colours, low to high.
 * @param missing - Colour of NaN cells. @defaultValue '#bdbdbd'
 * @throws {TuningforkError} TF_BAD_OPTION for fewer than two anchors or a malformed colour.
 */
export function makeColorMap(name: string, kind: 'sequential' | 'diverging', anchors: readonly string[], missing = '#bdbdbd'): ColorMap {
  if (anchors.length < 2) throw new TuningforkError('TF_BAD_OPTION', `makeColorMap: needs at least 2 anchor colours, got ${anchors.length}.`, { name });
  parseHex(missing);
  const labs = anchors.map((h) => rgbToOklab(...parseHex(h)));
  const lut = new Uint8Array(LEVELS * 3);
  const segs = labs.length - 1;
  for (let i = 0; i < LEVELS; i++) {
    const t = (i / (LEVELS - 1)) * segs;
    const j = Math.min(segs - 1, Math.floor(t));
    const f = t - j;
    const p = labs[j]!;
    const q = labs[j + 1]!;
    const [r, g, b] = oklabToRgb(p[0] + f * (q[0] - p[0]), p[1] + f * (q[1] - p[1]), p[2] + f * (q[2] - p[2]));
    lut[3 * i] = r;
    lut[3 * i + 1] = g;
    lut[3 * i + 2] = b;
  }
  return { name, kind, lut, missing };
}

/**
 * Built-in colour maps (anchors chosen for this project; both keep lightness monotone on each side
 * so order survives greyscale printing and colour-vision deficiency):
 * - `sequential`: cream #f7f5ec → sky #9ccbe0 → blue #2a6fb0 → navy #14285a (for unsigned data, e.g. firing rate).
 * - `diverging`: navy-blue #1d4f91 → light blue #9cc2e2 → off-white #f4f2ee → light orange #f0b07a → burnt orange #a33c0a
 *   (blue negative, orange positive; for signed data such as ΔF/F or z-scores).
 */
export const COLOR_MAPS = Object.freeze({
  sequential: makeColorMap('sequential', 'sequential', ['#f7f5ec', '#9ccbe0', '#2a6fb0', '#14285a']),
  diverging: makeColorMap('diverging', 'diverging', ['#1d4f91', '#9cc2e2', '#f4f2ee', '#f0b07a', '#a33c0a']),
});

/** Colour ('#rrggbb') of position t ∈ [0, 1] on a map (clamped; NaN → the map's missing colour). */
export function colorAt(map: ColorMap, t: number): string {
  if (Number.isNaN(t)) return map.missing;
  const i = Math.max(0, Math.min(LEVELS - 1, Math.round(t * (LEVELS - 1))));
  return toHex(map.lut[3 * i]!, map.lut[3 * i + 1]!, map.lut[3 * i + 2]!);
}

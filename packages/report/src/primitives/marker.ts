import { TuningforkError } from '@tuningfork/core';
import { px } from '../internal/num.js';

/** Marker shapes. 'cross' and 'plus' are stroked lines and cannot be filled. */
export type MarkerShape = 'circle' | 'square' | 'diamond' | 'triangle' | 'triangle-down' | 'cross' | 'plus';

/** All marker shapes. */
export const MARKER_SHAPES: readonly MarkerShape[] = Object.freeze(['circle', 'square', 'diamond', 'triangle', 'triangle-down', 'cross', 'plus']);

/**
 * SVG path data for a marker centred at (x, y) with roughly equal visual area across shapes.
 *
 * @param shape - Marker shape.
 * @param x - Centre, px.
 * @param y - Centre, px.
 * @param size - Nominal diameter, px (> 0).
 * @throws {TuningforkError} TF_BAD_VALUE for an unknown shape.
 */
export function markerPath(shape: MarkerShape, x: number, y: number, size: number): string {
  const r = size / 2;
  switch (shape) {
    case 'circle':
      return `M${px(x - r)} ${px(y)}a${px(r)} ${px(r)} 0 1 0 ${px(2 * r)} 0a${px(r)} ${px(r)} 0 1 0 ${px(-2 * r)} 0Z`;
    case 'square': {
      const s = r * 0.89;
      return `M${px(x - s)} ${px(y - s)}h${px(2 * s)}v${px(2 * s)}h${px(-2 * s)}Z`;
    }
    case 'diamond': {
      const s = r * 1.2;
      return `M${px(x)} ${px(y - s)}L${px(x + s)} ${px(y)}L${px(x)} ${px(y + s)}L${px(x - s)} ${px(y)}Z`;
    }
    case 'triangle': {
      const s = r * 1.3;
      return `M${px(x)} ${px(y - s)}L${px(x + s * 0.866)} ${px(y + s * 0.5)}L${px(x - s * 0.866)} ${px(y + s * 0.5)}Z`;
    }
    case 'triangle-down': {
      const s = r * 1.3;
      return `M${px(x)} ${px(y + s)}L${px(x + s * 0.866)} ${px(y - s * 0.5)}L${px(x - s * 0.866)} ${px(y - s * 0.5)}Z`;
    }
    case 'cross': {
      const s = r * 0.85;
      return `M${px(x - s)} ${px(y - s)}L${px(x + s)} ${px(y + s)}M${px(x - s)} ${px(y + s)}L${px(x + s)} ${px(y - s)}`;
    }
    case 'plus':
      return `M${px(x - r)} ${px(y)}h${px(2 * r)}M${px(x)} ${px(y - r)}v${px(2 * r)}`;
    default:
      throw new TuningforkError('TF_BAD_VALUE', `markerPath: unknown shape ${JSON.stringify(shape)}; expected one of ${MARKER_SHAPES.join(', ')}.`, { shape });
  }
}

/** True for shapes drawn as strokes only ('cross', 'plus'). */
export function isStrokeShape(shape: MarkerShape): boolean {
  return shape === 'cross' || shape === 'plus';
}

import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import {
  colorLimits, COLOR_MAPS, drawColorBar, drawLegend, drawMarkers, drawScaleBar, makePanel, markerPath, MARKER_SHAPES, niceLength, svgFigure,
} from '../src/index.js';
import { pathPoints } from './support/svg.js';
import { allText, descendants, parseXml } from './support/xml.js';

const PX = { atol: 0.1, rtol: 0 }; // coordinates are written rounded to 0.1 px

describe('svgFigure', () => {
  it('svgFigure renders a well-formed standalone <svg> whose panels get clip paths named after the figure id', () => {
    const a = svgFigure({ width: 200, height: 100, id: 'fig-a', title: 'a <b>' });
    a.panel({ left: 10, top: 10, width: 100, height: 50 }, { domain: [0, 1] }, { domain: [0, 1] });
    const root = parseXml(a.render());
    expect(root.attrs.get('xmlns')).toBe('http://www.w3.org/2000/svg');
    expect(descendants(root, (e) => e.name === 'clipPath').map((e) => e.attrs.get('id'))).toEqual(['fig-a-clip0']);
    expect(descendants(root, (e) => e.name === 'title')[0]!.text).toBe('a <b>');
  });

  it('svgFigure rejects ids that could break markup and non-positive sizes with TF_BAD_OPTION', () => {
    expect(() => svgFigure({ width: 10, height: 10, id: 'x" onload="y' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => svgFigure({ width: 0, height: 10, id: 'ok' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('niceLength', () => {
  it('niceLength(span) is the largest 1, 2 or 5 × 10^k not above a quarter of the span', () => {
    expect([niceLength(30), niceLength(7.9), niceLength(0.41), niceLength(100)]).toEqual([5, 1, 0.1, 20]);
  });
});

describe('drawScaleBar', () => {
  it('drawScaleBar arms are as long as their data lengths under the panel scales', () => {
    const p = makePanel({ left: 50, top: 20, width: 300, height: 120 }, { domain: [0, 30] }, { domain: [-2, 4] });
    const root = parseXml(`<g>${drawScaleBar(p, { x: { length: 5, label: '5 s' }, y: { length: 2, label: '2 %' } })}</g>`);
    const pts = pathPoints(descendants(root, (e) => e.name === 'path')[0]!.attrs.get('d')!);
    expectAllClose([pts[1]!.x - pts[0]!.x, pts[3]!.y - pts[2]!.y], [50, 40], PX); // 5/30·300 px and 2/6·120 px
    expect(allText(root)).toBe('5 s2 %');
  });
});

describe('drawColorBar', () => {
  it('drawColorBar places tick labels at their values along the bar (high at the top) and marks clipped ends', () => {
    const frame = { left: 10, top: 20, width: 12, height: 200 };
    const root = parseXml(`<g xmlns:xlink="http://www.w3.org/1999/xlink">${drawColorBar(frame, COLOR_MAPS.diverging, [-2, 2], { label: 'z', extendHigh: true })}</g>`);
    const ticks = descendants(root, (e) => e.name === 'text' && e.attrs.has('data-value'));
    expect(ticks.map((t) => Number(t.attrs.get('data-value')))).toEqual([-2, -1, 0, 1, 2]);
    expectAllClose(ticks.map((t) => Number(t.attrs.get('y'))), [220, 170, 120, 70, 20], PX);
    expect(descendants(root, (e) => e.name === 'path' && (e.attrs.get('d') ?? '').includes('L16 10')).length).toBe(1);
  });
});

describe('colorLimits', () => {
  const data = Float64Array.from({ length: 1000 }, (_, i) => i + 1);
  it('colorLimits(sequential) brackets the central 99 % (numpy.quantile linear: 5.995 and 995.005 for 1…1000)', () => {
    const { limits, clippedLow, clippedHigh } = colorLimits(data, 'sequential', 0.99);
    // Hand-worked reference: numpy's default 'linear' quantile of 1…1000 at p = 0.005 is 1 + 999·0.005 = 5.995,
    // at p = 0.995 it is 995.005. Our limits are histogram bin edges: within one value (order-statistic
    // convention) plus one bin (999/4096) of those.
    expect(Math.abs(limits[0] - 5.995)).toBeLessThanOrEqual(1 + 999 / 4096);
    expect(Math.abs(limits[1] - 995.005)).toBeLessThanOrEqual(1 + 999 / 4096);
    expect([clippedLow, clippedHigh]).toEqual([true, true]);
  });

  it('colorLimits(diverging) is symmetric about 0 and ignores NaN', () => {
    const d = Float64Array.from([...data].map((v, i) => (i % 2 ? -v : v)).concat([NaN]));
    const { limits } = colorLimits(d, 'diverging', 1);
    expect(limits).toEqual([-1000, 1000]);
    expect(colorLimits(new Float64Array([NaN]), 'sequential').limits).toEqual([0, 1]);
  });
});

describe('drawLegend', () => {
  it('drawLegend wraps rows at maxWidth, reports its size and escapes labels', () => {
    const items = ['alpha <1>', 'beta & co', 'gamma', 'delta'].map((label) => ({ label, color: '#000000' }));
    const one = drawLegend(items, { left: 0, top: 0 });
    const wrapped = drawLegend(items, { left: 0, top: 0, maxWidth: 150 });
    expect(wrapped.height).toBeGreaterThan(one.height);
    expect(wrapped.width).toBeLessThanOrEqual(150);
    expect(allText(parseXml(wrapped.svg))).toBe('alpha <1>beta & cogammadelta');
  });
});

describe('drawMarkers', () => {
  it('drawMarkers skips points with NaN coordinates and escapes tooltips', () => {
    const p = makePanel({ left: 0, top: 0, width: 100, height: 100 }, { domain: [0, 1] }, { domain: [0, 1] });
    const root = parseXml(drawMarkers(p, [0.2, NaN, 0.5], [0.5, 0.5, 0.5], { shape: 'square', color: '#123456', titles: ['a<', 'b', 'c&'] }));
    const paths = descendants(root, (e) => e.name === 'path');
    expect(paths).toHaveLength(2);
    expect(paths.map((x) => allText(x))).toEqual(['a<', 'c&']);
  });
});

describe('markerPath', () => {
  it('markerPath gives well-formed path data for every shape and rejects unknown shapes with TF_BAD_VALUE', () => {
    for (const s of MARKER_SHAPES) expect(markerPath(s, 10, 10, 8)).toMatch(/^M[-\d.]+ [-\d.]+/);
    expect(() => markerPath('star' as never, 0, 0, 4)).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
  });
});

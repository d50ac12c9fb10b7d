import { describe, expect, it } from 'vitest';
import { rng } from '@tuningfork/core';
import { expectAllClose } from '@tuningfork/test-utils';
import {
  CLASS_STYLES, classCountsFigure, COLOR_MAPS, colorAt, kernelFigure, periEventFigure, qcFigure, rasterFigure, trialHeatmapFigure, tuningMapFigure,
  type ResponseInput, type TuningCell,
} from '../src/index.js';
import { decodePng } from './support/png-decode.js';
import { axisMap, pathPoints, subpaths } from './support/svg.js';
import { allText, byClass, descendants, parseXml } from './support/xml.js';

// Geometry tolerance: coordinates are written rounded to 0.1 px (error ≤ 0.05 px) and the axis map is
// read back from rounded tick positions (≤ 0.05 px each), so 0.15 px bounds the disagreement.
const PX = { atol: 0.15, rtol: 0 };

const HOSTILE = '<img src=x onerror=alert(1)>';

function response(): ResponseInput {
  const n = 61;
  const times = Float64Array.from({ length: n }, (_, i) => -1 + i * 0.05);
  const mean = Float64Array.from(times, (t) => (t > 0 ? 2 * Math.exp(-t) * Math.sin(3 * t) : 0.1 * t));
  const low = Float64Array.from(mean, (m, i) => m - 0.3 - 0.01 * i);
  const high = Float64Array.from(mean, (m, i) => m + 0.4 + 0.005 * i);
  const mean2 = Float64Array.from(mean, (m) => -0.5 * m);
  return {
    cell: HOSTILE, event: 'outcome & "more"', unit: '%', level: 0.95,
    conditions: [
      { label: 'rewarded <b>', times, mean, low, high, n: 40, runs: [{ onset: 0.1, offset: 0.6, sign: 1 }, { onset: 1.2, offset: 1.5, sign: -1 }] },
      { label: 'omitted', times, mean: mean2, low: Float64Array.from(mean2, (m) => m - 0.2), high: Float64Array.from(mean2, (m) => m + 0.2), n: 12 },
    ],
  };
}

describe('periEventFigure', () => {
  it('periEventFigure(input) is well-formed XML with data-figure="peri-event" and escaped names', () => {
    const svg = periEventFigure(response());
    const root = parseXml(svg);
    expect(root.name).toBe('svg');
    expect(root.attrs.get('data-figure')).toBe('peri-event');
    expect(root.attrs.get('data-name')).toBe(`${HOSTILE} / outcome & "more"`);
    expect(svg).not.toContain('<img');
    expect(descendants(root, (e) => e.name === 'img' || e.name === 'b')).toHaveLength(0);
    expect(allText(root)).toContain('rewarded <b> (n = 40)');
  });

  it('the band’s upper edge is the CI upper bound and its lower edge the lower bound at every time, under the axis transform', () => {
    const input = response();
    const root = parseXml(periEventFigure(input));
    const x = axisMap(root, 'bottom');
    const y = axisMap(root, 'left');
    const c = input.conditions[0]!;
    const band = byClass(root, 'band')[0]!;
    const pts = pathPoints(band.attrs.get('d')!);
    const n = c.times.length;
    expect(pts).toHaveLength(2 * n);
    expectAllClose(pts.slice(0, n).map((p) => p.x), Array.from(c.times, x.map), PX);
    expectAllClose(pts.slice(0, n).map((p) => p.y), Array.from(c.high, y.map), PX);
    expectAllClose(pts.slice(n).map((p) => p.y).reverse(), Array.from(c.low, y.map), PX);
    // The mean line passes through (t, mean) too.
    const line = pathPoints(byClass(root, 'line')[0]!.attrs.get('d')!);
    expectAllClose(line.map((p) => p.y), Array.from(c.mean, y.map), PX);
  });

  it('significant runs are bars spanning onset to offset: filled when positive, outlined when negative', () => {
    const input = response();
    const root = parseXml(periEventFigure(input));
    const x = axisMap(root, 'bottom');
    const pos = pathPoints(byClass(root, 'run-positive')[0]!.attrs.get('d')!);
    expectAllClose([pos[0]!.x, pos[1]!.x], [x.map(0.1), x.map(0.6)], PX);
    const neg = byClass(root, 'run-negative')[0]!;
    expect(neg.attrs.get('fill')).toBe('#ffffff');
    const np = pathPoints(neg.attrs.get('d')!);
    // Outlined bars are inset by half the 1 px stroke so their outer edge matches onset/offset.
    expectAllClose([np[0]!.x - 0.5, np[1]!.x + 0.5], [x.map(1.2), x.map(1.5)], PX);
  });

  it('periEventFigure rejects mismatched arrays, no conditions and unknown options with stable codes', () => {
    const bad = response();
    const c = bad.conditions[0]!;
    expect(() => periEventFigure({ ...bad, conditions: [{ ...c, high: c.high.subarray(1) }] })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => periEventFigure({ ...bad, conditions: [] })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => periEventFigure(bad, { widht: 3 } as never)).toThrow(expect.objectContaining({ code: 'TF_UNKNOWN_OPTION' }));
  });
});

describe('trialHeatmapFigure', () => {
  const rows = 6, cols = 10;
  const data = Float64Array.from({ length: rows * cols }, (_, i) => ((i % cols) - 4.5) / 4.5 * (Math.floor(i / cols) % 2 ? 1 : -1));
  data[2 * cols + 3] = NaN;
  data[0] = 1; // exactly the upper limit below
  const key = Float64Array.of(0.3, -1.2, NaN, 0.8, -0.1, 0.3);
  const input = { cell: HOSTILE, event: 'cue', matrix: { data, rows, cols }, times: Float64Array.from({ length: cols }, (_, c) => c * 0.1), sortBy: { label: 'RPE <x>', values: key } };

  it('trialHeatmapFigure draws rows sorted by the key (ascending from the top, NaN last), each row in its band of the trial axis', () => {
    const root = parseXml(trialHeatmapFigure(input, { limits: [-1, 1] }));
    expect(root.attrs.get('data-figure')).toBe('trial-heatmap');
    const y = axisMap(root, 'left');
    const rects = descendants(root, (e) => e.name === 'rect' && e.attrs.has('data-row'));
    expect(rects).toHaveLength(rows * cols);
    const byY = [...new Set(rects.map((r) => Number(r.attrs.get('y'))))].sort((a, b) => a - b);
    const rowAt = byY.map((yy) => Number(rects.find((r) => Number(r.attrs.get('y')) === yy)!.attrs.get('data-row')));
    // Expected order worked by hand from key = [0.3, −1.2, NaN, 0.8, −0.1, 0.3]: −1.2, −0.1, 0.3 (row 0), 0.3 (row 5), 0.8, NaN.
    expect(rowAt).toEqual([1, 4, 0, 5, 3, 2]);
    // Display row i spans trial-axis values [i, i + 1].
    expectAllClose(byY, Array.from({ length: rows }, (_, i) => y.map(i)), PX);
  });

  it('trialHeatmapFigure colours 0 with the diverging centre, the upper limit with the orange end and NaN with the missing colour', () => {
    const root = parseXml(trialHeatmapFigure(input, { limits: [-1, 1] }));
    const cell = (r: number, c: number) => descendants(root, (e) => e.attrs.get('data-row') === String(r) && e.attrs.get('data-col') === String(c))[0]!.attrs.get('fill');
    expect(cell(0, 0)).toBe('#a33c0a'); // documented anchor of the diverging map at +1
    expect(cell(2, 3)).toBe(COLOR_MAPS.diverging.missing);
    expect(colorAt(COLOR_MAPS.diverging, 0.5)).toBe('#f4f2ee'); // documented centre anchor
  });

  it('a 350 × 7001 matrix becomes one embedded PNG no wider than the panel, so the SVG size is bounded', () => {
    const g = rng(3);
    const R = 350, C = 7001;
    const big = new Float64Array(R * C);
    for (let r = 0; r < R; r++) for (let c = 0; c < C; c++) big[r * C + c] = Math.sin(c / 700 + r / 50) + 0.3 * g.normal();
    const svg = trialHeatmapFigure({ ...input, matrix: { data: big, rows: R, cols: C }, times: Float64Array.from({ length: C }, (_, c) => -2 + c / 1000), sortBy: { label: 'RPE', values: g.fillNormal(new Float64Array(R)) } });
    const root = parseXml(svg);
    const img = byClass(root, 'heatmap')[0]!;
    expect(img.name).toBe('image');
    const png = decodePng(Buffer.from(img.attrs.get('xlink:href')!.split(',')[1]!, 'base64'));
    expect(png.width).toBeLessThanOrEqual(Math.ceil(Number(img.attrs.get('width'))));
    expect(png.height).toBe(R);
    expect(svg.length).toBeLessThan(400_000);
  });

  it('trialHeatmapFigure rejects a sort key of the wrong length with TF_SHAPE_MISMATCH', () => {
    expect(() => trialHeatmapFigure({ ...input, sortBy: { label: 'RPE', values: new Float64Array(3) } })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('rasterFigure', () => {
  const trials = [Float64Array.of(-0.5, 0.1, 0.2), Float64Array.of(0.05), Float64Array.of(-0.9, 0.5, 0.9, 1.5)];
  const times = Float64Array.from({ length: 20 }, (_, k) => -1 + (k + 0.5) * 0.15);
  const input = { unit: HOSTILE, event: 'outcome', window: [-1, 2] as const, trials, peth: { times, rate: Float64Array.from(times, (t) => 5 + 3 * Math.exp(-t * t)) } };

  it('rasterFigure puts each spike tick at its time on the shared time axis and in its trial row', () => {
    const root = parseXml(rasterFigure(input));
    expect(root.attrs.get('data-figure')).toBe('raster');
    const x = axisMap(root, 'bottom', 1); // the PETH's labelled axis; the raster shares its x scale
    const yR = axisMap(root, 'left', 0);
    const ticks = subpaths(pathPoints(byClass(root, 'spikes')[0]!.attrs.get('d')!));
    expect(ticks).toHaveLength(8);
    const expectedX = trials.flatMap((t) => Array.from(t).filter((s) => s >= -1 && s <= 2)).map(x.map);
    expectAllClose(ticks.map((t) => t[0]!.x), expectedX, PX);
    // Trial i's ticks span [i + 0.1, i + 0.9] on the trial axis (drawn top to bottom).
    expectAllClose(ticks.map((t) => t[0]!.y), [0, 0, 0, 1, 2, 2, 2, 2].map((i) => yR.map(i + 0.1)), PX);
  });

  it('rasterFigure draws many spikes as a bitmap with one column per pixel', () => {
    const g = rng(5);
    const many = Array.from({ length: 300 }, () => Float64Array.from({ length: 40 }, () => -1 + 3 * g.uniform()).sort());
    const root = parseXml(rasterFigure({ ...input, trials: many }));
    const img = descendants(root, (e) => e.name === 'image' && (e.attrs.get('class') ?? '') === 'spikes')[0]!;
    const png = decodePng(Buffer.from(img.attrs.get('xlink:href')!.split(',')[1]!, 'base64'));
    expect(png.width).toBe(Math.ceil(Number(img.attrs.get('width'))));
    expect(png.height).toBe(300);
  });

  it('rasterFigure rejects a window with end ≤ start with TF_BAD_OPTION', () => {
    expect(() => rasterFigure({ ...input, window: [1, 1] })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('kernelFigure', () => {
  const lags = Float64Array.from({ length: 41 }, (_, i) => -1 + i * 0.1);
  const k = (a: number) => ({ label: `k${a}`, lags, estimate: Float64Array.from(lags, (t) => a * Math.exp(-((t - 0.3) ** 2) / 0.1)), low: Float64Array.from(lags, (t) => a * Math.exp(-((t - 0.3) ** 2) / 0.1) - 0.1), high: Float64Array.from(lags, (t) => a * Math.exp(-((t - 0.3) ** 2) / 0.1) + 0.1) });

  it('kernelFigure draws one panel per group on a shared y scale, bands covering each kernel’s interval', () => {
    const input = { cell: HOSTILE, groups: [{ group: 'reward', kernels: [k(1), k(0.5)] }, { group: 'movement <m>', kernels: [k(-0.4)] }, { group: 'action', kernels: [k(0.1)] }] };
    const root = parseXml(kernelFigure(input));
    expect(root.attrs.get('data-figure')).toBe('kernels');
    expect(byClass(root, 'axis-left')).toHaveLength(3);
    // Shared y: the dotted zero line sits at the same height in every panel.
    const zeroY = byClass(root, 'rule').filter((_, i) => i % 2 === 0).map((r) => pathPoints(r.attrs.get('d')!)[0]!.y);
    expect(new Set(zeroY).size).toBe(1);
    const y = axisMap(root, 'left', 0);
    const band = pathPoints(byClass(root, 'band')[0]!.attrs.get('d')!);
    expectAllClose(band.slice(0, 41).map((p) => p.y), Array.from(input.groups[0]!.kernels[0]!.high, y.map), PX);
    expect(allText(root)).toContain('movement <m>');
  });
});

describe('tuningMapFigure', () => {
  const cells: TuningCell[] = [
    { cell: 'a', class: 'reward', sign: 1, rewardUnique: 0.08, movementUnique: 0.01 },
    { cell: 'b', class: 'movement', sign: -1, rewardUnique: 0.005, movementUnique: 0.06 },
    { cell: HOSTILE, class: 'mixed', sign: 1, rewardUnique: 0.04, movementUnique: 0.05 },
    { cell: 'd', class: 'none', sign: 0, rewardUnique: 0.001, movementUnique: -0.002 },
    { cell: 'e', class: 'action-prediction', sign: 1, rewardUnique: NaN, movementUnique: 0.01 },
  ];

  it('tuningMapFigure shows each class by its colour AND shape, negative cells open, at (reward ΔR², movement ΔR²)', () => {
    const root = parseXml(tuningMapFigure(cells));
    expect(root.attrs.get('data-figure')).toBe('tuning-map');
    const x = axisMap(root, 'bottom');
    const y = axisMap(root, 'left');
    const groups = descendants(root, (e) => e.name === 'g' && (e.attrs.get('class') ?? '') === 'markers');
    const byShape = new Map(groups.map((g) => [g.attrs.get('data-shape'), g]));
    for (const c of cells.slice(0, 4)) {
      const st = CLASS_STYLES[c.class]!;
      const g = byShape.get(st.shape)!;
      const path = g.children[0]!;
      expect(path.attrs.get(st.shape === 'cross' || c.sign < 0 ? 'stroke' : 'fill')).toBe(st.color);
      if (c.sign < 0) expect(path.attrs.get('fill')).toBe('#ffffff');
      expect(allText(path)).toContain(c.cell);
    }
    // Circle marker path starts at (cx − r, cy) with r = 4 (size 8).
    const circle = pathPoints(byShape.get('circle')!.children[0]!.attrs.get('d')!)[0]!;
    expectAllClose([circle.x + 4, circle.y], [x.map(0.08), y.map(0.01)], PX);
    // Square path starts at (cx − s, cy − s) with s = 0.89 r.
    const sq = pathPoints(byShape.get('square')!.children[0]!.attrs.get('d')!)[0]!;
    expectAllClose([sq.x + 3.56, sq.y + 3.56], [x.map(0.005), y.map(0.06)], PX);
    expect(allText(root)).toContain('1 without values not shown');
  });
});

describe('classCountsFigure', () => {
  it('classCountsFigure draws bars whose tops sit at the counts on the count axis, in the class colours', () => {
    const counts = [{ class: 'movement', count: 7 }, { class: 'reward', count: 12 }, { class: 'none', count: 0 }, { class: 'odd <c>', count: 2 }];
    const root = parseXml(classCountsFigure(counts));
    const y = axisMap(root, 'left');
    for (const t of y.ticks) expect(Number.isInteger(t)).toBe(true);
    const bars = byClass(root, 'bar');
    // Class order: reward, movement, none (built-in order), then others in order of appearance.
    expectAllClose(bars.map((b) => Number(b.attrs.get('y'))), [12, 7, 0, 2].map(y.map), PX);
    expect(bars.map((b) => b.attrs.get('fill')).slice(0, 3)).toEqual([CLASS_STYLES.reward!.color, CLASS_STYLES.movement!.color, CLASS_STYLES.none!.color]);
    expect(allText(root)).toContain('odd <c>');
    expect(() => classCountsFigure([{ class: 'x', count: 1.5 }])).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
  });
});

describe('qcFigure', () => {
  const n = 360_000;
  const rate = 100;
  const g = rng(8);
  const raw = Float64Array.from({ length: n }, (_, i) => 2 * Math.exp(-i / 2e5) + 0.01 * g.normal());
  const ctl = Float64Array.from({ length: n }, (_, i) => 2 * Math.exp(-i / 2e5));
  const dff = Float64Array.from(raw, (v, i) => (i >= 100_000 && i < 101_000 ? NaN : (v - ctl[i]!) / ctl[i]!));
  const f = Float64Array.from({ length: 200 }, (_, k) => (k + 1) * 0.25);
  const input = { site: HOSTILE, raw: { values: raw, sampleRate: rate, t0: 0 }, fittedControl: { values: ctl, sampleRate: rate, t0: 0 }, dff: { values: dff, sampleRate: rate, t0: 0 }, spectrum: { frequencies: f, power: Float64Array.from(f, (x) => 1 / x) } };

  it('qcFigure decimates hour-long traces to the pixel grid and shows missing samples as a gap', () => {
    const svg = qcFigure(input);
    const root = parseXml(svg);
    expect(root.attrs.get('data-figure')).toBe('qc');
    const dffPath = byClass(root, 'dff')[0]!;
    const pts = pathPoints(dffPath.attrs.get('d')!);
    const width = 760 - 72 - 20;
    expect(pts.length).toBeLessThanOrEqual(4 * width + 4);
    expect(subpaths(pts)).toHaveLength(2);
    expect(svg.length).toBeLessThan(250_000);
  });

  it('qcFigure draws the spectrum on log axes labelled by decades', () => {
    const root = parseXml(qcFigure(input));
    const bottoms = byClass(root, 'axis-bottom');
    const specAxis = bottoms[bottoms.length - 1]!;
    const labels = descendants(specAxis, (e) => e.name === 'text' && e.attrs.has('data-value')).map((e) => e.text);
    expect(labels).toEqual(['0.1', '1', '10', '100']);
  });

  it('qcFigure rejects a bad sample rate with TF_BAD_SAMPLE_RATE', () => {
    expect(() => qcFigure({ ...input, dff: { values: dff, sampleRate: 0, t0: 0 } })).toThrow(expect.objectContaining({ code: 'TF_BAD_SAMPLE_RATE' }));
  });
});

import { checkPositive, resolveOptions, TuningforkError, type UniformSignal } from '@tuningfork/core';
import { drawScaleBar, drawText, niceLength } from '../primitives/annotate.js';
import { drawAxis } from '../primitives/axes.js';
import { INK, PALETTE } from '../primitives/color.js';
import { decimateLine } from '../primitives/decimate.js';
import { svgFigure, type Panel } from '../primitives/figure.js';
import { drawLegend } from '../primitives/legend.js';
import { drawLine, drawRule } from '../primitives/marks.js';
import { formatNumber, formatTick } from '../primitives/format.js';
import { escapeXml } from '../primitives/escape.js';
import { linearScale } from '../primitives/scale.js';
import type { QcInput } from '../types.js';
import { checkLengths, checkSignal, finiteExtent } from '../internal/validate.js';
import { px } from '../internal/num.js';

/** Options of qcFigure. */
export interface QcFigureOptions {
  /** Element id, unique in the page. @defaultValue 'qc' */
  id?: string;
  /** Width, px. @defaultValue 760 */
  width?: number;
  /** Height, px. @defaultValue 560 */
  height?: number;
  /** Window of the detail view, s on the session clock; null = 30 s around the middle of the trace. @defaultValue null */
  excerpt?: readonly [number, number] | null;
}

const DEFAULTS = Object.freeze({ id: 'qc', width: 760, height: 560, excerpt: null as readonly [number, number] | null });

function durationOf(s: UniformSignal): [number, number] {
  return [s.t0, s.t0 + (s.values.length - 1) / s.sampleRate];
}

/**
 * Quality-control figure of one photometry site: (A) raw sensor signal with the fitted control
 * over the whole session, (B) the corrected trace, (C) a short excerpt of the corrected trace with
 * scale bars (its window is shaded in B) and (D) the power spectrum on log–log axes.
 *
 * Long traces are decimated to the pixel grid (≤ 4 points per pixel column, see decimateLine),
 * so the SVG size does not grow with the recording length. Time is shown in minutes for traces
 * longer than 5 minutes. Values are drawn as given (no rescaling); NaN samples show as gaps.
 *
 * @param input - Site name, traces, spectrum and units.
 * @returns SVG markup with data-figure="qc".
 * @throws {TuningforkError} TF_BAD_SAMPLE_RATE for a bad signal rate; TF_SHAPE_MISMATCH for spectrum
 *   arrays of unequal length; TF_TOO_FEW_SAMPLES for an empty trace; TF_UNKNOWN_OPTION, TF_BAD_OPTION.
 */
export function qcFigure(input: QcInput, options: QcFigureOptions = {}): string {
  const fn = 'qcFigure';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkPositive(fn, 'width', o.width);
  checkPositive(fn, 'height', o.height);
  checkSignal(fn, 'raw', input.raw);
  checkSignal(fn, 'fittedControl', input.fittedControl);
  checkSignal(fn, 'dff', input.dff);
  checkLengths(fn, 'spectrum', { frequencies: input.spectrum.frequencies, power: input.spectrum.power });
  if (input.raw.values.length < 2 || input.dff.values.length < 2) {
    throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: site ${JSON.stringify(input.site)} needs at least 2 samples in raw and dff, got ${input.raw.values.length} and ${input.dff.values.length}.`, { site: input.site });
  }
  const W = o.width;
  const H = o.height;
  const fig = svgFigure({ width: W, height: H, id: o.id, kind: 'qc', name: input.site, title: `${input.site}: signal quality`, description: 'Raw signal with fitted control, corrected trace, excerpt and power spectrum.' });
  const rawUnit = input.rawUnit ?? 'a.u.';
  const dffLabel = input.dffLabel ?? 'ΔF/F';
  const dffUnit = input.dffUnit ?? '';

  const [t0a, t1a] = durationOf(input.raw);
  const [t0b, t1b] = durationOf(input.dff);
  const tStart = Math.min(t0a, t0b);
  const tEnd = Math.max(t1a, t1b);
  const minutes = tEnd - tStart > 300;
  const tk = minutes ? 1 / 60 : 1;
  const tUnit = minutes ? 'min' : 's';
  const asX = (s: UniformSignal) => ({ x0: s.t0 * tk, rate: s.sampleRate / tk });

  const left = 72;
  const right = 20;
  const pw = W - left - right;
  fig.add(drawText(10, 18, `${input.site}: signal quality`, { size: 13, weight: 'bold' }));

  // (A) raw + fitted control
  const legend = drawLegend(
    [{ label: 'raw signal', color: PALETTE.blue }, { label: 'fitted control', color: PALETTE.orange }],
    { left: left, top: 26 },
  );
  fig.add(legend.svg);
  const aTop = 26 + legend.height + 6;
  const aH = Math.max(60, (H - aTop - 250) * 0.5);
  const xDomain: [number, number] = [tStart * tk, tEnd * tk];
  const xScale = linearScale(xDomain, [left, left + pw]);
  const rawD = decimateLine(asX(input.raw), input.raw.values, xScale);
  const ctlD = decimateLine(asX(input.fittedControl), input.fittedControl.values, xScale);
  const aExt = finiteExtent([rawD.y, ctlD.y]) ?? [0, 1];
  const pA = fig.panel({ left, top: aTop, width: pw, height: aH }, { domain: xDomain }, { domain: aExt, nice: true, tickCount: 4 });
  fig.add(
    drawLine(pA, rawD.x, rawD.y, { color: PALETTE.blue, width: 1, decimate: false, className: 'line raw' }),
    drawLine(pA, ctlD.x, ctlD.y, { color: PALETTE.orange, width: 1, opacity: 0.9, decimate: false, className: 'line control' }),
    drawAxis(pA, 'left', { label: 'Raw', unit: rawUnit }),
    drawAxis(pA, 'bottom', { tickLabels: false }),
    panelLetter(pA, 'A'),
  );

  // (B) corrected trace
  const bTop = aTop + aH + 18;
  const bH = aH;
  const dffD = decimateLine(asX(input.dff), input.dff.values, xScale);
  const bExt = finiteExtent([dffD.y]) ?? [0, 1];
  const pB = fig.panel({ left, top: bTop, width: pw, height: bH }, { domain: xDomain }, { domain: bExt, nice: true, tickCount: 4 });
  // excerpt window (session seconds)
  let ex: [number, number];
  if (o.excerpt) {
    if (!(o.excerpt[1] > o.excerpt[0])) throw new TuningforkError('TF_BAD_OPTION', `${fn}: excerpt must be [start, end] with end > start, got [${o.excerpt[0]}, ${o.excerpt[1]}].`, { excerpt: o.excerpt });
    ex = [o.excerpt[0], o.excerpt[1]];
  } else {
    const mid = (t0b + t1b) / 2;
    const half = Math.min(15, (t1b - t0b) / 2);
    ex = [mid - half, mid + half];
  }
  const sx0 = pB.x.map(ex[0] * tk);
  const sx1 = pB.x.map(ex[1] * tk);
  fig.add(
    `<rect class="excerpt-window" x="${px(sx0)}" y="${px(pB.top)}" width="${px(Math.max(1.5, sx1 - sx0))}" height="${px(pB.height)}" fill="#000000" fill-opacity="0.07"/>`,
    drawRule(pB, 'y', 0, { color: '#9a9a9a', dash: '2 3' }),
    drawLine(pB, dffD.x, dffD.y, { color: INK, width: 1, decimate: false, className: 'line dff' }),
    drawAxis(pB, 'left', { label: dffLabel, unit: dffUnit }),
    drawAxis(pB, 'bottom', { label: 'Session time', unit: tUnit }),
    panelLetter(pB, 'B'),
  );

  // (C) excerpt with scale bars, (D) spectrum
  const cTop = bTop + bH + 62;
  const cH = H - cTop - 46;
  const cW = pw * 0.5;
  const rate = input.dff.sampleRate;
  const i0 = Math.max(0, Math.floor((ex[0] - input.dff.t0) * rate));
  const i1 = Math.min(input.dff.values.length, Math.ceil((ex[1] - input.dff.t0) * rate) + 1);
  const exVals = input.dff.values.subarray(i0, Math.max(i0, i1));
  const exT0 = input.dff.t0 + i0 / rate;
  const exD = decimateLine({ x0: exT0, rate }, exVals, linearScale(ex, [left, left + cW]));
  const cExt = finiteExtent([exD.y]) ?? [0, 1];
  const pad = (cExt[1] - cExt[0]) * 0.08 || 0.5;
  const pC = fig.panel({ left, top: cTop, width: cW, height: cH }, { domain: ex }, { domain: [cExt[0] - pad, cExt[1] + pad] });
  const tLen = niceLength(ex[1] - ex[0], 0.25);
  const yLen = niceLength(cExt[1] - cExt[0] || 1, 0.4);
  fig.add(
    drawLine(pC, exD.x, exD.y, { color: INK, width: 1.2, decimate: false, className: 'line excerpt' }),
    drawScaleBar(pC, { x: { length: tLen, label: `${formatTick(tLen, tLen)} s` }, y: { length: yLen, label: `${formatTick(yLen, yLen)}${dffUnit ? ` ${dffUnit}` : ''}` } }, 'bottom-left', 'outside'),
    drawText(pC.left + pC.width, pC.top + pC.height + 20, `${dffLabel}, ${formatNumber(ex[0], { decimals: 0 })}–${formatNumber(ex[1], { decimals: 0 })} s`, { size: 11, color: '#555555', anchor: 'end' }),
    panelLetter(pC, 'C'),
  );

  const dLeft = left + cW + 86;
  const dW = W - dLeft - right;
  const f = input.spectrum.frequencies;
  const pw2 = input.spectrum.power;
  const fExt = finiteExtent([f], true);
  const pExt = finiteExtent([pw2], true);
  if (fExt && pExt && dW > 40) {
    const pD = fig.panel({ left: dLeft, top: cTop, width: dW, height: cH }, { domain: fExt, type: 'log', nice: true }, { domain: pExt, type: 'log', nice: true });
    fig.add(
      drawLine(pD, f, pw2, { color: PALETTE.violet, width: 1.3, className: 'line spectrum' }),
      drawAxis(pD, 'left', { label: 'Power', unit: input.spectrum.unit ?? 'a.u.²/Hz' }),
      drawAxis(pD, 'bottom', { label: 'Frequency', unit: 'Hz' }),
      panelLetter(pD, 'D'),
    );
  } else {
    fig.add(drawText(dLeft, cTop + cH / 2, 'no spectrum (no positive frequencies or power)', { color: '#777777' }));
  }
  return fig.render();
}

/** Bold panel letter above the top-left corner of a panel. */
export function panelLetter(p: Panel, letter: string): string {
  return `<text class="panel-letter" x="${px(p.left - 58)}" y="${px(p.top - 4)}" font-size="13" font-weight="bold">${escapeXml(letter)}</text>`;
}

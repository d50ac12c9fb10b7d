import { TuningforkError } from '@tuningfork/core';
import { formatTick, superscript } from './format.js';

/** A tick of an axis: its value in data units, its label, and whether it is a minor tick. */
export interface Tick {
  readonly value: number;
  readonly label: string;
  readonly minor: boolean;
}

/**
 * Map from data values to pixels along one axis. `map` is affine for 'linear' and affine in
 * log10(value) for 'log' (non-positive values map to NaN there).
 */
export interface Scale {
  readonly type: 'linear' | 'log';
  /** Data interval shown, [start, end] (start may exceed end for reversed axes). */
  readonly domain: readonly [number, number];
  /** Pixel interval, [pixel of domain[0], pixel of domain[1]]. */
  readonly range: readonly [number, number];
  /** Pixel position of a data value. */
  map(value: number): number;
  /** Data value at a pixel position. */
  invert(pixel: number): number;
  /** Ticks of this axis, labelled. */
  ticks(): readonly Tick[];
}

/**
 * A 'nice' tick step for a span: 1, 2 or 5 × 10^k, about span / count.
 *
 * **Method.** raw = span / count is split into mantissa f ∈ [1, 10) and 10^k; f rounds to 1
 * (f < 1.5), 2 (f < 3), 5 (f < 7) or 10, as in Heckbert's "nice numbers" rule.
 *
 * @param span - Positive finite data span.
 * @param count - Desired number of intervals (≥ 1). @defaultValue 5
 * @returns The step.
 * @throws {TuningforkError} TF_BAD_OPTION when span is not finite and > 0.
 *
 * References
 * - Heckbert, P. S. (1990). Nice numbers for graph labels. In A. S. Glassner (ed.), Graphics
 *   Gems, 61–63, 657–659. Academic Press. doi:10.1016/B978-0-08-050753-8.50020-8
 */
export function niceStep(span: number, count = 5): number {
  if (!(span > 0) || !Number.isFinite(span)) {
    throw new TuningforkError('TF_BAD_OPTION', `niceStep: span must be a finite number > 0, got ${span}.`, { span });
  }
  const raw = span / Math.max(1, count);
  const k = Math.floor(Math.log10(raw));
  const f = raw / 10 ** k;
  const m = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
  return m === 10 ? decimalPow(k + 1) : m * decimalPow(k);
}

/** 10^k computed so that negative powers are the closest doubles to the decimal (1e-3, not 0.0010000000000000002). */
function decimalPow(k: number): number {
  return k >= 0 ? 10 ** k : 1 / 10 ** -k;
}

/** The i-th multiple of step, computed to be the closest double to the decimal value. */
function multiple(i: number, step: number): number {
  const k = Math.floor(Math.log10(step) + 1e-9);
  if (k >= 0) return i * step;
  const p = 10 ** -k;
  return Math.round(i * step * p) / p;
}

/** floor(q), but an integer within relative round-off (1e-9·max(1, |q|)) counts as reached. */
function floorTol(q: number): number {
  const r = Math.round(q);
  return Math.abs(q - r) <= 1e-9 * Math.max(1, Math.abs(q)) ? r : Math.floor(q);
}
/** ceil(q), with the same round-off allowance as floorTol. */
function ceilTol(q: number): number {
  const r = Math.round(q);
  return Math.abs(q - r) <= 1e-9 * Math.max(1, Math.abs(q)) ? r : Math.ceil(q);
}

/**
 * Tick values at the multiples of `step` inside [lo, hi] (inclusive up to round-off: a relative 1e-9 of lo / step).
 *
 * @param lo - Lower end (finite).
 * @param hi - Upper end (finite, ≥ lo).
 * @param step - Tick spacing (> 0), e.g. from niceStep.
 * @returns Increasing tick values.
 */
export function ticksAt(lo: number, hi: number, step: number): Float64Array {
  const first = ceilTol(lo / step);
  const last = floorTol(hi / step);
  const n = Math.max(0, last - first + 1);
  const out = new Float64Array(Math.min(n, 1000));
  for (let i = 0; i < out.length; i++) out[i] = multiple(first + i, step) + 0; // + 0 turns −0 into 0
  return out;
}

/**
 * Extend [lo, hi] outward to multiples of a nice step so that the first and last ticks bound the data.
 *
 * A zero-width interval is widened first (to ±0.5 around 0, else ±10 % of |lo|) — a documented repair,
 * so a constant trace still gets an axis.
 *
 * @returns `{ domain: [niceLo, niceHi], step }` with niceLo ≤ lo and niceHi ≥ hi; the ends are multiples
 *   of step except when lo or hi lies within 1e-9 of a step beyond one (round-off), where the end is the data value.
 * @throws {TuningforkError} TF_NON_FINITE when lo or hi is not finite.
 */
export function niceDomain(lo: number, hi: number, count = 5): { domain: [number, number]; step: number } {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) {
    throw new TuningforkError('TF_NON_FINITE', `niceDomain: limits must be finite, got [${lo}, ${hi}]. Remove NaN/±Infinity from the data or pass explicit limits.`, { lo, hi });
  }
  if (lo > hi) [lo, hi] = [hi, lo];
  if (lo === hi) {
    const d = lo === 0 ? 0.5 : Math.abs(lo) * 0.1;
    lo -= d;
    hi += d;
  }
  let step = niceStep(hi - lo, count);
  for (let iter = 0; iter < 3; iter++) {
    const a = multiple(floorTol(lo / step), step);
    const b = multiple(ceilTol(hi / step), step);
    const next = niceStep(b - a, count);
    // Data within 1e-9 of a step beyond a tick (round-off in lo / step) counts as on the tick;
    // the domain still contains the data exactly.
    if (next <= step) return { domain: [Math.min(a, lo), Math.max(b, hi)], step };
    step = next;
  }
  return { domain: [Math.min(lo, multiple(floorTol(lo / step), step)), Math.max(hi, multiple(ceilTol(hi / step), step))], step };
}

/** Options of linearScale. */
export interface LinearScaleOptions {
  /** Extend the domain to nice tick multiples (see niceDomain). @defaultValue false */
  nice?: boolean;
  /** Desired number of tick intervals. @defaultValue 5 */
  tickCount?: number;
  /** Format a tick label; receives the value and the tick step. @defaultValue formatTick */
  format?: (value: number, step: number) => string;
}

function checkInterval(fn: string, name: string, v: readonly [number, number]): void {
  if (!Array.isArray(v) || v.length !== 2 || !Number.isFinite(v[0]) || !Number.isFinite(v[1])) {
    throw new TuningforkError('TF_NON_FINITE', `${fn}: ${name} must be two finite numbers, got ${JSON.stringify(v)}.`, { fn, [name]: v });
  }
}

/**
 * Linear scale: pixel = r0 + (value − d0) · (r1 − r0) / (d1 − d0).
 *
 * Ticks are the multiples of a nice step (1, 2 or 5 × 10^k) inside the domain, labelled with
 * formatTick. With `nice: true` the domain first grows to whole steps, so ticks cover the data.
 *
 * @param domain - [d0, d1] in data units (finite; equal ends are widened, see niceDomain).
 * @param range - [r0, r1] in pixels (e.g. [bottom, top] for a y axis).
 * @throws {TuningforkError} TF_NON_FINITE for non-finite domain or range.
 * @example
 * linearScale([0, 10], [0, 100]).map(2.5) // 25
 */
export function linearScale(domain: readonly [number, number], range: readonly [number, number], options: LinearScaleOptions = {}): Scale {
  checkInterval('linearScale', 'domain', domain);
  checkInterval('linearScale', 'range', range);
  const count = options.tickCount ?? 5;
  let d0 = domain[0];
  let d1 = domain[1];
  let step: number;
  if (options.nice) {
    const reversed = d0 > d1;
    const nd = niceDomain(d0, d1, count);
    [d0, d1] = reversed ? [nd.domain[1], nd.domain[0]] : nd.domain;
    step = nd.step;
  } else {
    if (d0 === d1) {
      const d = d0 === 0 ? 0.5 : Math.abs(d0) * 0.1;
      d0 -= d;
      d1 += d;
    }
    step = niceStep(Math.abs(d1 - d0), count);
  }
  const r0 = range[0];
  const r1 = range[1];
  const k = (r1 - r0) / (d1 - d0);
  const fmt = options.format ?? formatTick;
  return {
    type: 'linear',
    domain: [d0, d1],
    range: [r0, r1],
    map: (v: number) => r0 + (v - d0) * k,
    invert: (p: number) => d0 + (p - r0) / k,
    ticks: () => Array.from(ticksAt(Math.min(d0, d1), Math.max(d0, d1), step), (v) => ({ value: v, label: fmt(v, step), minor: false })),
  };
}

/** Options of logScale. */
export interface LogScaleOptions {
  /** Extend the domain outward to whole decades. @defaultValue false */
  nice?: boolean;
}

/**
 * Base-10 logarithmic scale: pixel = r0 + (log10 v − log10 d0) · (r1 − r0) / (log10 d1 − log10 d0).
 * Values ≤ 0 map to NaN (drawing functions skip them).
 *
 * Ticks: every decade 10^k in the domain is a major, labelled tick (plain decimals from 0.001 to
 * 10 000, else 10ⁿ); 2× and 5× each decade are minor ticks, labelled only when the domain spans
 * less than two decades.
 *
 * @param domain - [d0, d1], both finite and > 0.
 * @param range - Pixels.
 * @throws {TuningforkError} TF_BAD_OPTION when a domain end is ≤ 0; TF_NON_FINITE when not finite.
 */
export function logScale(domain: readonly [number, number], range: readonly [number, number], options: LogScaleOptions = {}): Scale {
  checkInterval('logScale', 'domain', domain);
  checkInterval('logScale', 'range', range);
  let [d0, d1] = domain;
  if (!(d0 > 0) || !(d1 > 0)) {
    throw new TuningforkError('TF_BAD_OPTION', `logScale: domain must be > 0 at both ends, got [${d0}, ${d1}].`, { domain });
  }
  if (d0 === d1) {
    d0 /= 10;
    d1 *= 10;
  }
  if (options.nice) {
    const lo = Math.min(d0, d1);
    const hi = Math.max(d0, d1);
    const a = decimalPow(Math.floor(Math.log10(lo) + 1e-9));
    const b = decimalPow(Math.ceil(Math.log10(hi) - 1e-9));
    [d0, d1] = d0 <= d1 ? [a, b] : [b, a];
  }
  const l0 = Math.log10(d0);
  const l1 = Math.log10(d1);
  const [r0, r1] = range;
  const k = (r1 - r0) / (l1 - l0);
  return {
    type: 'log',
    domain: [d0, d1],
    range: [r0, r1],
    map: (v: number) => (v > 0 ? r0 + (Math.log10(v) - l0) * k : NaN),
    invert: (p: number) => 10 ** (l0 + (p - r0) / k),
    ticks: () => logTicks(Math.min(d0, d1), Math.max(d0, d1)),
  };
}

/** Label of a power of ten, 10^k. */
function decadeLabel(k: number): string {
  if (k >= -3 && k <= 4) return formatTick(decimalPow(k), decimalPow(k));
  return `10${superscript(k)}`;
}

/**
 * Ticks of a log axis over [lo, hi] (both > 0): decades (major, labelled) and 2×, 5× (minor).
 *
 * @returns Ticks sorted by value.
 */
export function logTicks(lo: number, hi: number): readonly Tick[] {
  const k0 = Math.floor(Math.log10(lo) + 1e-9);
  const k1 = Math.ceil(Math.log10(hi) - 1e-9);
  const labelMinor = Math.log10(hi / lo) < 2;
  const out: Tick[] = [];
  const inside = (v: number) => v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9);
  for (let k = k0; k <= k1 && out.length < 400; k++) {
    const dec = decimalPow(k);
    if (inside(dec)) out.push({ value: dec, label: decadeLabel(k), minor: false });
    for (const m of [2, 5]) {
      const v = k >= 0 ? m * dec : m / 10 ** -k;
      if (inside(v)) out.push({ value: v, label: labelMinor ? formatTick(v, dec) : '', minor: !labelMinor });
    }
  }
  return out;
}

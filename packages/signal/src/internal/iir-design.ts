/**
 * Zero-pole-gain IIR design steps, written to follow scipy.signal's `iirfilter` path step for
 * step (analog prototype → frequency transform → bilinear transform → second-order sections or
 * transfer function), so that designs agree with scipy to rounding error, including the order
 * and pairing of second-order sections (`zpk2sos`, pairing 'nearest').
 */
import {
  cabs, cadd, cdiv, cmul, cneg, csinh, csqrt, csub, cx, cexp, cprod, isReal,
} from './complex.js';
import type { Complex } from './complex.js';

export interface Zpk {
  readonly z: Complex[];
  readonly p: Complex[];
  readonly k: number;
}

export type BandType = 'lowpass' | 'highpass' | 'bandpass';

/** Analog Butterworth prototype: poles −exp(iπm/(2N)), m = −N+1, −N+3, …, N−1. */
export function butterPrototype(n: number): Zpk {
  const p: Complex[] = [];
  for (let m = -n + 1; m < n; m += 2) {
    // numpy evaluates 1j*pi*m/(2N) as complex arithmetic: im = (pi*m) * (1/(2N)) (Smith division).
    const theta = (Math.PI * m) * (1 / (2 * n));
    p.push(cneg(cexp(cx(0, theta))));
  }
  return { z: [], p, k: 1 };
}

/** Analog Chebyshev type I prototype with passband ripple `rippleDb` (dB). */
export function cheby1Prototype(n: number, rippleDb: number): Zpk {
  const eps = Math.sqrt(10 ** (0.1 * rippleDb) - 1);
  const mu = (1 / n) * Math.asinh(1 / eps);
  const p: Complex[] = [];
  for (let m = -n + 1; m < n; m += 2) {
    const theta = (Math.PI * m) / (2 * n);
    p.push(cneg(csinh(cx(mu, theta))));
  }
  let k = cprod(p.map(cneg)).re;
  if (n % 2 === 0) k = k / Math.sqrt(1 + eps * eps);
  return { z: [], p, k };
}

function lp2lp(f: Zpk, wo: number): Zpk {
  const degree = f.p.length - f.z.length;
  const s = cx(wo, 0);
  return { z: f.z.map((z) => cmul(s, z)), p: f.p.map((p) => cmul(s, p)), k: f.k * wo ** degree };
}

function lp2hp(f: Zpk, wo: number): Zpk {
  const degree = f.p.length - f.z.length;
  const s = cx(wo, 0);
  const z = f.z.map((v) => cdiv(s, v));
  const p = f.p.map((v) => cdiv(s, v));
  for (let i = 0; i < degree; i++) z.push(cx(0, 0));
  const num = f.z.length === 0 ? cx(1, 0) : cprod(f.z.map(cneg));
  const k = f.k * cdiv(num, cprod(f.p.map(cneg))).re;
  return { z, p, k };
}

function lp2bp(f: Zpk, wo: number, bw: number): Zpk {
  const degree = f.p.length - f.z.length;
  const scale = (v: Complex): Complex => {
    const t = cmul(v, cx(bw, 0));
    return { re: t.re * 0.5, im: t.im * 0.5 };
  };
  const wo2 = cx(wo * wo, 0);
  const shift = (list: Complex[]): Complex[] => {
    const lp = list.map(scale);
    const roots = lp.map((v) => csqrt(csub(cmul(v, v), wo2)));
    return [...lp.map((v, i) => cadd(v, roots[i]!)), ...lp.map((v, i) => csub(v, roots[i]!))];
  };
  const z = shift(f.z);
  for (let i = 0; i < degree; i++) z.push(cx(0, 0));
  return { z, p: shift(f.p), k: f.k * bw ** degree };
}

/** Bilinear transform with fs = 2 (scipy's normalised digital design). */
function bilinear(f: Zpk): Zpk {
  const degree = f.p.length - f.z.length;
  const fs2 = cx(4, 0);
  const map = (v: Complex): Complex => cdiv(cadd(fs2, v), csub(fs2, v));
  const z = f.z.map(map);
  for (let i = 0; i < degree; i++) z.push(cx(-1, 0));
  const num = f.z.length === 0 ? cx(1, 0) : cprod(f.z.map((v) => csub(fs2, v)));
  const k = f.k * cdiv(num, cprod(f.p.map((v) => csub(fs2, v)))).re;
  return { z, p: f.p.map(map), k };
}

/**
 * Digital design from an analog prototype: `wn` are critical frequencies as fractions of the
 * Nyquist frequency (0 < wn < 1), pre-warped as scipy does (`4·tan(π·wn/2)`).
 */
export function digitalDesign(proto: Zpk, band: BandType, wn: readonly number[]): Zpk {
  const warped = wn.map((w) => 2 * 2 * Math.tan((Math.PI * w) / 2));
  let analog: Zpk;
  if (band === 'lowpass') analog = lp2lp(proto, warped[0]!);
  else if (band === 'highpass') analog = lp2hp(proto, warped[0]!);
  else {
    const bw = warped[1]! - warped[0]!;
    const wo = Math.sqrt(warped[0]! * warped[1]!);
    analog = lp2bp(proto, wo, bw);
  }
  return bilinear(analog);
}

/** Polynomial coefficients (highest power first) with the given roots, real part (numpy `poly`). */
function polyReal(roots: readonly Complex[]): Float64Array {
  let a: Complex[] = [cx(1, 0)];
  for (const r of roots) {
    const nr = cneg(r);
    const next: Complex[] = new Array<Complex>(a.length + 1);
    next[0] = a[0]!;
    for (let j = 1; j < a.length; j++) next[j] = cadd(a[j]!, cmul(a[j - 1]!, nr));
    next[a.length] = cmul(a[a.length - 1]!, nr);
    a = next;
  }
  return Float64Array.from(a, (c) => c.re);
}

/** Transfer function (b, a) of a zpk system (scipy `zpk2tf`). */
export function zpkToTf(f: Zpk): { b: Float64Array; a: Float64Array } {
  const b = polyReal(f.z);
  for (let i = 0; i < b.length; i++) b[i] = f.k * b[i]!;
  return { b, a: polyReal(f.p) };
}

const TOL = 100 * Number.EPSILON;

/** Stable sort of indices by a key list of comparators (like numpy lexsort, last key primary). */
function stableOrder(n: number, cmp: (i: number, j: number) => number): number[] {
  const idx = Array.from({ length: n }, (_, i) => i);
  return idx.sort((i, j) => cmp(i, j) || i - j);
}

/** scipy `_cplxreal`: complex pairs (one element, positive imaginary part) then sorted reals. */
function cplxReal(zIn: readonly Complex[]): Complex[] {
  if (zIn.length === 0) return [];
  const ord = stableOrder(zIn.length, (i, j) => zIn[i]!.re - zIn[j]!.re || Math.abs(zIn[i]!.im) - Math.abs(zIn[j]!.im));
  const z = ord.map((i) => zIn[i]!);
  const realMask = z.map((v) => Math.abs(v.im) <= TOL * cabs(v));
  const zr = z.filter((_, i) => realMask[i]).map((v) => cx(v.re, 0));
  const zc = z.filter((_, i) => !realMask[i]);
  if (zc.length === 0) return zr;
  const zp = zc.filter((v) => v.im > 0);
  const zn = zc.filter((v) => v.im < 0);
  if (zp.length !== zn.length) throw new Error('cplxReal: complex value without conjugate');
  // Runs of (approximately) equal real part: sort each by |imag|.
  const sortRuns = (arr: Complex[], ref: Complex[]): void => {
    let start = 0;
    while (start < arr.length) {
      let stop = start;
      while (stop + 1 < ref.length && ref[stop + 1]!.re - ref[stop]!.re <= TOL * cabs(ref[stop]!)) stop++;
      if (stop > start) {
        const chunk = arr.slice(start, stop + 1);
        const o = stableOrder(chunk.length, (i, j) => Math.abs(chunk[i]!.im) - Math.abs(chunk[j]!.im));
        for (let i = 0; i < o.length; i++) arr[start + i] = chunk[o[i]!]!;
      }
      start = stop + 1;
    }
  };
  const zpRef = zp.slice();
  sortRuns(zp, zpRef);
  sortRuns(zn, zpRef);
  const pairs = zp.map((v, i) => {
    const s = cadd(v, { re: zn[i]!.re, im: -zn[i]!.im });
    return cx(s.re * 0.5, s.im * 0.5);
  });
  return [...pairs, ...zr];
}

function argminBy(list: readonly Complex[], key: (c: Complex) => number): number {
  let best = 0;
  let bestV = Infinity;
  for (let i = 0; i < list.length; i++) {
    const v = key(list[i]!);
    if (v < bestV) {
      bestV = v;
      best = i;
    }
  }
  return best;
}

const worstKey = (p: Complex): number => Math.abs(1 - cabs(p));

function nearestIdx(from: readonly Complex[], to: Complex, which: 'real' | 'complex' | 'any'): number {
  const order = stableOrder(from.length, (i, j) => cabs(csub(from[i]!, to)) - cabs(csub(from[j]!, to)));
  if (which === 'any') return order[0]!;
  for (const i of order) if (isReal(from[i]!) === (which === 'real')) return i;
  throw new Error('nearestIdx: no candidate');
}

function singleSection(z: readonly Complex[], p: readonly Complex[], out: Float64Array, row: number): void {
  const b = polyReal(z);
  const a = polyReal(p);
  const o = row * 6;
  for (let i = 0; i < b.length; i++) out[o + 3 - b.length + i] = b[i]!;
  for (let i = 0; i < a.length; i++) out[o + 6 - a.length + i] = a[i]!;
}

/** Second-order sections (row-major n × 6) of a digital zpk system: scipy `zpk2sos`, pairing 'nearest'. */
export function zpkToSos(f: Zpk): { sos: Float64Array; nSections: number } {
  let z = f.z.slice();
  let p = f.p.slice();
  if (z.length === 0 && p.length === 0) return { sos: Float64Array.from([f.k, 0, 0, 1, 0, 0]), nSections: 1 };
  while (p.length < z.length) p.push(cx(0, 0));
  while (z.length < p.length) z.push(cx(0, 0));
  const nSections = (Math.max(p.length, z.length) + 1) >> 1;
  if (p.length % 2 === 1) {
    p.push(cx(0, 0));
    z.push(cx(0, 0));
  }
  z = cplxReal(z);
  p = cplxReal(p);
  const sos = new Float64Array(nSections * 6);
  const countReal = (l: readonly Complex[]): number => l.reduce((s, v) => s + (isReal(v) ? 1 : 0), 0);
  for (let si = nSections - 1; si >= 0; si--) {
    const p1Idx = argminBy(p, worstKey);
    const p1 = p[p1Idx]!;
    p.splice(p1Idx, 1);
    if (isReal(p1) && countReal(p) === 0) {
      const z1Idx = nearestIdx(z, p1, 'real');
      const z1 = z[z1Idx]!;
      z.splice(z1Idx, 1);
      singleSection([z1, cx(0, 0)], [p1, cx(0, 0)], sos, si);
    } else if (p.length + 1 === z.length && !isReal(p1) && countReal(p) === 1 && countReal(z) === 1) {
      const z1Idx = nearestIdx(z, p1, 'complex');
      const z1 = z[z1Idx]!;
      z.splice(z1Idx, 1);
      singleSection([z1, { re: z1.re, im: -z1.im }], [p1, { re: p1.re, im: -p1.im }], sos, si);
    } else {
      let p2: Complex;
      if (isReal(p1)) {
        const realIdx: number[] = [];
        p.forEach((v, i) => { if (isReal(v)) realIdx.push(i); });
        const j = realIdx[argminBy(realIdx.map((i) => p[i]!), worstKey)]!;
        p2 = p[j]!;
        p.splice(j, 1);
      } else {
        p2 = { re: p1.re, im: -p1.im };
      }
      if (z.length > 0) {
        const z1Idx = nearestIdx(z, p1, 'any');
        const z1 = z[z1Idx]!;
        z.splice(z1Idx, 1);
        if (!isReal(z1)) {
          singleSection([z1, { re: z1.re, im: -z1.im }], [p1, p2], sos, si);
        } else if (z.length > 0) {
          const z2Idx = nearestIdx(z, p1, 'real');
          const z2 = z[z2Idx]!;
          z.splice(z2Idx, 1);
          singleSection([z1, z2], [p1, p2], sos, si);
        } else {
          singleSection([z1], [p1, p2], sos, si);
        }
      } else {
        singleSection([], [p1, p2], sos, si);
      }
    }
  }
  for (let i = 0; i < 3; i++) sos[i] = sos[i]! * f.k;
  return { sos, nSections };
}

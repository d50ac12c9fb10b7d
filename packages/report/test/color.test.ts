import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { CLASS_STYLES, COLOR_MAPS, colorAt, CONDITION_COLORS, makeColorMap, PALETTE, parseHex, rgbToOklab } from '../src/index.js';

// Machado, Oliveira & Fernandes (2009), IEEE TVCG 15(6):1291–1298, simulation matrices for severity 1.0,
// applied to linear RGB. Values from memory (the paper's supplementary table), as reproduced widely.
const CVD: Record<string, number[][]> = {
  protanopia: [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]],
  deuteranopia: [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.01182, 0.04294, 0.968881]],
  tritanopia: [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602], [0.004733, 0.691367, 0.3039]],
  normal: [[1, 0, 0], [0, 1, 0], [0, 0, 1]],
};
const toLin = (c: number) => { const x = c / 255; return x <= 0.04045 ? x / 12.92 : ((x + 0.055) / 1.055) ** 2.4; };
const toSrgb = (x: number) => { const v = Math.min(1, Math.max(0, x)); return 255 * (v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055); };
function simulate(hex: string, m: number[][]): [number, number, number] {
  const lin = parseHex(hex).map(toLin);
  const out = m.map((row) => row[0]! * lin[0]! + row[1]! * lin[1]! + row[2]! * lin[2]!);
  return rgbToOklab(toSrgb(out[0]!), toSrgb(out[1]!), toSrgb(out[2]!));
}
const dist = (a: number[], b: number[]) => Math.hypot(a[0]! - b[0]!, a[1]! - b[1]!, a[2]! - b[2]!);

describe('rgbToOklab', () => {
  // Ottosson (2020) defines OKLab so that D65 white (sRGB #ffffff) is L = 1, a = b = 0.
  // sRGB red → (0.627955, 0.224863, 0.125846): from memory (CSS Color 4 conversion examples).
  it('rgbToOklab maps white to (1, 0, 0) and red to the published OKLab coordinates', () => {
    // The published matrices are given to 10 digits; 1e-4 covers their rounding.
    expectAllClose(rgbToOklab(255, 255, 255), [1, 0, 0], { atol: 1e-4, rtol: 0 });
    expectAllClose(rgbToOklab(255, 0, 0), [0.627955, 0.224863, 0.125846], { atol: 1e-4, rtol: 0 });
  });
});

describe('PALETTE', () => {
  it('PALETTE colours stay apart (OKLab distance ≥ 0.05) for normal vision and simulated protan, deutan and tritan vision', () => {
    const colors = Object.values(PALETTE);
    for (const [kind, m] of Object.entries(CVD)) {
      let min = Infinity;
      for (let i = 0; i < colors.length; i++) for (let j = i + 1; j < colors.length; j++) min = Math.min(min, dist(simulate(colors[i]!, m), simulate(colors[j]!, m)));
      // 0.05 is about 2.5× the OKLab just-noticeable difference (≈ 0.02), common practice for categorical palettes.
      expect(min, kind).toBeGreaterThanOrEqual(0.05);
    }
  });

  it('PALETTE colours have contrast against white (OKLab L ≤ 0.85) so thin lines stay visible', () => {
    for (const c of CONDITION_COLORS) expect(rgbToOklab(...parseHex(c))[0]).toBeLessThanOrEqual(0.85);
  });
});

describe('CLASS_STYLES', () => {
  it('CLASS_STYLES give every class its own colour AND its own marker shape', () => {
    const s = Object.values(CLASS_STYLES);
    expect(new Set(s.map((x) => x.color)).size).toBe(s.length);
    expect(new Set(s.map((x) => x.shape)).size).toBe(s.length);
  });
});

describe('COLOR_MAPS', () => {
  it('the diverging map is blue at −1, off-white at 0 and orange at +1, lightness rising to the centre then falling', () => {
    const m = COLOR_MAPS.diverging;
    expect(colorAt(m, 0)).toBe('#1d4f91');
    expect(colorAt(m, 1)).toBe('#a33c0a');
    const L = Array.from({ length: 255 }, (_, i) => rgbToOklab(m.lut[3 * i]!, m.lut[3 * i + 1]!, m.lut[3 * i + 2]!)[0]);
    // Strict monotonicity up to 1e-3 (8-bit quantisation of the table can flatten neighbouring steps).
    for (let i = 1; i <= 127; i++) expect(L[i]! - L[i - 1]!).toBeGreaterThan(-1e-3);
    for (let i = 128; i < 255; i++) expect(L[i]! - L[i - 1]!).toBeLessThan(1e-3);
    expect(L[0]!).toBeLessThan(0.5);
    expect(L[254]!).toBeLessThan(0.6);
  });

  it('the sequential map darkens monotonically from cream to navy', () => {
    const m = COLOR_MAPS.sequential;
    const L = Array.from({ length: 255 }, (_, i) => rgbToOklab(m.lut[3 * i]!, m.lut[3 * i + 1]!, m.lut[3 * i + 2]!)[0]);
    for (let i = 1; i < 255; i++) expect(L[i]! - L[i - 1]!).toBeLessThan(1e-3);
    expect(L[0]! - L[254]!).toBeGreaterThan(0.5);
  });

  it('makeColorMap rejects fewer than two anchors and malformed colours with TF_BAD_OPTION', () => {
    expect(() => makeColorMap('x', 'sequential', ['#000000'])).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => makeColorMap('x', 'sequential', ['#000000', 'red'])).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

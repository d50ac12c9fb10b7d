import { crc32 as zlibCrc32 } from 'node:zlib';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { crc32, encodePng, pngDataUrl } from '../src/index.js';
import { decodePng } from './support/png-decode.js';

describe('crc32', () => {
  // Check value of CRC-32/ISO-HDLC for "123456789" is 0xCBF43926 (Williams 1993, "A painless guide
  // to CRC error detection algorithms"; the CRC catalogue), and node:zlib's crc32 agrees.
  it('crc32("123456789") = 0xCBF43926 and matches node:zlib on random bytes', () => {
    expect(crc32(new TextEncoder().encode('123456789'))).toBe(0xcbf43926);
    fc.assert(fc.property(fc.uint8Array({ maxLength: 300 }), (b) => {
      expect(crc32(b)).toBe(zlibCrc32(b));
    }), { seed: 2, numRuns: 100 });
  });
});

describe('encodePng', () => {
  it('encodePng writes an indexed image that decodes (CRCs checked with node:zlib) to the palette colours', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 1, max: 30 }), fc.integer({ min: 0, max: 1e6 }), (w, h, seed) => {
      const pal = new Uint8Array(256 * 3).map((_, i) => (i * 37 + seed) & 255);
      const pixels = new Uint8Array(w * h).map((_, i) => (i * 13 + seed + (i % w) * (i % 7)) & 255);
      const d = decodePng(encodePng({ width: w, height: h, pixels, palette: pal }));
      expect([d.width, d.height, d.colorType]).toEqual([w, h, 3]);
      expect(d.chunks).toEqual(['IHDR', 'PLTE', 'IDAT', 'IEND']);
      for (let i = 0; i < w * h; i++) {
        const p = pixels[i]!;
        expect([d.rgba[4 * i], d.rgba[4 * i + 1], d.rgba[4 * i + 2], d.rgba[4 * i + 3]]).toEqual([pal[3 * p], pal[3 * p + 1], pal[3 * p + 2], 255]);
      }
    }), { seed: 9, numRuns: 40 });
  });

  it('encodePng writes an RGB image that decodes to the same bytes', () => {
    const w = 17, h = 9;
    const pixels = new Uint8Array(w * h * 3).map((_, i) => (i * i) & 255);
    const d = decodePng(encodePng({ width: w, height: h, pixels }));
    expect(d.colorType).toBe(2);
    for (let i = 0; i < w * h; i++) expect([d.rgba[4 * i], d.rgba[4 * i + 1], d.rgba[4 * i + 2]]).toEqual([pixels[3 * i], pixels[3 * i + 1], pixels[3 * i + 2]]);
  });

  it('encodePng packs 1-, 2- and 4-bit indexed images that decode to the same indices', () => {
    for (const depth of [1, 2, 4] as const) {
      const w = 13, h = 5;
      const pal = new Uint8Array(3 << depth).map((_, i) => (i * 53) & 255);
      const pixels = new Uint8Array(w * h).map((_, i) => (i * 7 + (i >> 3)) % (1 << depth));
      const d = decodePng(encodePng({ width: w, height: h, pixels, palette: pal, bitDepth: depth }));
      for (let i = 0; i < w * h; i++) expect(d.rgba[4 * i], `depth ${depth} pixel ${i}`).toBe(pal[3 * pixels[i]!]);
    }
    expect(() => encodePng({ width: 1, height: 1, pixels: Uint8Array.of(2), palette: new Uint8Array(6), bitDepth: 1 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });

  it('encodePng rejects pixel data of the wrong size with TF_SHAPE_MISMATCH', () => {
    expect(() => encodePng({ width: 3, height: 3, pixels: new Uint8Array(8), palette: new Uint8Array(3) })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => encodePng({ width: 0, height: 3, pixels: new Uint8Array(0) })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('pngDataUrl', () => {
  it('pngDataUrl base64-encodes the bytes behind a data:image/png prefix', () => {
    const png = encodePng({ width: 1, height: 1, pixels: Uint8Array.of(0), palette: Uint8Array.of(1, 2, 3) });
    const url = pngDataUrl(png);
    expect(url.startsWith('data:image/png;base64,')).toBe(true);
    expect(Buffer.from(url.slice(22), 'base64').equals(Buffer.from(png))).toBe(true);
  });
});

import { deflateSync } from 'node:zlib';
import { TuningforkError } from '@tuningfork/core';

/** An image to encode: palette-indexed (1 byte per pixel) or RGB (3 bytes per pixel), rows top to bottom. */
export interface PngImage {
  readonly width: number;
  readonly height: number;
  /** Pixel bytes, row-major: width × height (indexed) or width × height × 3 (RGB). */
  readonly pixels: Uint8Array;
  /** For indexed images: the palette as RGB triples (≤ 256 entries). Absent for RGB images. */
  readonly palette?: Uint8Array;
  /** Bits per pixel of an indexed image (1, 2, 4 or 8; indices must fit). Smaller depths pack pixels. @defaultValue 8 */
  readonly bitDepth?: 1 | 2 | 4 | 8;
}

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/** CRC-32 (ISO 3309 / ITU-T V.42, as PNG uses) of bytes. */
export function crc32(bytes: Uint8Array, start = 0, end = bytes.length): number {
  let c = 0xffffffff;
  for (let i = start; i < end; i++) c = CRC_TABLE[(c ^ bytes[i]!) & 255]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, data.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(data, 8);
  dv.setUint32(8 + data.length, crc32(out, 4, 8 + data.length));
  return out;
}

/**
 * Encode a palette-indexed (1, 2, 4 or 8 bits per pixel) or 8-bit RGB image as PNG bytes (no
 * dependencies beyond node:zlib).
 *
 * Each scanline uses the filter (None, Sub or Up) with the smallest sum of absolute filtered bytes,
 * the usual heuristic; the data stream is zlib-deflated at level 6. Chunks: IHDR, PLTE (indexed),
 * IDAT, IEND.
 *
 * @param image - Width and height (integers ≥ 1), pixel bytes and, for indexed images, the palette.
 * @returns PNG file bytes.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH when pixel or palette lengths disagree with the size;
 *   TF_BAD_OPTION for a non-integer size or a palette over 256 entries.
 *
 * References
 * - W3C (2003). Portable Network Graphics (PNG) Specification (Second Edition). ISO/IEC 15948:2003.
 * - Deutsch, P. & Gailly, J.-L. (1996). ZLIB Compressed Data Format Specification 3.3. RFC 1950. doi:10.17487/RFC1950
 */
export function encodePng(image: PngImage): Uint8Array {
  const { width, height, pixels, palette } = image;
  const depth = palette ? image.bitDepth ?? 8 : 8;
  if (![1, 2, 4, 8].includes(depth)) {
    throw new TuningforkError('TF_BAD_OPTION', `encodePng: bitDepth must be 1, 2, 4 or 8, got ${depth}.`, { bitDepth: depth });
  }
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1 || width > 1 << 24 || height > 1 << 24) {
    throw new TuningforkError('TF_BAD_OPTION', `encodePng: width and height must be integers in [1, 2^24], got ${width} × ${height}.`, { width, height });
  }
  const bpp = palette ? 1 : 3;
  if (pixels.length !== width * height * bpp) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `encodePng: pixels has ${pixels.length} bytes, expected ${width} × ${height} × ${bpp} = ${width * height * bpp}.`, { width, height, bytes: pixels.length });
  }
  if (palette && (palette.length % 3 !== 0 || palette.length === 0 || palette.length > 768)) {
    throw new TuningforkError('TF_SHAPE_MISMATCH', `encodePng: palette must hold 1–256 RGB triples, got ${palette.length} bytes.`, { bytes: palette.length });
  }
  const ihdr = new Uint8Array(13);
  const dv = new DataView(ihdr.buffer);
  dv.setUint32(0, width);
  dv.setUint32(4, height);
  ihdr[8] = depth; // bit depth
  ihdr[9] = palette ? 3 : 2; // colour type: indexed or truecolour
  ihdr[10] = 0; // deflate
  ihdr[11] = 0; // adaptive filtering
  ihdr[12] = 0; // no interlace

  // Scanline bytes (pixels packed most significant bits first when depth < 8).
  let lines: Uint8Array = pixels;
  let stride = width * bpp;
  if (depth < 8) {
    stride = Math.ceil((width * depth) / 8);
    lines = new Uint8Array(stride * height);
    const perByte = 8 / depth;
    const maxIdx = (1 << depth) - 1;
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const v = pixels[y * width + x]!;
        if (v > maxIdx) throw new TuningforkError('TF_BAD_OPTION', `encodePng: pixel (${x}, ${y}) = ${v} does not fit in ${depth} bits.`, { x, y, value: v });
        const shift = 8 - depth * ((x % perByte) + 1);
        lines[y * stride + Math.floor(x / perByte)]! |= v << shift;
      }
    }
  }
  const raw = new Uint8Array(height * (stride + 1));
  const cand = new Uint8Array(stride * 3);
  for (let y = 0; y < height; y++) {
    const row = lines.subarray(y * stride, (y + 1) * stride);
    const prev = y > 0 ? lines.subarray((y - 1) * stride, y * stride) : null;
    let sNone = 0, sSub = 0, sUp = 0;
    for (let i = 0; i < stride; i++) {
      const x = row[i]!;
      const a = i >= bpp ? row[i - bpp]! : 0;
      const b = prev ? prev[i]! : 0;
      const f0 = x;
      const f1 = (x - a) & 255;
      const f2 = (x - b) & 255;
      cand[i] = f0;
      cand[stride + i] = f1;
      cand[2 * stride + i] = f2;
      sNone += f0 < 128 ? f0 : 256 - f0;
      sSub += f1 < 128 ? f1 : 256 - f1;
      sUp += f2 < 128 ? f2 : 256 - f2;
    }
    let f = 0;
    let best = sNone;
    if (sSub < best) { f = 1; best = sSub; }
    if (sUp < best) { f = 2; best = sUp; }
    const o = y * (stride + 1);
    raw[o] = f;
    raw.set(cand.subarray(f * stride, (f + 1) * stride), o + 1);
  }
  const idat = deflateSync(raw, { level: 6 });
  const parts = [
    Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a),
    chunk('IHDR', ihdr),
    ...(palette ? [chunk('PLTE', palette)] : []),
    chunk('IDAT', new Uint8Array(idat.buffer, idat.byteOffset, idat.byteLength)),
    chunk('IEND', new Uint8Array(0)),
  ];
  let n = 0;
  for (const p of parts) n += p.length;
  const out = new Uint8Array(n);
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/** A PNG as a data: URL (base64), for `<image href>` in SVG or `<img src>` in HTML. */
export function pngDataUrl(png: Uint8Array): string {
  return `data:image/png;base64,${Buffer.from(png.buffer, png.byteOffset, png.byteLength).toString('base64')}`;
}

import { crc32 as zlibCrc32, inflateSync } from 'node:zlib';

/** A decoded 8-bit PNG as RGBA bytes. */
export interface DecodedPng {
  width: number;
  height: number;
  rgba: Uint8Array;
  colorType: number;
  /** Chunk types in file order. */
  chunks: string[];
}

/**
 * Decode a non-interlaced PNG (8-bit colour types 0, 2, 3, 4, 6, and 1/2/4-bit indexed; filters 0–4) to RGBA, checking the
 * signature and every chunk's CRC against node:zlib's crc32 (an implementation outside this
 * project). Test helper; throws on anything it does not support.
 *
 * Reference: W3C PNG Specification (Second Edition), ISO/IEC 15948:2003, sections 5, 9 and 11.
 */
export function decodePng(bytes: Uint8Array): DecodedPng {
  const sig = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
  sig.forEach((b, k) => { if (bytes[k] !== b) throw new Error('bad PNG signature'); });
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let o = 8;
  let width = 0, height = 0, depth = 0, colorType = -1, interlace = 0;
  let palette: Uint8Array | null = null;
  let trns: Uint8Array | null = null;
  const idat: Uint8Array[] = [];
  const chunks: string[] = [];
  while (o < bytes.length) {
    const len = dv.getUint32(o);
    const type = String.fromCharCode(...bytes.subarray(o + 4, o + 8));
    const data = bytes.subarray(o + 8, o + 8 + len);
    const crc = dv.getUint32(o + 8 + len);
    if (zlibCrc32(bytes.subarray(o + 4, o + 8 + len)) !== crc) throw new Error(`CRC mismatch in chunk ${type}`);
    chunks.push(type);
    if (type === 'IHDR') {
      const h = new DataView(data.buffer, data.byteOffset, data.byteLength);
      width = h.getUint32(0);
      height = h.getUint32(4);
      depth = data[8]!;
      colorType = data[9]!;
      interlace = data[12]!;
    } else if (type === 'PLTE') palette = data.slice();
    else if (type === 'tRNS') trns = data.slice();
    else if (type === 'IDAT') idat.push(data);
    else if (type === 'IEND') break;
    o += 12 + len;
  }
  if (interlace !== 0 || !(depth === 8 || (colorType === 3 && [1, 2, 4].includes(depth)))) throw new Error(`unsupported PNG: depth ${depth}, colour type ${colorType}, interlace ${interlace}`);
  const channels = ({ 0: 1, 2: 3, 3: 1, 4: 2, 6: 4 } as Record<number, number>)[colorType];
  if (!channels) throw new Error(`unsupported colour type ${colorType}`);
  let total = 0;
  for (const d of idat) total += d.length;
  const z = new Uint8Array(total);
  let p = 0;
  for (const d of idat) { z.set(d, p); p += d.length; }
  const raw = inflateSync(z);
  const stride = depth === 8 ? width * channels : Math.ceil((width * depth) / 8);
  const fbpp = depth === 8 ? channels : 1; // filter byte distance (PNG spec §9.2)
  if (raw.length !== height * (stride + 1)) throw new Error(`IDAT has ${raw.length} bytes, expected ${height * (stride + 1)}`);
  const px = new Uint8Array(height * stride);
  for (let y = 0; y < height; y++) {
    const f = raw[y * (stride + 1)]!;
    const src = raw.subarray(y * (stride + 1) + 1, (y + 1) * (stride + 1));
    const row = px.subarray(y * stride, (y + 1) * stride);
    const prev = y > 0 ? px.subarray((y - 1) * stride, y * stride) : null;
    for (let i = 0; i < stride; i++) {
      const a = i >= fbpp ? row[i - fbpp]! : 0;
      const b = prev ? prev[i]! : 0;
      const c = prev && i >= fbpp ? prev[i - fbpp]! : 0;
      let v = src[i]!;
      if (f === 1) v += a;
      else if (f === 2) v += b;
      else if (f === 3) v += (a + b) >> 1;
      else if (f === 4) {
        const pp = a + b - c;
        const pa = Math.abs(pp - a), pb = Math.abs(pp - b), pc = Math.abs(pp - c);
        v += pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
      } else if (f !== 0) throw new Error(`bad filter ${f} on row ${y}`);
      row[i] = v & 255;
    }
  }
  // Unpack sub-byte indexed pixels (most significant bits first, PNG spec §7.2).
  let idx: Uint8Array = px;
  if (depth < 8) {
    idx = new Uint8Array(width * height);
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const bit = x * depth;
        const byte = px[y * stride + (bit >> 3)]!;
        idx[y * width + x] = (byte >> (8 - depth - (bit & 7))) & ((1 << depth) - 1);
      }
    }
  }
  const rgba = new Uint8Array(width * height * 4);
  for (let k = 0; k < width * height; k++) {
    let r: number, g: number, b: number, al = 255;
    if (colorType === 0) { r = g = b = px[k]!; }
    else if (colorType === 2) { r = px[3 * k]!; g = px[3 * k + 1]!; b = px[3 * k + 2]!; }
    else if (colorType === 3) {
      const p = idx[k]!;
      if (!palette || 3 * p + 2 >= palette.length) throw new Error(`palette index ${p} out of range`);
      r = palette[3 * p]!; g = palette[3 * p + 1]!; b = palette[3 * p + 2]!;
      if (trns && p < trns.length) al = trns[p]!;
    } else if (colorType === 4) { r = g = b = px[2 * k]!; al = px[2 * k + 1]!; }
    else { r = px[4 * k]!; g = px[4 * k + 1]!; b = px[4 * k + 2]!; al = px[4 * k + 3]!; }
    rgba[4 * k] = r; rgba[4 * k + 1] = g; rgba[4 * k + 2] = b; rgba[4 * k + 3] = al;
  }
  return { width, height, rgba, colorType, chunks };
}

import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Float64, Int64, Table, Uint64, Utf8, tableToIPC, vectorFromArray } from 'apache-arrow';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeArrow, encodeArrow, readArrow, writeArrow } from '../src/index.js';

const tmp = mkdtempSync(join(tmpdir(), 'tf-io-arrow-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const code = (c: string, details: Record<string, unknown> = {}) =>
  expect.objectContaining({ code: c, details: expect.objectContaining(details) });
const bitsOf = (a: Float64Array): string => Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('hex');

describe('encodeArrow', () => {
  // Reference: Apache Arrow Columnar Format spec, "IPC File Format": the file starts with the
  // magic "ARROW1" plus padding to 8 bytes and ends with <footer size: int32> "ARROW1".
  it('encodeArrow writes the IPC file format by default: ARROW1 magic, padding, footer size, trailing magic', () => {
    const bytes = encodeArrow({ time: new Float64Array([0, 0.001, 0.002]), name: ['a', 'b', 'c'] });
    const b = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    expect(b.subarray(0, 8).toString('latin1')).toBe('ARROW1\0\0');
    expect(b.subarray(b.length - 6).toString('latin1')).toBe('ARROW1');
    const footer = b.readInt32LE(b.length - 10);
    expect(footer).toBeGreaterThan(0);
    expect(footer).toBeLessThan(b.length - 18);
  });

  // Reference: Arrow spec, "Encapsulated message format": a stream ends with the end-of-stream
  // marker 0xFFFFFFFF followed by a 0 length.
  it('encodeArrow writes the IPC stream format on request, ending with the end-of-stream marker', () => {
    const bytes = encodeArrow({ x: new Float64Array([1, 2]) }, { format: 'stream' });
    const b = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    expect(b.readUInt32LE(b.length - 8)).toBe(0xffffffff);
    expect(b.readUInt32LE(b.length - 4)).toBe(0);
    expect(b.readUInt32LE(0)).toBe(0xffffffff); // every message starts with the continuation marker
  });

  it('encodeArrow rejects columns of unequal length (TF_SHAPE_MISMATCH) and non-column values (TF_BAD_OPTION)', () => {
    expect(() => encodeArrow({ a: new Float64Array(3), b: new Float64Array(2) })).toThrow(code('TF_SHAPE_MISMATCH', { column: 'b' }));
    expect(() => encodeArrow({ a: [1, 2] as never })).toThrow(code('TF_BAD_OPTION', { column: 'a' }));
    expect(() => encodeArrow({})).toThrow(code('TF_BAD_OPTION'));
    expect(() => encodeArrow({ a: new Float64Array(1) }, { format: 'files' as never })).toThrow(code('TF_BAD_OPTION'));
  });
});

describe('decodeArrow', () => {
  // Reference: Arrow spec, "Buffer alignment and padding": body buffers are 8-byte aligned, so a
  // Float64 column can be viewed in place.
  it('decodeArrow returns a Float64 column zero-copy as an aligned view into the IPC bytes', () => {
    const bytes = encodeArrow({ time: Float64Array.from({ length: 1000 }, (_, i) => i / 1000), ch: new Float64Array(1000).fill(2) });
    const t = decodeArrow(bytes);
    expect(t.columns.time!.buffer).toBe(bytes.buffer);
    expect(t.columns.time!.byteOffset % 8).toBe(0);
    expect(t.columns.time![999]).toBe(0.999);
    expect(t.types).toEqual({ time: 'Float64', ch: 'Float64' });
  });

  it('decodeArrow round-trips Float64 columns bit for bit (NaN, -0, subnormals, infinities) and Utf8 strings', () => {
    fc.assert(fc.property(
      fc.float64Array({ minLength: 0, maxLength: 32 }),
      fc.array(fc.string({ unit: 'grapheme', maxLength: 8 }), { minLength: 0, maxLength: 32 }),
      (x, s) => {
        const n = Math.min(x.length, s.length);
        const xs = x.slice(0, n);
        const ss = s.slice(0, n);
        const t = decodeArrow(encodeArrow({ x: xs, s: ss, i: Int32Array.from(ss, (v) => v.length) }));
        expect(bitsOf(t.columns.x!)).toBe(bitsOf(xs));
        expect(t.strings.s).toEqual(ss);
        expect(Array.from(t.columns.i!)).toEqual(ss.map((v) => v.length));
        expect(t.rows).toBe(n);
      },
    ), { seed: 2121, numRuns: 40 });
  });

  // Reference: apache-arrow 21.2.0's own builders (vectorFromArray, concat), which write validity
  // bitmaps and several record batches.
  it('decodeArrow reads several record batches and nulls (NaN for numbers, "" for text), counting them', () => {
    const part = (x: (number | null)[], s: (string | null)[]) => new Table({ x: vectorFromArray(x, new Float64()), s: vectorFromArray(s, new Utf8()) });
    const a = part([1.5, null], ['cue', null]);
    const b = part([-2], ['reward']);
    const t = decodeArrow(tableToIPC(a.concat(b), 'file'));
    expect(t.batches).toBe(2);
    expect(Array.from(t.columns.x!)).toEqual([1.5, NaN, -2]);
    expect(t.strings.s).toEqual(['cue', '', 'reward']);
    expect(t.nulls).toEqual({ x: 1, s: 1 }); // Arrow nulls (validity bitmap)
    const big = new Table({ n: vectorFromArray([1n, -(2n ** 40n)], new Int64()) });
    expect(Array.from(decodeArrow(tableToIPC(big)).columns.n!)).toEqual([1, -(2 ** 40)]);
  });

  // Reference: IEEE 754 binary64 has a 53-bit significand, so every integer of magnitude
  // ≤ 2^53 and the power 2^60 are exact doubles, while 2^53 + 1 and 2^60 + 1 are not (they
  // would be read as 2^53 and 2^60).
  it('decodeArrow reads 64-bit integers that are exact doubles and throws TF_BAD_CELL for one a double would round', () => {
    const exact = new Table({ n: vectorFromArray([2n ** 53n, -(2n ** 53n), 2n ** 60n, null], new Int64()) });
    expect(Array.from(decodeArrow(tableToIPC(exact)).columns.n!)).toEqual([2 ** 53, -(2 ** 53), 2 ** 60, NaN]);
    for (const v of [2n ** 53n + 1n, -(2n ** 60n) - 1n]) {
      const t = new Table({ ok: vectorFromArray([1n, 2n], new Int64()), n: vectorFromArray([0n, v], new Int64()) });
      expect(() => decodeArrow(tableToIPC(t), { label: 'ticks.arrow' })).toThrow(code('TF_BAD_CELL', { file: 'ticks.arrow', column: 'n', row: 1 }));
    }
    const u = new Table({ n: vectorFromArray([2n ** 64n - 1n], new Uint64()) });
    expect(() => decodeArrow(tableToIPC(u))).toThrow(code('TF_BAD_CELL', { column: 'n', row: 0 }));
    // Read as text, the exact integer is kept.
    const asText = new Table({ id: vectorFromArray([2n ** 53n + 1n], new Int64()) });
    expect(decodeArrow(tableToIPC(asText), { columns: [{ name: 'id', type: 'string' }] }).strings.id).toEqual(['9007199254740993']);
  });

  it('decodeArrow selects, renames and requires columns as readCsv does', () => {
    const bytes = encodeArrow({ time: new Float64Array([0, 1]), sig: new Float64Array([NaN, 2]) }, { metadata: { provenance: '{"tool":"tuningfork"}' } });
    const t = decodeArrow(bytes, { columns: [{ name: 'sig', as: 'signal' }] });
    expect(Object.keys(t.columns)).toEqual(['signal']);
    expect(t.metadata).toEqual({ provenance: '{"tool":"tuningfork"}' });
    expect(() => decodeArrow(bytes, { columns: ['tmie'], label: 'x.arrow' })).toThrow(code('TF_MISSING_COLUMN', { file: 'x.arrow', suggestion: 'time' }));
    expect(() => decodeArrow(bytes, { columns: [{ name: 'sig', finite: true }] })).toThrow(code('TF_NON_FINITE', { column: 'sig', row: 0 }));
    expect(() => decodeArrow(encodeArrow({ s: ['a'] }), { columns: ['s'] })).toThrow(code('TF_BAD_CELL', { column: 's' }));
    expect(() => decodeArrow(new Uint8Array([1, 2, 3, 4, 5, 6, 7, 8]))).toThrow(code('TF_BAD_FILE'));
  });
});

describe('readArrow', () => {
  it('readArrow reads a file written by writeArrow, and names the file when it is missing or not Arrow', async () => {
    const p = join(tmp, 'session.arrow');
    const time = Float64Array.from({ length: 100 }, (_, i) => i / 100);
    const r = await writeArrow(p, { time, name: Array.from({ length: 100 }, (_, i) => `e${i % 3}`) });
    expect(r.bytes).toBeGreaterThan(800);
    const t = await readArrow(p);
    expect(bitsOf(t.columns.time!)).toBe(bitsOf(time));
    expect(t.strings.name![4]).toBe('e1');
    await expect(readArrow(join(tmp, 'absent.arrow'))).rejects.toThrow(code('TF_BAD_FILE', { file: join(tmp, 'absent.arrow') }));
    writeFileSync(join(tmp, 'text.arrow'), 'time,x\n0,1\n');
    await expect(readArrow(join(tmp, 'text.arrow'))).rejects.toThrow(code('TF_BAD_FILE', { file: join(tmp, 'text.arrow') }));
  });
});

describe('writeArrow', () => {
  it('writeArrow leaves no file and no temporary file when the table is invalid', async () => {
    const before = readdirSync(tmp).length;
    await expect(writeArrow(join(tmp, 'bad.arrow'), { a: new Float64Array(2), b: new Float64Array(3) })).rejects.toThrow(code('TF_SHAPE_MISMATCH'));
    expect(readdirSync(tmp).length).toBe(before);
  });
});

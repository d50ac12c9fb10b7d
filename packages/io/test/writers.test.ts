import { mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { here, loadFixture } from '@tuningfork/test-utils';
import { formatCsv, formatCsvChunks, formatNumber, parseCsv, readCsv, writeCsv, writeFileAtomic, writeJson } from '../src/index.js';

const fixtures = join(here(import.meta.url), 'fixtures');
const tmp = mkdtempSync(join(tmpdir(), 'tf-io-write-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const code = (c: string, details: Record<string, unknown> = {}) =>
  expect.objectContaining({ code: c, details: expect.objectContaining(details) });
const bits = (x: number): string => {
  const b = Buffer.alloc(8);
  b.writeDoubleBE(x);
  return b.toString('hex');
};

function folder(name: string): string {
  const d = join(tmp, name);
  mkdirSync(d);
  return d;
}

/** Chunks, then a failure: a data source that dies mid-write. */
async function* failing(chunks: number): AsyncGenerator<string> {
  for (let i = 0; i < chunks; i++) yield `chunk ${i}\n`.repeat(1000);
  throw new Error('source failed mid-write');
}

describe('writeFileAtomic', () => {
  it('writeFileAtomic writes text, bytes and chunk sequences, leaving only the target', async () => {
    const d = folder('ok');
    expect(await writeFileAtomic(join(d, 'a.txt'), 'héllo\n')).toEqual({ path: join(d, 'a.txt'), bytes: 7 });
    await writeFileAtomic(join(d, 'b.bin'), new Uint8Array([0, 255]));
    await writeFileAtomic(join(d, 'c.txt'), ['x', new Uint8Array([121]), 'z']);
    expect(readFileSync(join(d, 'a.txt'), 'utf8')).toBe('héllo\n');
    expect([...readFileSync(join(d, 'b.bin'))]).toEqual([0, 255]);
    expect(readFileSync(join(d, 'c.txt'), 'utf8')).toBe('xyz');
    expect(readdirSync(d).sort()).toEqual(['a.txt', 'b.bin', 'c.txt']);
  });

  it('writeFileAtomic leaves neither target nor temporary file when the data source throws mid-write', async () => {
    const d = folder('fail');
    await expect(writeFileAtomic(join(d, 'out.csv'), failing(3))).rejects.toThrow('source failed mid-write');
    expect(readdirSync(d)).toEqual([]);
  });

  it('writeFileAtomic keeps the old content of an existing target when a rewrite fails', async () => {
    const d = folder('keep');
    const p = join(d, 'results.csv');
    writeFileSync(p, 'old complete content\n');
    await expect(writeFileAtomic(p, failing(2))).rejects.toThrow('source failed mid-write');
    await expect(writeFileAtomic(p, ['ok', 42 as never])).rejects.toThrow(code('TF_BAD_OPTION'));
    expect(readFileSync(p, 'utf8')).toBe('old complete content\n');
    expect(readdirSync(d)).toEqual(['results.csv']);
    await writeFileAtomic(p, 'new\n');
    expect(readFileSync(p, 'utf8')).toBe('new\n');
  });

  it('writeFileAtomic throws TF_BAD_OUTPUT_PATH for a missing folder or a target that is a folder', async () => {
    await expect(writeFileAtomic(join(tmp, 'no-such-dir', 'x.txt'), 'x')).rejects.toThrow(code('TF_BAD_OUTPUT_PATH'));
    const d = folder('isdir');
    mkdirSync(join(d, 'sub'));
    await expect(writeFileAtomic(join(d, 'sub'), 'x')).rejects.toThrow(code('TF_BAD_OUTPUT_PATH'));
    await expect(writeFileAtomic(join(d, 'y'), 'x', { fsnyc: false } as never)).rejects.toThrow(code('TF_UNKNOWN_OPTION', { suggestion: 'fsync' }));
  });
});

describe('formatNumber', () => {
  // Reference: Python 3.11 repr(float) (shortest round-trip digits, David Gay's algorithm), as
  // recorded by fixtures/numpy/gen_numbers.py; the digit strings must agree, the notation may differ.
  it('formatNumber gives the same shortest digits as Python repr for the fixture values', () => {
    const fx = loadFixture('numpy/numbers.json', fixtures);
    const digits = (s: string): [string, number] => {
      const m = /^-?(\d*)\.?(\d*)(?:e([+-]?\d+))?$/.exec(s)!;
      const all = (m[1]! + m[2]!).replace(/^0+/, '');
      const lead = (m[1]! + m[2]!).length - all.length;
      const trimmed = all.replace(/0+$/, '');
      return [trimmed, Number(m[3] ?? 0) + m[1]!.length - lead];
    };
    for (const c of fx.cases as { bits: string; repr: string }[]) {
      const x = Buffer.from(c.bits, 'hex').readDoubleBE(0);
      if (!Number.isFinite(x) || x === 0) continue;
      expect(digits(formatNumber(x))).toEqual(digits(c.repr));
    }
  });

  it('formatNumber writes -0 with its sign, NaN as an empty cell and infinities by name', () => {
    expect([formatNumber(-0), formatNumber(0), formatNumber(NaN), formatNumber(-Infinity), formatNumber(1e-7)]).toEqual(['-0', '0', '', '-Infinity', '1e-7']);
  });
});

describe('formatCsv', () => {
  // Reference: Python 3.11 csv module (QUOTE_MINIMAL, CRLF); fixtures/python-csv/gen_quoting.py.
  it('formatCsv quotes text exactly as Python\'s csv module does (RFC 4180)', () => {
    const fx = loadFixture('python-csv/quoting.json', fixtures);
    const header = fx.header as string[];
    const data = Object.fromEntries(header.map((h, j) => [h, (fx.columns as string[][])[j]!]));
    expect(formatCsv(data, { lineEnding: '\r\n' })).toBe(readFileSync(join(fixtures, 'python-csv/quoting.csv'), 'utf8'));
    expect(formatCsv({ only: (fx.oneColumn as { cells: string[] }).cells }, { lineEnding: '\r\n' })).toBe(readFileSync(join(fixtures, 'python-csv/one_column.csv'), 'utf8'));
  });

  // Reference: ECMAScript Number::toString round-trips through Number() (spec guarantee).
  it('formatCsv output reads back to the same doubles and strings', () => {
    fc.assert(fc.property(fc.float64Array({ minLength: 1, maxLength: 50 }), fc.string(), (x, s) => {
      const text = formatCsv({ x, s: Array.from(x, () => s) }, { delimiter: ';' });
      const t = parseCsv(text, { columns: ['x', { name: 's', type: 'string' }], nullTokens: [] });
      expect(Array.from(t.columns.x!, bits)).toEqual(Array.from(x, (v) => bits(v !== v ? NaN : v)));
      expect(t.strings.s).toEqual(Array.from(x, () => s));
    }), { seed: 99, numRuns: 100 });
  });

  it('formatCsv writes NaN as an empty cell, quotes a first-column text starting with #, and can omit the header', () => {
    expect(formatCsv({ t: new Float64Array([0, 0.1]), x: new Float64Array([NaN, -0]) })).toBe('t,x\n0,\n0.1,-0\n');
    expect(formatCsv({ id: ['#1', 'a'], n: new Int32Array([1, 2]) }, { header: false, delimiter: '\t' })).toBe('"#1"\t1\na\t2\n');
    expect(() => formatCsv({ a: new Float64Array(2), b: ['x'] })).toThrow(code('TF_SHAPE_MISMATCH'));
  });
});

describe('formatCsvChunks', () => {
  it('formatCsvChunks yields chunks of about 1 MiB that concatenate to formatCsv, and checks options at once', () => {
    const n = 120_000;
    const data = { t: Float64Array.from({ length: n }, (_, i) => i / 1000), x: Float64Array.from({ length: n }, (_, i) => Math.sin(i) * 1e-3), tag: Array.from({ length: n }, (_, i) => (i % 7 === 0 ? 'a,"b"' : 'c')) };
    const chunks = [...formatCsvChunks(data, { lineEnding: '\r\n' })];
    expect(chunks.length).toBeGreaterThan(2);
    for (const c of chunks.slice(0, -1)) {
      expect(c.length).toBeGreaterThanOrEqual(1 << 20);
      expect(c.endsWith('\r\n')).toBe(true); // chunks end on a line break
    }
    expect(chunks.join('')).toBe(formatCsv(data, { lineEnding: '\r\n' }));
    expect(() => formatCsvChunks(data, { delimiter: '|' as ',' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('writeCsv', () => {
  it('writeCsv streams a table to a file that readCsv reads back exactly', async () => {
    const d = folder('csv');
    const n = 12000;
    const time = Float64Array.from({ length: n }, (_, i) => i / 1000);
    const x = Float64Array.from({ length: n }, (_, i) => Math.sin(i) / 3);
    x[5] = NaN;
    const r = await writeCsv(join(d, 'trace.csv'), { time, x });
    expect(r.bytes).toBe(readFileSync(join(d, 'trace.csv')).length);
    const back = await readCsv(join(d, 'trace.csv'));
    expect(Array.from(back.columns.x!, bits)).toEqual(Array.from(x, bits));
    expect(back.nulls.x).toBe(1);
    await expect(writeCsv(join(d, 'bad.csv'), { a: new Float64Array(1), b: new Float64Array(2) })).rejects.toThrow(code('TF_SHAPE_MISMATCH'));
    expect(readdirSync(d)).toEqual(['trace.csv']);
  });
});

describe('writeJson', () => {
  it('writeJson writes typed arrays as arrays and non-finite numbers as null, with a final newline', async () => {
    const d = folder('json');
    await writeJson(join(d, 'p.json'), { seed: 3, x: new Float64Array([1.5, NaN]), i: new Int32Array([2]) }, { indent: 0 });
    expect(readFileSync(join(d, 'p.json'), 'utf8')).toBe('{"seed":3,"x":[1.5,null],"i":[2]}\n');
    const cyclic: Record<string, unknown> = {};
    cyclic.self = cyclic;
    await expect(writeJson(join(d, 'c.json'), cyclic)).rejects.toThrow(code('TF_BAD_OPTION'));
    expect(readdirSync(d)).toEqual(['p.json']);
  });
});

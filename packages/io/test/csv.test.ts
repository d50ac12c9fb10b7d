import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { lineOfRow, parseCsv, readCsv } from '../src/index.js';

const fixtures = join(here(import.meta.url), 'fixtures');
const tmp = mkdtempSync(join(tmpdir(), 'tf-io-csv-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** Big-endian hex of a double's IEEE-754 bits (the fixtures' encoding). */
function bits(x: number): string {
  const b = Buffer.alloc(8);
  b.writeDoubleBE(x);
  return b.toString('hex');
}
function fromBits(hex: string): number {
  return Buffer.from(hex, 'hex').readDoubleBE(0);
}

const code = (c: string, details: Record<string, unknown> = {}) =>
  expect.objectContaining({ code: c, details: expect.objectContaining(details) });

describe('parseCsv', () => {
  // Reference: RFC 4180 §2 (Shafranovich 2005), rules 1–7 and their examples.
  it('parseCsv reads the RFC 4180 §2 examples: CRLF records, an unterminated last record, quoted CRLF, commas and doubled quotes', () => {
    const text = 'field_name,field_name2,field_name3\r\n"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx\r\n"aaa","b""bb","ccc"\r\naaa,"b,b",ccc';
    for (const chunkBytes of [1, 2, 3, 5, 1 << 20]) {
      const t = parseCsv(text, { columns: ['field_name', 'field_name2', 'field_name3'].map((name) => ({ name, type: 'string' as const })), chunkBytes });
      expect(t.rows).toBe(4);
      expect(t.strings.field_name).toEqual(['aaa', 'zzz', 'aaa', 'aaa']);
      expect(t.strings.field_name2).toEqual(['b\r\nbb', 'yyy', 'b"bb', 'b,b']);
      expect(t.strings.field_name3).toEqual(['ccc', 'xxx', 'ccc', 'ccc']);
      expect(t.warnings).toEqual([]);
    }
  });

  // Reference: Python 3.11 csv module output (QUOTE_MINIMAL, CRLF); fixtures/python-csv/gen_quoting.py.
  it('parseCsv recovers the cells Python\'s csv module wrote, at every chunk boundary', () => {
    const fx = loadFixture('python-csv/quoting.json', fixtures);
    const bytes = new Uint8Array(readFileSync(join(fixtures, 'python-csv/quoting.csv')));
    const header = fx.header as string[];
    for (let chunkBytes = 1; chunkBytes <= 7; chunkBytes++) {
      const t = parseCsv(bytes, { columns: header.map((name) => ({ name, type: 'string' as const })), chunkBytes });
      expect(t.fields).toEqual(header);
      header.forEach((h, j) => expect(t.strings[h]).toEqual((fx.columns as string[][])[j]));
    }
    const one = parseCsv(new Uint8Array(readFileSync(join(fixtures, 'python-csv/one_column.csv'))), { columns: [{ name: 'only', type: 'string' }] });
    expect(one.strings.only).toEqual((fx.oneColumn as { cells: string[] }).cells);
  });

  it('parseCsv skips a UTF-8 byte-order mark, comment lines and blank lines, and accepts CRLF, CR and LF endings', () => {
    const text = '\ufeff# written by rig 3\r\n\r\ntime,x\r\n0,1\r\n# pause\r\n1,2\r3,4\n\n5,6';
    for (const chunkBytes of [1, 2, 4, 64]) {
      const t = parseCsv(text, { chunkBytes });
      expect(t.fields).toEqual(['time', 'x']); // BOM not part of the first name
      expectAllClose(t.columns.time!, [0, 1, 3, 5], { rtol: 0 }); // exact: integers
      expectAllClose(t.columns.x!, [1, 2, 4, 6], { rtol: 0 });
    }
    for (const chunkBytes of [1, 2, 3, 4, 5, 64]) {
      // A quoted header name holding a line break, after a BOM and a comment.
      const q = parseCsv('\ufeff# c\n"a\nb",x\n1,2\n', { chunkBytes });
      expect(q.fields).toEqual(['a\nb', 'x']);
      expect([q.headerLine, lineOfRow(q, 0)]).toEqual([2, 4]);
    }
    expect(parseCsv('// note\nt\n1\n', { commentPrefix: '//' }).columns.t).toEqual(new Float64Array([1]));
    expect(() => parseCsv('t\n#1\n', { commentPrefix: '' })).toThrow(code('TF_BAD_CELL', { line: 2, text: '#1' }));
  });

  it('parseCsv reads decimal commas with semicolon or tab delimiters, detected from the header', () => {
    // Reference values: the same decimals written with a point (common practice in EU locales).
    const semi = parseCsv('zeit;signal\n0,5;1,25\n1,0;-3,5e-3\n', { decimal: ',' });
    expect(semi.delimiter).toBe(';');
    expect(Array.from(semi.columns.signal!)).toEqual([1.25, -0.0035]);
    const tsv = parseCsv('t\tv\n0,5\t2,5\n', { decimal: ',' });
    expect(tsv.delimiter).toBe('\t');
    expect(Array.from(tsv.columns.v!)).toEqual([2.5]);
    expect(() => parseCsv('a,b\n1,2\n', { decimal: ',', delimiter: ',' })).toThrow(code('TF_BAD_OPTION'));
  });

  it('parseCsv detects tab-separated files and lets an explicit delimiter override detection', () => {
    const t = parseCsv('time\tname\n0.5\tcue\n', { columns: ['time', { name: 'name', type: 'string' }] });
    expect(t.delimiter).toBe('\t');
    expect(t.strings.name).toEqual(['cue']);
    const forced = parseCsv('a;b,c\n1;2,3\n', { delimiter: ';', decimal: ',' });
    expect(forced.fields).toEqual(['a', 'b,c']);
    expect(Array.from(forced.columns['b,c']!)).toEqual([2.3]);
  });

  it('parseCsv selects, renames and types columns, and skips unlisted ones without converting them', () => {
    const t = parseCsv('time,junk,G,event\n0,not a number,1.5,cue\n0.1,x,2.5,\n', {
      columns: [{ name: 'G', as: 'signal' }, 'time', { name: 'event', type: 'string' }, { name: 'absent', required: false }],
    });
    expect(Object.keys(t.columns)).toEqual(['signal', 'time']);
    expect(Array.from(t.columns.signal!)).toEqual([1.5, 2.5]);
    expect(t.strings.event).toEqual(['cue', '']);
    expect(t.nulls).toEqual({ signal: 0, time: 0, event: 1 });
    expect(() => parseCsv('a\n1\n', { columns: ['a', { name: 'a', as: 'b' }] })).toThrow(code('TF_BAD_OPTION'));
    expect(() => parseCsv('a\n1\n', { columns: [{ name: 'a', typ: 'string' } as never] })).toThrow(code('TF_UNKNOWN_OPTION'));
  });

  it('parseCsv turns empty cells and null tokens into NaN and counts them per column', () => {
    const t = parseCsv('t,x,y\n0,,1\n1,NaN,  \n2,NA,3\n3,4,null\n');
    expect(Array.from(t.columns.x!)).toEqual([NaN, NaN, NaN, 4]);
    expect(Array.from(t.columns.y!)).toEqual([1, NaN, 3, NaN]);
    expect(t.nulls).toEqual({ t: 0, x: 3, y: 2 });
    const custom = parseCsv('x\n-999\n1\n"-999.0"\n', { nullTokens: ['-999'] });
    expect(Array.from(custom.columns.x!)).toEqual([NaN, 1, NaN]);
  });

  it('parseCsv throws TF_NON_FINITE naming column and line for a missing cell of a finite column', () => {
    expect(() => parseCsv('t,x\n0,1\n1,\n', { columns: [{ name: 'x', finite: true }], label: 'rec.csv' }))
      .toThrow(code('TF_NON_FINITE', { file: 'rec.csv', column: 'x', line: 3 }));
    expect(() => parseCsv('x\n-Infinity\n', { columns: [{ name: 'x', finite: true }] })).toThrow(code('TF_NON_FINITE', { line: 2 }));
  });

  it('parseCsv throws TF_BAD_FILE naming the file for empty input or input without a header', () => {
    expect(() => parseCsv('', { label: 'empty.csv' })).toThrow(code('TF_BAD_FILE', { file: 'empty.csv' }));
    expect(() => parseCsv('\ufeff# only a comment\n\n', { label: 'c.csv' })).toThrow(code('TF_BAD_FILE', { file: 'c.csv' }));
    const headerOnly = parseCsv('time,x\n');
    expect(headerOnly.rows).toBe(0);
    expect(headerOnly.columns.x).toEqual(new Float64Array(0));
  });

  it('parseCsv throws TF_MISSING_COLUMN naming the file and the closest column for a misspelled name', () => {
    expect(() => parseCsv('time,signal\n0,1\n', { columns: ['tiem'], label: 'p.csv' }))
      .toThrow(code('TF_MISSING_COLUMN', { file: 'p.csv', column: 'tiem', suggestion: 'time' }));
    let err: unknown;
    try {
      parseCsv('time,signal\n0,1\n', { columns: ['sginal'] });
    } catch (e) {
      err = e;
    }
    expect((err as Error).message).toContain("Did you mean 'signal'?");
  });

  it('parseCsv throws TF_BAD_CELL naming file, column, 1-based line and the text of a non-numeric cell', () => {
    const text = '# header follows\ntime,x\n0,1\n0.1,"2"\n0.2,1O\n';
    for (const chunkBytes of [1, 3, 1 << 20]) {
      expect(() => parseCsv(text, { label: 'x.csv', chunkBytes })).toThrow(code('TF_BAD_CELL', { file: 'x.csv', column: 'x', line: 5, text: '1O' }));
    }
    for (const bad of ['0x10', '1_000', '1e', '--1', '.', 'inf', '1,5', '٣']) {
      expect(() => parseCsv(`x\n${bad.includes(',') ? `"${bad}"` : bad}\n`)).toThrow(code('TF_BAD_CELL', { text: bad }));
    }
  });

  it('parseCsv throws TF_BAD_FILE naming the line for a record with too many or too few fields, or an unclosed quote', () => {
    expect(() => parseCsv('a,b\n1,2\n3,4,\n')).toThrow(code('TF_BAD_FILE', { line: 3 }));
    expect(() => parseCsv('a,b\n1,2\n3\n4,5\n')).toThrow(code('TF_BAD_FILE', { line: 3 }));
    expect(() => parseCsv('a,b\n1,"2\n3,4\n', { columns: ['a', { name: 'b', type: 'string' }] })).toThrow(code('TF_BAD_FILE', { line: 2 }));
    expect(() => parseCsv('a,b\n1,"2"x\n', { columns: ['a', { name: 'b', type: 'string' }] })).toThrow(code('TF_BAD_FILE', { line: 2 }));
  });

  it('parseCsv drops a truncated last line (too few fields, no line end) with warning IO_TRUNCATED_LAST_LINE', () => {
    for (const chunkBytes of [1, 4, 1 << 20]) {
      const t = parseCsv('t,x,y\n0,1,2\n1,3,4\n2,5', { chunkBytes });
      expect(t.rows).toBe(2);
      expect(t.warnings.map((w) => w.code)).toEqual(['IO_TRUNCATED_LAST_LINE']);
      expect(t.warnings[0]!.details).toMatchObject({ line: 4, fields: 2, expected: 3 });
    }
    const complete = parseCsv('t,x\n0,1\n1,3'); // a complete last line without a line end is kept
    expect(Array.from(complete.columns.x!)).toEqual([1, 3]);
    expect(complete.warnings).toEqual([]);
  });

  // Reference: numpy 2.4.6 np.loadtxt and Python float(), both correctly rounded; fixtures/numpy/gen_numbers.py.
  it('parseCsv parses tricky decimal strings bit for bit as numpy.loadtxt does (subnormals, -0, .5, 5., 1E5, " 3 ")', () => {
    const fx = loadFixture('numpy/numbers.json', fixtures);
    const cases = fx.cases as { text: string; bits: string }[];
    const text = `x\n${cases.map((c) => c.text).join('\n')}\n`;
    for (const chunkBytes of [1, 2, 7, 1 << 20]) {
      const got = parseCsv(text, { chunkBytes }).columns.x!;
      cases.forEach((c, i) => expect({ text: c.text, bits: bits(got[i]!) }).toEqual({ text: c.text, bits: c.bits }));
    }
  });

  // Reference: ECMAScript Number(text) (the spec's StringToNumber, correctly rounded), on texts
  // made by Number.prototype.toString / toExponential / toFixed.
  it('parseCsv reads any double printed by toString, toExponential or toFixed exactly as Number() does, at any chunk size', () => {
    const printed = fc.tuple(fc.double(), fc.integer({ min: 0, max: 3 }), fc.integer({ min: 0, max: 20 })).map(([x, mode, k]) => {
      const s = mode === 0 ? x.toString() : mode === 1 ? x.toExponential(k) : mode === 2 ? x.toFixed(k) : ` ${x.toPrecision(k + 1)} `;
      return s;
    });
    fc.assert(fc.property(fc.array(printed, { minLength: 1, maxLength: 40 }), fc.integer({ min: 1, max: 9 }), (texts, chunkBytes) => {
      const t = parseCsv(`v,w\n${texts.map((s, i) => `${s},${i}`).join('\r\n')}\r\n`, { chunkBytes });
      expect(Array.from(t.columns.v!, bits)).toEqual(texts.map((s) => bits(s.trim() === 'NaN' ? NaN : Number(s))));
      expect(t.nulls.v).toBe(texts.filter((s) => s.trim() === 'NaN').length);
    }), { seed: 4180, numRuns: 150 });
  });

  it('parseCsv gives the same table and line numbers for every chunk size, whatever falls on a chunk boundary', () => {
    const cell = fc.string({ unit: fc.constantFrom('a', 'é', ',', '"', '\n', '\r\n', '\r', ' ', '\t', '#', 'Δ'), maxLength: 6 });
    const eol = fc.constantFrom('\n', '\r\n', '\r');
    const row = fc.tuple(fc.double({ noNaN: true, noDefaultInfinity: true }), cell, eol, fc.constantFrom('', '# note', '\n'));
    const prolog = fc.tuple(fc.boolean(), fc.constantFrom('', '# written by rig 3\n', '\r\n# a\r\n\r\n'));
    fc.assert(fc.property(prolog, fc.array(row, { maxLength: 12 }), fc.integer({ min: 1, max: 11 }), ([bom, head], rows, chunkBytes) => {
      // RFC 4180 writing by hand: every text cell quoted, inner quotes doubled; comment and
      // blank lines between records; mixed line ends.
      let text = `${bom ? '\ufeff' : ''}${head}x,s\n`;
      for (const [x, s, end, between] of rows) {
        text += `${Object.is(x, -0) ? '-0' : String(x)},"${s.replaceAll('"', '""')}"${end}`;
        if (between) text += `${between}${between.endsWith('\n') ? '' : end}`;
      }
      const spec = { columns: ['x', { name: 's', type: 'string' as const }] };
      const t = parseCsv(text, { ...spec, chunkBytes });
      expect(Array.from(t.columns.x!, bits)).toEqual(rows.map(([x]) => bits(x)));
      expect(t.strings.s).toEqual(rows.map(([, s]) => s));
      const whole = parseCsv(text, spec);
      expect(rows.map((_, r) => lineOfRow(t, r))).toEqual(rows.map((_, r) => lineOfRow(whole, r)));
    }), { seed: 7, numRuns: 200 });
  });
});

describe('readCsv', () => {
  // Reference: numpy 2.4.6 np.savetxt(fmt='%.17g') output, NaN written as 'nan'; fixtures/numpy/gen_numbers.py.
  it('readCsv reads a file written by numpy.savetxt back to the same doubles, NaN and -0 included', async () => {
    const fx = loadFixture('numpy/numbers.json', fixtures);
    const sv = fx.savetxt as { columns: string[]; bits: string[][] };
    for (const chunkBytes of [61, 1 << 20]) {
      const t = await readCsv(join(fixtures, 'numpy/savetxt.csv'), { chunkBytes });
      sv.columns.forEach((c, j) => expect(Array.from(t.columns[c]!, bits)).toEqual(sv.bits[j]));
      expect(t.nulls).toEqual({ time: 0, a: 1, b: 0 });
    }
    expect(fromBits(sv.bits[2]![8]!)).toBe(-0);
  });

  it('readCsv streams a file in small chunks with the same result as one chunk', async () => {
    const path = join(tmp, 'stream.csv');
    const lines = ['time,x,label'];
    for (let i = 0; i < 1500; i++) lines.push(`${i / 1000},${Math.sin(i) * 1e-3},"r${i},${i % 7}"`);
    writeFileSync(path, lines.join('\r\n') + '\r\n');
    const spec = { columns: ['time', 'x', { name: 'label', type: 'string' as const }] };
    const big = await readCsv(path, spec);
    const small = await readCsv(path, { ...spec, chunkBytes: 97 });
    expect(small.rows).toBe(1500);
    expect(Array.from(small.columns.x!, bits)).toEqual(Array.from(big.columns.x!, bits));
    expect(small.strings.label).toEqual(big.strings.label);
    expect(small.strings.label![1499]).toBe('r1499,1');
    expect(Array.from(big.columns.x!.subarray(0, 3))).toEqual([0, Math.sin(1) * 1e-3, Math.sin(2) * 1e-3]);
  });

  it('readCsv throws TF_BAD_FILE naming the file when it is missing, a folder, or empty', async () => {
    await expect(readCsv(join(tmp, 'nope.csv'))).rejects.toThrow(code('TF_BAD_FILE', { file: join(tmp, 'nope.csv') }));
    await expect(readCsv(tmp)).rejects.toThrow(code('TF_BAD_FILE'));
    writeFileSync(join(tmp, 'empty.csv'), '');
    await expect(readCsv(join(tmp, 'empty.csv'))).rejects.toThrow(code('TF_BAD_FILE', { file: join(tmp, 'empty.csv') }));
  });
});

describe('lineOfRow', () => {
  it('lineOfRow maps data rows to file lines across comments, blank lines and quoted line breaks', () => {
    const text = '# c1\n\nid,s\nr0,a\n# c2\nr1,"x\ny\nz"\n\nr2,b\nr3,c\n';
    const t = parseCsv(text, { columns: [{ name: 'id', type: 'string' }, { name: 's', type: 'string' }], chunkBytes: 3 });
    // Independent count: 1 + the number of '\n' before each row's marker in the text.
    const expected = ['r0', 'r1', 'r2', 'r3'].map((m) => text.slice(0, text.indexOf(m)).split('\n').length);
    expect(t.strings.id!.map((_, r) => lineOfRow(t, r))).toEqual(expected);
    expect(expected).toEqual([4, 6, 10, 11]);
    expect(() => lineOfRow(t, 4)).toThrow(code('TF_BAD_OPTION'));
    // The same text with CRLF line ends, split so that CR and LF fall into different chunks.
    for (const chunkBytes of [1, 2, 3, 4]) {
      const crlf = parseCsv(text.replaceAll('\n', '\r\n'), { columns: [{ name: 'id', type: 'string' }, { name: 's', type: 'string' }], chunkBytes });
      expect(crlf.strings.id!.map((_, r) => lineOfRow(crlf, r))).toEqual(expected);
      expect(crlf.strings.s![1]).toBe('x\r\ny\r\nz');
    }
  });
});

import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  canonicalJson, checkInteger, checkOneOf, checkPositive, eventTimes, hashInput, inferSampleRate, makeEventTable,
  makeProvenance, resolveOptions, sha256, sha256File, sha256FilesInBackground, timeToIndex, TuningforkError, VERSION, asMatrix, selectKth,
} from '../src/index.js';
import fc from 'fast-check';

describe('resolveOptions', () => {
  const DEFAULTS = Object.freeze({ preSec: 2, postSec: 5, edges: 'drop' as const });
  it('merges options over defaults and ignores undefined values', () => {
    expect(resolveOptions('f', DEFAULTS, { preSec: 1, postSec: undefined })).toEqual({ preSec: 1, postSec: 5, edges: 'drop' });
  });
  it('rejects an unknown key with TF_UNKNOWN_OPTION and a did-you-mean hint', () => {
    try {
      resolveOptions('periEventMatrix', DEFAULTS, { preSecs: 1 } as object);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(TuningforkError);
      expect((e as TuningforkError).code).toBe('TF_UNKNOWN_OPTION');
      expect((e as TuningforkError).details.suggestion).toBe('preSec');
      expect((e as Error).message).toContain("Did you mean 'preSec'?");
    }
  });
  it('rejects a non-object options argument', () => {
    expect(() => resolveOptions('f', DEFAULTS, [] as unknown as object)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('check helpers', () => {
  it('accept valid values and throw TF_BAD_OPTION naming the option otherwise', () => {
    expect(checkPositive('f', 'rate', 3)).toBe(3);
    expect(() => checkPositive('f', 'rate', 0)).toThrow(/f: rate must be a finite number > 0, got 0/);
    expect(() => checkPositive('f', 'rate', Number.NaN)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => checkInteger('f', 'n', 2.5, 0)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(checkOneOf('f', 'mode', 'a', ['a', 'b'])).toBe('a');
    expect(() => checkOneOf('f', 'mode', 'c', ['a', 'b'])).toThrow(/one of 'a', 'b'/);
  });
});

describe('time helpers', () => {
  it('timeToIndex rounds to the nearest sample with ties up (common practice, STYLE.md §3)', () => {
    const s = { sampleRate: 10, t0: 1 };
    expect(timeToIndex(s, 1.0)).toBe(0);
    expect(timeToIndex(s, 1.04)).toBe(0);
    expect(timeToIndex(s, 1.05)).toBe(1);
    expect(timeToIndex(s, 0.9)).toBe(-1);
  });
  it('inferSampleRate returns 1/median interval and throws TF_IRREGULAR_SAMPLING with the index', () => {
    expect(inferSampleRate([0, 0.001, 0.002, 0.003])).toBeCloseTo(1000, 9);
    expect(() => inferSampleRate([0, 0.001, 0.001, 0.002])).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING', details: expect.objectContaining({ index: 2 }) }));
    expect(() => inferSampleRate([0, 0.001, 0.002, 0.0035, 0.0045])).toThrow(expect.objectContaining({ code: 'TF_IRREGULAR_SAMPLING' }));
    expect(() => inferSampleRate([0])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
  });
});

describe('makeEventTable', () => {
  it('sorts by time (stable) and selects by name', () => {
    const ev = makeEventTable([3, 1, 2, 1], ['b', 'a', 'b', 'c'], [30, 10, 20, 11]);
    expect(Array.from(ev.time)).toEqual([1, 1, 2, 3]);
    expect(ev.name).toEqual(['a', 'c', 'b', 'b']);
    expect(Array.from(eventTimes(ev, 'b'))).toEqual([2, 3]);
  });
  it('names the row of a non-finite time', () => {
    expect(() => makeEventTable([1, Number.NaN], ['a', 'b'])).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS', details: { row: 1 } }));
    expect(() => makeEventTable([1], ['a', 'b'])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('provenance', () => {
  it("sha256('abc') equals the FIPS 180-2 example digest", () => {
    // Reference: FIPS PUB 180-2, Appendix B.1.
    expect(sha256('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(hashInput('x', new Float64Array([1])).bytes).toBe(8);
  });
  it('sha256FilesInBackground gives the FIPS digest and the streamed digest of each file, on a thread or inline', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'tf-hash-'));
    const abc = join(dir, 'abc.txt');
    const big = join(dir, 'big.bin');
    writeFileSync(abc, 'abc');
    writeFileSync(big, Buffer.alloc(3_000_000, 7)); // several stream chunks
    // Reference: FIPS PUB 180-2, Appendix B.1 (the digest of 'abc').
    const want = [{ name: abc, sha256: 'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad', bytes: 3 }, await sha256File(big)];
    expect(await sha256FilesInBackground([abc, big])).toEqual(want);
    const saved = process.env['TUNINGFORK_THREADS'];
    process.env['TUNINGFORK_THREADS'] = '1';
    try {
      expect(await sha256FilesInBackground([abc, big])).toEqual(want);
    } finally {
      if (saved === undefined) delete process.env['TUNINGFORK_THREADS'];
      else process.env['TUNINGFORK_THREADS'] = saved;
    }
    await expect(sha256FilesInBackground([join(dir, 'missing')])).rejects.toMatchObject({ code: 'ENOENT' });
  });
  it('canonicalJson sorts keys at every level so equal content hashes equally', () => {
    expect(canonicalJson({ b: 1, a: { d: [1, 2], c: new Float64Array([0.5]) } })).toBe('{"a":{"c":[0.5],"d":[1,2]},"b":1}');
  });
  it('records the package version, equal to package.json', () => {
    const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string };
    expect(VERSION).toBe(pkg.version);
    expect(makeProvenance('op', { a: 1 }, 3).version).toBe(pkg.version);
  });
});

describe('asMatrix', () => {
  it('checks rows × cols against the data length', () => {
    expect(asMatrix(new Float64Array(6), 2, 3).cols).toBe(3);
    expect(() => asMatrix(new Float64Array(5), 2, 3)).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('selectKth', () => {
  it('returns the k-th order statistic, as a full sort does (property)', () => {
    fc.assert(fc.property(fc.array(fc.double({ noNaN: true, min: -1e6, max: 1e6 }), { minLength: 1, maxLength: 200 }), fc.nat(), (xs, kRaw) => {
      const k = kRaw % xs.length;
      const sorted = Float64Array.from(xs).sort();
      expect(selectKth(Float64Array.from(xs), k)).toBe(sorted[k]);
    }), { seed: 3, numRuns: 300 });
  });
});

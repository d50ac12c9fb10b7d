import { mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { checkOutDir, checkOutputFolder, isBatchManifest, mergeOptions, parseBatchManifest, resolveInside, sessionSeed } from '../src/index.js';
import { removeTree, tempDir } from './helpers/cli.js';

const root = tempDir('unit');
afterAll(() => removeTree(root));

const bad = (value: unknown) => {
  try {
    parseBatchManifest(value, 'b.json', root);
  } catch (e) {
    return e as { code: string; message: string; details: Record<string, unknown> };
  }
  throw new Error('expected a TF_BAD_MANIFEST error');
};

describe('parseBatchManifest', () => {
  it('resolves session manifests against the batch manifest folder and fills in labels', () => {
    const b = parseBatchManifest({ seed: 3, options: { a: 1 }, sessions: ['x/one.json', { manifest: 'two.json', animal: 'r1', group: 'g', seed: 5 }] }, 'sub/b.json', root);
    expect(b.seed).toBe(3);
    expect(b.sessions.map((s) => relative(root, s.manifest))).toEqual([join('sub', 'x', 'one.json'), join('sub', 'two.json')]);
    expect(b.sessions[1]).toMatchObject({ animal: 'r1', group: 'g', seed: 5 });
    expect(b.sessions[0]).toMatchObject({ animal: '', group: '', seed: undefined, options: {} });
  });

  it('names the field of every error (TF_BAD_MANIFEST), with a hint for a misspelled one', () => {
    expect(bad({ sessions: [{ manifest: 'a.json', aminal: 'r1' }] })).toMatchObject({ code: 'TF_BAD_MANIFEST', details: { field: 'sessions[0].aminal' } });
    expect(bad({ sessions: [{ manifest: 'a.json', aminal: 'r1' }] }).message).toContain("did you mean 'animal'?");
    expect(bad({ sessions: [{ manifest: 'a.json' }, { manifest: 'b.json', animal: 7 }] }).details.field).toBe('sessions[1].animal');
    expect(bad({ sessions: [{ animal: 'r1' }] }).details.field).toBe('sessions[0].manifest');
    expect(bad({ sessions: [] }).details.field).toBe('sessions');
    expect(bad({ seed: -1, sessions: ['a.json'] }).details.field).toBe('seed');
    expect(bad({ seed: 1.5, sessions: ['a.json'] }).details.field).toBe('seed');
    expect(bad({ options: [], sessions: ['a.json'] }).details.field).toBe('options');
    expect(bad([1, 2]).details.field).toBe('the top level');
  });

  it('tells batch manifests (a sessions key, or its misspelling) from session manifests', () => {
    expect(isBatchManifest({ sessions: [] })).toBe(true);
    expect(isBatchManifest({ sesions: [] })).toBe(true);
    expect(isBatchManifest({ schemaVersion: 1, session: 'a', files: [] })).toBe(false);
    expect(isBatchManifest({ schemaVersion: 1, sesion: 'a', files: [] })).toBe(false);
  });
});

describe('mergeOptions', () => {
  it('lets later sources win key by key inside plain objects and replaces other values', () => {
    expect(mergeOptions({ a: 1, b: { x: 1, y: 2 }, c: [1, 2] }, { b: { y: 3 }, c: [9] }, { d: true })).toEqual({ a: 1, b: { x: 1, y: 3 }, c: [9], d: true });
  });
});

describe('sessionSeed', () => {
  it('is a 32-bit unsigned integer that depends on the batch seed and the id only', () => {
    const ids = Array.from({ length: 200 }, (_, i) => `rat${i}-day${i % 7}`);
    const seeds = ids.map((id) => sessionSeed(7, id));
    for (const s of seeds) expect(Number.isInteger(s) && s >= 0 && s < 2 ** 32).toBe(true);
    expect(new Set(seeds).size).toBe(ids.length);
    expect(ids.map((id) => sessionSeed(7, id))).toEqual(seeds);
    expect(sessionSeed(8, ids[0]!)).not.toBe(seeds[0]);
  });
});

describe('resolveInside', () => {
  it('accepts nested relative paths and rejects absolute paths and climbs out', () => {
    expect(resolveInside(root, 'figures/peth.svg', 'text')).toBe(join(root, 'figures', 'peth.svg'));
    for (const p of ['../x', '/etc/passwd', 'a/../../b', 'a/..', '.', '', 'C:/x', '\\\\server\\x']) {
      expect(() => resolveInside(root, p, 'text'), p).toThrow(expect.objectContaining({ code: 'TF_BAD_OUTPUT_PATH' }));
    }
  });

  it('rejects a path that goes through a symbolic link leaving the folder', () => {
    const out = join(root, 'out');
    mkdirSync(out, { recursive: true });
    mkdirSync(join(root, 'elsewhere'), { recursive: true });
    symlinkSync(join(root, 'elsewhere'), join(out, 'link'));
    expect(() => resolveInside(out, 'link/file.txt', 'text')).toThrow(expect.objectContaining({ code: 'TF_BAD_OUTPUT_PATH' }));
  });

  it('never returns a path outside the folder (property)', () => {
    fc.assert(fc.property(fc.array(fc.constantFrom('a', 'b', '..', '.', 'c.d'), { minLength: 1, maxLength: 6 }), (segs) => {
      const rel = segs.join('/');
      let got: string | undefined;
      try {
        got = resolveInside(root, rel, 'p');
      } catch (e) {
        expect((e as { code: string }).code).toBe('TF_BAD_OUTPUT_PATH');
        return;
      }
      expect(got.startsWith(root + sep)).toBe(true);
    }), { seed: 4, numRuns: 300 });
  });
});

describe('checkOutDir', () => {
  it('keeps session folders out of the reserved merged/ and .staging/ folders', () => {
    expect(checkOutDir('sessions/a', 'out')).toBe('sessions/a');
    expect(checkOutDir('./x/./y', 'out')).toBe('x/y');
    expect(() => checkOutDir('merged/a', 'out')).toThrow(expect.objectContaining({ code: 'TF_BAD_OUTPUT_PATH' }));
    expect(() => checkOutDir('.staging', 'out')).toThrow(expect.objectContaining({ code: 'TF_BAD_OUTPUT_PATH' }));
  });
});

describe('checkOutputFolder', () => {
  it('accepts a missing or existing folder and rejects a file or a path through a file', () => {
    writeFileSync(join(root, 'f'), 'x');
    expect(checkOutputFolder('new/deeper', root)).toBe(join(root, 'new', 'deeper'));
    expect(checkOutputFolder('.', root)).toBe(root);
    expect(() => checkOutputFolder('f', root)).toThrow(expect.objectContaining({ code: 'TF_BAD_OUTPUT_PATH' }));
    expect(() => checkOutputFolder('f/sub', root)).toThrow(expect.objectContaining({ code: 'TF_BAD_OUTPUT_PATH' }));
  });
});

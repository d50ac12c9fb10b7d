import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eventTimes } from '@tuningfork/core';
import { expectAllClose } from '@tuningfork/test-utils';
import { loadSession, readManifest, validateManifest, writeArrow, writeCsv, writeJson } from '../src/index.js';

const tmp = mkdtempSync(join(tmpdir(), 'tf-io-manifest-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const code = (c: string, details: Record<string, unknown> = {}) =>
  expect.objectContaining({ code: c, details: expect.objectContaining(details) });

const minimal = () => ({
  schemaVersion: 1,
  session: 'rat07-d12',
  files: [
    { kind: 'photometry', path: 'photometry.csv', sites: [{ name: 'NAc', signal: 'nac_465', control: 'nac_405' }] },
    { kind: 'events', path: 'events.tsv', timeUnit: 'ms', columns: { name: 'event' } },
    { kind: 'trials', path: 'trials.csv', columns: { time: 'oops' } },
  ] as Record<string, unknown>[],
});

describe('validateManifest', () => {
  it('validateManifest fills defaults: format from the extension, seconds, field-named columns, resolved paths', () => {
    const m = validateManifest({ ...minimal(), files: minimal().files.slice(0, 2) }, { baseDir: 'data/s1' });
    const [ph, ev] = m.files;
    expect(ph).toMatchObject({ kind: 'photometry', format: 'csv', timeUnit: 's', columns: { time: 'time' }, jitterTolerance: 0.1, at: 'files[0]' });
    expect(ph!.resolvedPath).toBe(resolve('data/s1', 'photometry.csv'));
    expect(ev).toMatchObject({ kind: 'events', format: 'tsv', timeUnit: 'ms', columns: { time: 'time', name: 'event', value: 'value' }, duplicates: 'keep' });
    expect(m.options).toEqual({});
  });

  it('validateManifest names the JSON path of a bad field, e.g. files[2].columns.time', () => {
    const m = minimal();
    m.files[2] = { kind: 'events', path: 'e.csv', columns: { time: 42 } };
    expect(() => validateManifest(m)).toThrow(code('TF_BAD_MANIFEST', { path: 'files[2].columns.time' }));
    const n = minimal();
    expect(() => validateManifest(n)).toThrow(code('TF_BAD_MANIFEST', { path: 'files[2].columns.time' })); // 'time' is not a trials column
    let message = '';
    try {
      validateManifest(m, { label: 'session.json' });
    } catch (e) {
      message = (e as Error).message;
    }
    expect(message).toContain("manifest 'session.json': files[2].columns.time must be a non-empty string");
  });

  it('validateManifest suggests the closest key or value for a misspelling', () => {
    const cases: [(m: ReturnType<typeof minimal>) => void, string, string][] = [
      [(m) => { m.files[0]!.colums = { time: 't' }; }, 'files[0].colums', 'columns'],
      [(m) => { m.files[0]!.kind = 'photometery'; }, 'files[0].kind', 'photometry'],
      [(m) => { (m as Record<string, unknown>).sesion = 'x'; }, 'sesion', 'session'],
      [(m) => { m.files[1]!.timeUnit = 'sec'; }, 'files[1].timeUnit', 's'],
      [(m) => { m.files[0]!.sites = [{ name: 'A', signal: 'a', contrl: 'b' }]; }, 'files[0].sites[0].contrl', 'control'],
      [(m) => { m.files[1]!.csv = { delimeter: ';' }; }, 'files[1].csv.delimeter', 'delimiter'],
    ];
    for (const [edit, path, suggestion] of cases) {
      const m = minimal();
      m.files.pop();
      edit(m);
      expect(() => validateManifest(m)).toThrow(code('TF_BAD_MANIFEST', { path, suggestion }));
    }
  });

  it('validateManifest rejects missing or wrong required fields, repeated names and a second trials file', () => {
    const base = () => {
      const m = minimal();
      m.files.pop();
      return m as Record<string, unknown> & ReturnType<typeof minimal>;
    };
    const expectPath = (m: unknown, path: string) => expect(() => validateManifest(m)).toThrow(code('TF_BAD_MANIFEST', { path }));
    expectPath({ ...base(), schemaVersion: undefined }, 'schemaVersion');
    expectPath({ ...base(), schemaVersion: 2 }, 'schemaVersion');
    expectPath({ ...base(), session: '' }, 'session');
    expectPath({ ...base(), seed: -1 }, 'seed');
    expectPath({ ...base(), files: [] }, 'files');
    expectPath([], '');
    let m = base();
    delete m.files[0]!.sites;
    expectPath(m, 'files[0].sites');
    m = base();
    m.files[0]!.sites = [{ name: 'A', signal: 'x', control: 'y' }, { name: 'A', signal: 'z', control: 'w' }];
    expectPath(m, 'files[0].sites[1].name');
    m = base();
    m.files.push({ kind: 'trials', path: 'a.csv' }, { kind: 'trials', path: 'b.csv' });
    expectPath(m, 'files[3]');
    m = base();
    m.files[1]!.csv = { delimiter: ',', decimal: ',' };
    expectPath(m, 'files[1].csv.delimiter');
    m = base();
    delete m.files[1]!.path;
    expectPath(m, 'files[1].path');
  });
});

describe('validateManifest: a file listed twice', () => {
  it('validateManifest throws TF_BAD_MANIFEST for an events or spikes file listed twice with the same columns (its rows would count twice)', () => {
    const m = (files: Record<string, unknown>[]) => ({ schemaVersion: 1, session: 's', files });
    // Two spellings of one path, the second on a device clock: the same events twice.
    expect(() => validateManifest(m([{ kind: 'events', path: 'raw/events.csv' }, { kind: 'events', path: './raw/../raw/events.csv', clock: { syncEvent: 'sync', reference: { events: 'cue' } } }])))
      .toThrow(code('TF_BAD_MANIFEST', { path: 'files[1].path', previous: 'files[0]' }));
    // Different unit prefixes would hide the clash between the units of one spikes file.
    expect(() => validateManifest(m([{ kind: 'spikes', path: 'spikes.csv', unitPrefix: 'A/' }, { kind: 'events', path: 'ev.csv' }, { kind: 'spikes', path: 'spikes.csv', unitPrefix: 'B/' }])))
      .toThrow(code('TF_BAD_MANIFEST', { path: 'files[2].path', previous: 'files[0]' }));
    // Other columns of the same file (another name column) are other events: allowed.
    const ok = validateManifest(m([{ kind: 'events', path: 'ev.csv' }, { kind: 'events', path: 'ev.csv', columns: { name: 'port' } }]));
    expect(ok.files.map((f) => f.at)).toEqual(['files[0]', 'files[1]']);
  });
});

describe('validateManifest: events on another device\'s clock', () => {
  const withClock = (clock: unknown, extraFiles: Record<string, unknown>[] = []) => ({
    schemaVersion: 1, session: 's',
    files: [{ kind: 'continuous', path: 'ttl.csv', channels: [{ name: 'ttl', column: 'v' }] }, { kind: 'events', path: 'box.csv', clock }, ...extraFiles],
  });

  it('reads a clock spec with a line or an events reference, barcodes optional, and defaults to null', () => {
    const a = validateManifest(withClock({ syncEvent: 'sync', reference: { line: 'ttl', threshold: 2.5 }, barcodes: { bitSec: 0.01, nBits: 16, bitOrder: 'msb-first' } }));
    expect(a.files[1]).toMatchObject({ clock: { syncEvent: 'sync', reference: { line: 'ttl', threshold: 2.5 }, barcodes: { bitSec: 0.01, nBits: 16, bitOrder: 'msb-first' } } });
    const b = validateManifest(withClock({ syncEvent: 'sync', reference: { events: 'sync_in' } }));
    expect(b.files[1]).toMatchObject({ clock: { syncEvent: 'sync', reference: { events: 'sync_in' }, barcodes: null } });
    expect(validateManifest({ ...minimal(), files: minimal().files.slice(0, 2) }).files[1]).toMatchObject({ clock: null });
  });

  it('names the JSON path of every bad clock field', () => {
    const bad: [unknown, string][] = [
      [{ reference: { line: 'ttl' } }, 'files[1].clock.syncEvent'],
      [{ syncEvent: 'sync' }, 'files[1].clock.reference'],
      [{ syncEvent: 'sync', reference: { line: 'ttl', events: 'x' } }, 'files[1].clock.reference'],
      [{ syncEvent: 'sync', reference: { events: 'x', threshold: 1 } }, 'files[1].clock.reference.threshold'],
      [{ syncEvent: 'sync', reference: { line: 'nope' } }, 'files[1].clock.reference.line'],
      [{ syncEvent: 'sync', reference: { line: 'ttl' }, barcodes: { bitSec: 0.01 } }, 'files[1].clock.barcodes.nBits'],
      [{ syncEvent: 'sync', reference: { line: 'ttl' }, barcodes: { bitSec: -1, nBits: 8 } }, 'files[1].clock.barcodes.bitSec'],
      [{ syncEvent: 'sync', reference: { line: 'ttl' }, barcodes: { bitSec: 0.01, nBits: 64 } }, 'files[1].clock.barcodes.nBits'],
      [{ syncEvent: 'sync', refrence: { line: 'ttl' } }, 'files[1].clock.refrence'],
    ];
    for (const [clock, path] of bad) expect(() => validateManifest(withClock(clock)), path).toThrow(code('TF_BAD_MANIFEST', { path }));
  });
});

describe('readManifest', () => {
  it('readManifest reports invalid JSON as TF_BAD_MANIFEST with its line and column', async () => {
    const p = join(tmp, 'broken.json');
    writeFileSync(p, '{\n  "schemaVersion": 1,\n  "session": "s1"\n  "files": []\n}\n');
    await expect(readManifest(p)).rejects.toThrow(code('TF_BAD_MANIFEST', { manifest: p, line: 4 }));
    await expect(readManifest(join(tmp, 'absent.json'))).rejects.toThrow(code('TF_BAD_FILE'));
  });
});

describe('loadSession', () => {
  const dir = join(tmp, 'session');
  const n = 300; // 3 s at 100 Hz
  const rate = 100;
  beforeAll(async () => {
    mkdirSync(join(dir, 'raw'), { recursive: true });
    const t = Float64Array.from({ length: n }, (_, i) => 10 + i / rate);
    const f = (k: number) => Float64Array.from({ length: n }, (_, i) => k + Math.sin(i / 10) / k);
    await writeCsv(join(dir, 'raw', 'photometry.csv'), { t, dms_g: f(2), dms_uv: f(3), nac_g: f(4), nac_uv: f(5) });
    const ta = Float64Array.from({ length: 50 }, (_, i) => 10 + i / 20);
    await writeArrow(join(dir, 'raw', 'accel.arrow'), { time: ta, acc: new Float64Array(50).fill(0.98) });
    writeFileSync(join(dir, 'raw', 'events.tsv'), 'time\tevent\tvalue\n10500\tcue\t\n11250\treward\t1\n10900\tchoice\t0\n');
    writeFileSync(join(dir, 'raw', 'spikes_a.csv'), 'unit,time\n1,10.01\n1,10.5\n2,11\n');
    writeFileSync(join(dir, 'raw', 'spikes_b.csv'), 'unit,time\n1,10.2\n');
    writeFileSync(join(dir, 'raw', 'trials.csv'), 'trial,cueTime,choice,reward\n1,10.5,right,1\n');
    await writeJson(join(dir, 'session.json'), {
      schemaVersion: 1,
      session: 'rat07-d12',
      animal: 'rat07',
      seed: 17,
      options: { lowpassHz: 10 },
      files: [
        { kind: 'photometry', path: 'raw/photometry.csv', columns: { time: 't' }, sites: [{ name: 'DMS', signal: 'dms_g', control: 'dms_uv' }, { name: 'NAc', signal: 'nac_g', control: 'nac_uv' }] },
        { kind: 'continuous', path: 'raw/accel.arrow', channels: [{ name: 'accel', column: 'acc' }] },
        { kind: 'events', path: 'raw/events.tsv', timeUnit: 'ms', columns: { name: 'event' } },
        { kind: 'spikes', path: 'raw/spikes_a.csv', unitPrefix: 'A/' },
        { kind: 'spikes', path: 'raw/spikes_b.csv', unitPrefix: 'B/' },
        { kind: 'trials', path: 'raw/trials.csv' },
      ],
    });
  });

  it('loadSession builds a Session from a manifest, resolving paths against its folder', async () => {
    const { session, animal, seed, options, warnings } = await loadSession(join(dir, 'session.json'));
    expect(session.id).toBe('rat07-d12');
    expect([animal, seed, options]).toEqual(['rat07', 17, { lowpassHz: 10 }]);
    expect(session.photometry.map((s) => s.name)).toEqual(['DMS', 'NAc']);
    const dms = session.photometry[0]!;
    expect([dms.signal.sampleRate, dms.signal.t0, dms.control.sampleRate]).toEqual([100, 10, 100]);
    // Written with shortest round-trip digits, read back exactly (rtol 0).
    expectAllClose(dms.control.values, Float64Array.from({ length: n }, (_, i) => 3 + Math.sin(i / 10) / 3), { rtol: 0 });
    expect(session.continuous.accel!.sampleRate).toBe(20);
    expect(Array.from(eventTimes(session.events, 'reward'))).toEqual([11.25]); // 11250 ms
    expect(session.events.name).toEqual(['cue', 'choice', 'reward']);
    expect(session.units.map((u) => u.name)).toEqual(['A/1', 'A/2', 'B/1']);
    expect(Array.from(session.trials!.choice)).toEqual([1]);
    // Span: photometry 10 s … 10 + 300/100 s; accel 10 … 12.5 s; events and spikes inside.
    expect([session.start, session.end]).toEqual([10, 13]);
    expect(warnings.map((w) => w.code)).toEqual(['IO_EVENTS_SORTED']); // events.tsv lists choice after reward
  });

  it('loadSession keeps events on a device clock apart, with their clock spec, out of the events and the span', async () => {
    writeFileSync(join(dir, 'raw', 'box.csv'), 'time,name,value\n0.5,sync,0\n1.5,cue,0\n900,reward,1\n');
    await writeJson(join(dir, 'device.json'), {
      schemaVersion: 1, session: 'rat07-d12',
      files: [
        { kind: 'photometry', path: 'raw/photometry.csv', columns: { time: 't' }, sites: [{ name: 'DMS', signal: 'dms_g', control: 'dms_uv' }] },
        { kind: 'events', path: 'raw/events.tsv', timeUnit: 'ms', columns: { name: 'event' } },
        { kind: 'events', path: 'raw/box.csv', clock: { syncEvent: 'sync', reference: { events: 'cue' } } },
      ],
    });
    const { session } = await loadSession(join(dir, 'device.json'), { hash: false });
    expect(session.events.name).toEqual(['cue', 'choice', 'reward']);
    expect(session.deviceEvents).toHaveLength(1);
    const d = session.deviceEvents![0]!;
    expect(d.source).toBe('files[2] (raw/box.csv)');
    expect(d.events.name).toEqual(['sync', 'cue', 'reward']);
    expect(d.clock).toEqual({ syncEvent: 'sync', reference: { events: 'cue' }, barcodes: null });
    expect([session.start, session.end]).toEqual([10, 13]); // the device's 900 s is on another clock
    const plain = await loadSession(join(dir, 'session.json'), { hash: false });
    expect(plain.session.deviceEvents).toBeUndefined();
  });

  it('loadSession reports the SHA-256 of the manifest and of every input file for provenance', async () => {
    const { inputs, manifest } = await loadSession(join(dir, 'session.json'));
    expect(inputs.map((i) => i.name)).toEqual([join(dir, 'session.json'), ...manifest.files.map((f) => f.path)]);
    for (const [k, input] of inputs.entries()) {
      const p = k === 0 ? join(dir, 'session.json') : manifest.files[k - 1]!.resolvedPath;
      const bytes = readFileSync(p);
      // Reference: OpenSSL SHA-256 through node:crypto over the whole file.
      expect(input).toMatchObject({ sha256: createHash('sha256').update(bytes).digest('hex'), bytes: bytes.length });
    }
    expect((await loadSession(join(dir, 'session.json'), { hash: false })).inputs).toEqual([]);
  });

  it('loadSession prefixes a reader error with the manifest entry and keeps its code', async () => {
    const p = join(dir, 'bad.json');
    writeFileSync(p, JSON.stringify({ schemaVersion: 1, session: 's', files: [{ kind: 'events', path: 'raw/events.tsv', columns: { name: 'evnt' } }] }));
    await expect(loadSession(p)).rejects.toThrow(code('TF_MISSING_COLUMN', { entry: 'files[0]', suggestion: 'event' }));
    const q = join(dir, 'clash.json');
    writeFileSync(q, JSON.stringify({ schemaVersion: 1, session: 's', files: [{ kind: 'spikes', path: 'raw/spikes_a.csv' }, { kind: 'spikes', path: 'raw/spikes_b.csv' }] }));
    await expect(loadSession(q)).rejects.toThrow(code('TF_BAD_MANIFEST', { path: 'files[1].unitPrefix' }));
  });
});

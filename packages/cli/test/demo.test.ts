// `tuningfork demo` and `tuningfork check` as a new user runs them.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { readArrow, readCsv } from '@tuningfork/io';
import { DOUBLE, diffTrees, ensureBuilt, listFiles, removeTree, runCli, tempDir } from './helpers/cli.js';

let root = '';
const DEMO = ['demo', '--duration', '40', '--sites', '2', '--units', '3', '--seed', '5'];
const INPUT_FILES = [
  'accel.arrow', 'accel.csv', 'events.arrow', 'events.csv', 'photometry.arrow', 'photometry.csv', 'session.json',
  'spikes.arrow', 'spikes.csv', 'trials.arrow', 'trials.csv', 'truth.json', 'truth_traces.arrow',
];

beforeAll(async () => {
  ensureBuilt();
  root = tempDir('demo');
}, 60_000);
afterAll(() => removeTree(root));

describe('tuningfork demo', () => {
  it('writes the session as CSV + Arrow with its truth and manifest, byte-identical for the same seed', async () => {
    const [a, b] = await Promise.all([
      runCli([...DEMO, '--no-analysis', '--out', 'demo-a'], root),
      runCli([...DEMO, '--no-analysis', '--out', 'demo-b'], root),
    ]);
    expect(a.code).toBe(0);
    expect(b.code).toBe(0);
    expect(listFiles(join(root, 'demo-a'))).toEqual(INPUT_FILES.map((f) => `input/${f}`));
    expect(diffTrees(join(root, 'demo-a'), join(root, 'demo-b'))).toEqual([]);
    expect(a.stdout).toContain('tuningfork demo: simulated session sim-seed5 (40 s, 2 photometry sites, 3 units');
    expect(a.stdout).toContain('analysis: skipped (--no-analysis)');
  });

  it('writes CSV and Arrow tables holding the same values', async () => {
    // Numbers are written in the shortest text that reads back as the same double
    // (ECMAScript Number::toString, ECMA-262 §6.1.6.1.20), so CSV and Arrow must agree exactly.
    for (const name of ['photometry', 'events', 'trials', 'spikes', 'accel']) {
      const arrow = await readArrow(join(root, 'demo-a/input', `${name}.arrow`));
      const columns = arrow.fields.map((f) => ({ name: f, type: arrow.strings[f] !== undefined ? ('string' as const) : ('number' as const) }));
      const csv = await readCsv(join(root, 'demo-a/input', `${name}.csv`), { columns });
      expect(csv.fields).toEqual(arrow.fields);
      expect(csv.rows).toBe(arrow.rows);
      for (const f of Object.keys(arrow.columns)) expectAllClose(csv.columns[f]!, arrow.columns[f]!, { rtol: 0, atol: 0, label: `${name}.${f}` });
      for (const f of Object.keys(arrow.strings)) expect(csv.strings[f]).toEqual(arrow.strings[f]);
    }
  });

  it('analyses the session end to end through `run` when a pipeline is available', async () => {
    const r = await runCli([...DEMO, '--out', 'demo-a', '--pipeline', DOUBLE], root);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/analysis: 1 session: 1 analysed, 0 up to date, 0 failed .* merged 3 tables/);
    const files = listFiles(join(root, 'demo-a'));
    expect(files).toContain('sessions/sim-seed5/classes.arrow');
    expect(files).toContain('sessions/sim-seed5/provenance.json');
    expect(files).toContain('merged/classes.csv');
    // The demo's analysis is `run` on its manifest: the same outputs, byte for byte.
    const run = await runCli(['run', 'demo-a/input/session.json', '--out', 'run-of-demo', '--pipeline', DOUBLE, '--quiet'], root);
    expect(run.code).toBe(0);
    expect(diffTrees(join(root, 'demo-a/sessions'), join(root, 'run-of-demo/sessions'))).toEqual([]);
    const again = await runCli([...DEMO, '--out', 'demo-a', '--pipeline', DOUBLE], root);
    expect(again.stdout).toContain('0 analysed, 1 up to date');
  });
});

describe('tuningfork demo with the session pipeline of the tuningfork package', () => {
  it('analyses the simulated session end to end with the default pipeline', async () => {
    const r = await runCli(['demo', '--duration', '120', '--sites', '1', '--units', '2', '--seed', '3', '--out', 'demo-real'], root);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/analysis: 1 session: 1 analysed, 0 up to date, 0 failed .* merged \d+ tables into demo-real\/merged\//);
    expect(r.stdout).toMatch(/classes: \d+ of 3 cells match the simulated truth/);
    const files = listFiles(join(root, 'demo-real/sessions/sim-seed3'));
    for (const f of ['cells.arrow', 'cells.csv', 'report.html', 'provenance.json', '.done.json']) expect(files).toContain(f);
    const prov = JSON.parse(readFileSync(join(root, 'demo-real/sessions/sim-seed3/provenance.json'), 'utf8')) as Record<string, any>;
    expect(prov.pipeline).toBe('tuningfork');
    expect(prov.analysis.operation).toBe('analyzeSession');
    expect(prov.analysis.seed).toBe(3);
  }, 120_000);

  it('gives byte-identical sessions of the real pipeline with --jobs 2 (child processes) and --jobs 1', async () => {
    for (const seed of [6, 7]) {
      const d = await runCli(['demo', '--no-analysis', '--quiet', '--duration', '90', '--sites', '1', '--units', '2', '--seed', String(seed), '--out', `real-in/s${seed}`], root);
      expect(d.code).toBe(0);
    }
    writeFileSync(join(root, 'real-batch.json'), JSON.stringify({ seed: 1, sessions: [{ manifest: 'real-in/s6/input/session.json' }, { manifest: 'real-in/s7/input/session.json' }] }));
    const serial = await runCli(['run', 'real-batch.json', '--out', 'real-j1', '--jobs', '1', '--no-merge', '--quiet'], root);
    expect(serial.code).toBe(0);
    const parallel = await runCli(['run', 'real-batch.json', '--out', 'real-j2', '--jobs', '2', '--no-merge', '--quiet'], root);
    expect(parallel.code).toBe(0);
    expect(listFiles(join(root, 'real-j2/sessions/sim-seed7'))).toContain('cells.arrow');
    expect(diffTrees(join(root, 'real-j1/sessions'), join(root, 'real-j2/sessions'))).toEqual([]);
  }, 120_000);
});

describe('tuningfork check', () => {
  it('prints a QC summary whose counts match the files', async () => {
    const r = await runCli(['check', 'demo-b/input/session.json'], root);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe('');
    // 40 s at the simulator's default 1 kHz photometry and 100 Hz accelerometer rates.
    expect(r.stdout).toContain('site site01: 1000.0 Hz × 40000 samples; missing 0/0');
    expect(r.stdout).toContain('channel accel: 100.0 Hz × 4000 samples; missing 0');
    // Event counts by name, against a plain split of events.csv (no quoting in this file).
    const rows = readFileSync(join(root, 'demo-b/input/events.csv'), 'utf8').trim().split('\n').slice(1);
    const counts = new Map<string, number>();
    for (const row of rows) counts.set(row.split(',')[1]!, (counts.get(row.split(',')[1]!) ?? 0) + 1);
    const expected = [...counts.keys()].sort().map((k) => `${k} ${counts.get(k)}`).join(', ');
    expect(r.stdout).toContain(`events: ${expected}`);
    expect(r.stdout).toContain('1 of 1 sessions passed the checks.');
  });
});

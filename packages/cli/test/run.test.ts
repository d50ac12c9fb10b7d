// Behaviour of `tuningfork run` and `tuningfork merge`, driving the built binary with small
// simulated sessions and the test double of the pipeline (test/fixtures/pipeline-double.mjs).
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { rng } from '@tuningfork/core';
import { BIN, DOUBLE, cleanEnv, diffTrees, ensureBuilt, listFiles, makeBatch, removeTree, runCli, tempDir, writeBatch } from './helpers/cli.js';

let root = '';
const run = (args: string[], env: Record<string, string> = {}) => runCli(args, root, env);
const withDouble = (args: string[]) => [...args, '--pipeline', DOUBLE];

/** JSON-lines events of a run. */
function events(stdout: string): Record<string, unknown>[] {
  return stdout.trim().split('\n').filter((l) => l !== '').map((l) => JSON.parse(l) as Record<string, unknown>);
}

beforeAll(async () => {
  ensureBuilt();
  root = tempDir('run');
  await makeBatch(root, 4, { delayMs: 0 });
  // The same sessions with a slower analysis, for the kill test.
  writeBatch(root, 'slow.json', [3, 1, 4, 2], { delayMs: 500 });
  // Two sessions whose analysis blocks its process for 1.5 s after its last progress event.
  writeBatch(root, 'busy.json', [1, 2], { blockMs: 1500 });
}, 120_000);

afterAll(() => removeTree(root));

describe('tuningfork run (batch)', () => {
  it('writes every table as Arrow and CSV, texts, provenance.json and .done.json per session, then merges', async () => {
    const r = await run(withDouble(['run', 'batch.json', '--out', 'serial', '--jobs', '1', '--quiet']));
    expect(r.code).toBe(0);
    expect(r.stderr).toBe(''); // --quiet: nothing but errors
    expect(r.stdout).toBe('');
    const ids = readdirSync(join(root, 'serial/sessions')).sort();
    expect(ids).toEqual(['sim-seed1', 'sim-seed2', 'sim-seed3', 'sim-seed4']);
    expect(listFiles(join(root, 'serial/sessions/sim-seed1'))).toEqual([
      '.done.json', 'classes.arrow', 'classes.csv', 'events.arrow', 'events.csv', 'figures/cells.svg',
      'provenance.json', 'report.html', 'sites.arrow', 'sites.csv',
    ]);
    const prov = JSON.parse(readFileSync(join(root, 'serial/sessions/sim-seed2/provenance.json'), 'utf8')) as Record<string, any>;
    expect(prov.version).toBe('0.0.0');
    expect(prov.options).toEqual({ delayMs: 0 });
    // The demo's session manifest sets seed = its simulation seed; it wins over the batch seed.
    expect(prov.seed).toBe(2);
    expect(prov.seedSource).toBe('manifest');
    expect(prov.animal).toBe('ratB');
    expect(prov.group).toBe('DMS');
    // Every input named as written in the manifest, with a SHA-256 of its bytes.
    expect(prov.inputs.map((i: any) => i.name)).toEqual(['session.json', 'photometry.arrow', 'accel.arrow', 'events.arrow', 'trials.arrow', 'spikes.arrow']);
    for (const i of prov.inputs) expect(i.sha256).toMatch(/^[0-9a-f]{64}$/);
    // Merged tables: label columns first, sessions in id order.
    const csv = readFileSync(join(root, 'serial/merged/sites.csv'), 'utf8').trim().split('\n');
    expect(csv[0]).toBe('session,animal,group,site,samples,mean_signal,mean_control');
    expect(csv.slice(1).map((l) => l.split(',').slice(0, 3).join(','))).toEqual([
      'sim-seed1,ratA,DMS', 'sim-seed2,ratB,DMS', 'sim-seed3,ratA,NAc', 'sim-seed4,ratB,NAc',
    ]);
    expect(existsSync(join(root, 'serial/merged/summary.json'))).toBe(true);
    expect(existsSync(join(root, 'serial/.staging'))).toBe(false);
  });

  it('gives byte-identical outputs with --jobs 2 (child processes) and --jobs 1', async () => {
    const r = await run(withDouble(['run', 'batch.json', '--out', 'parallel', '--jobs', '2', '--quiet']));
    expect(r.code).toBe(0);
    expect(diffTrees(join(root, 'serial'), join(root, 'parallel'))).toEqual([]);
  });

  it('skips sessions whose inputs and options did not change, and redoes only a changed one', async () => {
    const again = await run(withDouble(['run', 'batch.json', '--out', 'serial', '--log-format', 'json']));
    expect(again.code).toBe(0);
    const ends = (out: string) => events(out).filter((e) => e.step === 'batch' && e.session !== null).map((e) => `${e.session}:${e.message}`).sort();
    expect(ends(again.stdout)).toEqual(['sim-seed1:up to date (skipped)', 'sim-seed2:up to date (skipped)', 'sim-seed3:up to date (skipped)', 'sim-seed4:up to date (skipped)']);
    // New options for one entry only: that session is analysed again, the others are kept.
    writeBatch(root, 'batch-changed.json', [1, 2, 3, 4], { delayMs: 0 }, { 3: { options: { extra: 1 } } });
    const changed = await run(withDouble(['run', 'batch-changed.json', '--out', 'serial', '--log-format', 'json']));
    expect(changed.code).toBe(0);
    const status = ends(changed.stdout).map((s) => s.replace(/done in .*/, 'done'));
    expect(status).toEqual(['sim-seed1:up to date (skipped)', 'sim-seed2:up to date (skipped)', 'sim-seed3:done', 'sim-seed4:up to date (skipped)']);
    const prov = JSON.parse(readFileSync(join(root, 'serial/sessions/sim-seed3/provenance.json'), 'utf8')) as Record<string, any>;
    expect(prov.options).toEqual({ delayMs: 0, extra: 1 });
  });

  it('logs plain progress lines on stderr and the summary on stdout when not on a terminal', async () => {
    const r = await run(withDouble(['run', 'batch.json', '--out', 'plain', '--jobs', '2']));
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/^\d\d:\d\d:\d\d 4 sessions of 4, 2 at a time$/m);
    expect(r.stderr).toMatch(/^\d\d:\d\d:\d\d \[sim-seed3\] double 50%$/m);
    expect(r.stderr).toMatch(/^\d\d:\d\d:\d\d \[sim-seed4\] done in [\d.]+ s: 3 tables$/m);
    expect(r.stdout).toMatch(/^4 sessions: 4 analysed, 0 up to date, 0 failed in [\d.]+ s → plain\/; merged 3 tables into plain\/merged\/$/m);
  });

  it.skipIf(spawnSync('script', ['--version']).status !== 0)('draws progress bars for the batch and each running session on a terminal', async () => {
    // `script` (util-linux) runs the command on a pseudo-terminal.
    const cmd = [process.execPath, BIN, ...withDouble(['run', 'batch.json', '--out', 'bars', '--jobs', '2'])].map((a) => `'${a}'`).join(' ');
    const r = spawnSync('script', ['-qec', cmd, '/dev/null'], { cwd: root, encoding: 'utf8', env: cleanEnv() });
    expect(r.status).toBe(0);
    const screen = r.stdout.replace(/\x1b\[[0-9;?]*[A-Za-z]/g, ''); // drop cursor-control sequences
    expect(screen).toMatch(/batch +\|[=-]+\| +\d+% \d\/4 sessions/);
    expect(screen).toMatch(/sim-seed\d +\|[=-]+\| +\d+% (hash|load|double|write)/);
  });

  it('writes one JSON event per line with exactly ts, level, session, step, fraction, message', async () => {
    const r = await run(withDouble(['run', 'batch.json', '--out', 'jsonlog', '--log-format', 'json', '--jobs', '2']));
    expect(r.code).toBe(0);
    const evs = events(r.stdout);
    expect(evs.length).toBeGreaterThan(8);
    for (const e of evs) {
      expect(Object.keys(e)).toEqual(['ts', 'level', 'session', 'step', 'fraction', 'message']);
      expect(Number.isNaN(Date.parse(e.ts as string))).toBe(false);
      expect(['debug', 'info', 'warn', 'error']).toContain(e.level);
      if (e.fraction !== null) expect(e.fraction as number).toBeGreaterThanOrEqual(0);
      if (e.fraction !== null) expect(e.fraction as number).toBeLessThanOrEqual(1);
    }
    // The pipeline's own progress reaches the log.
    expect(evs.some((e) => e.session === 'sim-seed1' && e.step === 'double' && e.fraction === 1)).toBe(true);
  });

  it('derives a session seed from the batch seed and the session id when no manifest sets one', async () => {
    // A copy of session 1's manifest without a seed, under another id.
    const m = JSON.parse(readFileSync(join(root, 'data/s1/input/session.json'), 'utf8')) as Record<string, unknown>;
    delete m.seed;
    m.session = 'noseed';
    writeFileSync(join(root, 'data/s1/input/noseed.json'), JSON.stringify(m));
    writeFileSync(join(root, 'noseed.json'), JSON.stringify({ seed: 7, sessions: [{ manifest: 'data/s1/input/noseed.json' }] }));
    const r = await run(withDouble(['run', 'noseed.json', '--out', 'noseed', '--quiet']));
    expect(r.code).toBe(0);
    const prov = JSON.parse(readFileSync(join(root, 'noseed/sessions/noseed/provenance.json'), 'utf8')) as Record<string, any>;
    // The documented rule (README, "Seeds"): rng(batchSeed).streamNamed('session/' + id).nextUint32().
    expect(prov.seed).toBe(rng(7).streamNamed('session/noseed').nextUint32());
    expect(prov.seedSource).toBe('derived');
  });
});

describe('tuningfork run --shard and tuningfork merge', () => {
  it('splits the id-sorted batch round-robin: shards are disjoint, cover the batch, and repeat exactly', async () => {
    const pick = async (shard: string, env: Record<string, string> = {}) => {
      const r = await run(withDouble(['run', 'batch.json', '--out', 'plan', '--dry-run', '--shard', shard]), env);
      expect(r.code).toBe(0);
      return r.stdout.split('\n').filter((l) => l.startsWith('  [')).map((l) => l.trim().split(/\s+/)[1]);
    };
    const s0 = await pick('0/3');
    const s1 = await pick('1/3');
    const s2 = await pick('2/3');
    expect(s0).toEqual(['sim-seed1', 'sim-seed4']);
    expect(s1).toEqual(['sim-seed2']);
    expect(s2).toEqual(['sim-seed3']);
    expect(await pick('1/3')).toEqual(s1);
    // Inside a Slurm array (sbatch --array=0-2) the shard comes from the task variables.
    expect(await pick('auto', { SLURM_ARRAY_TASK_ID: '1', SLURM_ARRAY_TASK_COUNT: '3', SLURM_ARRAY_TASK_MIN: '0', SLURM_ARRAY_TASK_MAX: '2' })).toEqual(s1);
    expect(existsSync(join(root, 'plan'))).toBe(false); // a dry run writes nothing
  });

  it('merges shards run separately into outputs byte-identical to the unsharded run', async () => {
    for (const shard of ['1/2', '0/2']) {
      const r = await run(withDouble(['run', 'batch.json', '--out', 'sharded', '--shard', shard, '--quiet']));
      expect(r.code).toBe(0);
      expect(existsSync(join(root, 'sharded/merged'))).toBe(false);
    }
    const m = await run(withDouble(['merge', 'batch.json', '--out', 'sharded', '--quiet']).map((a) => a));
    expect(m.code).toBe(0);
    expect(diffTrees(join(root, 'parallel'), join(root, 'sharded'))).toEqual([]);
  });

  it('refuses to merge while a shard is missing (exit 3, TF_INCOMPLETE_BATCH)', async () => {
    const r1 = await run(withDouble(['run', 'batch.json', '--out', 'half', '--shard', '0/2', '--quiet']));
    expect(r1.code).toBe(0);
    const m = await run(withDouble(['merge', 'batch.json', '--out', 'half']));
    expect(m.code).toBe(3);
    expect(m.stderr.trim().split('\n')).toHaveLength(1);
    expect(m.stderr).toMatch(/^TF_INCOMPLETE_BATCH: merge: 2 of 4 sessions have no finished outputs/);
    expect(existsSync(join(root, 'half/merged'))).toBe(false);
  });
});

describe('tuningfork run killed with SIGKILL', () => {
  it('leaves only complete session folders, and the rerun matches an uninterrupted run byte for byte', async () => {
    const ref = await run(withDouble(['run', 'slow.json', '--out', 'slow-ref', '--jobs', '2', '--quiet']));
    expect(ref.code).toBe(0);
    // Start the same run and kill it once the first session is finished.
    const child = spawn(process.execPath, [BIN, ...withDouble(['run', 'slow.json', '--out', 'slow-killed', '--jobs', '2', '--log-format', 'json'])], { cwd: root, env: cleanEnv(), stdio: ['ignore', 'pipe', 'pipe'] });
    const killedAfter = await new Promise<string>((resolveKill) => {
      let buf = '';
      child.stdout.setEncoding('utf8').on('data', (d: string) => {
        buf += d;
        const done = events(buf.slice(0, buf.lastIndexOf('\n') + 1)).find((e) => e.step === 'batch' && e.session !== null && String(e.message).startsWith('done'));
        if (done !== undefined && child.exitCode === null && !child.killed) {
          child.kill('SIGKILL');
          resolveKill(String(done.session));
        }
      });
    });
    await new Promise((r) => child.on('close', r));
    expect(child.signalCode).toBe('SIGKILL');
    // No merged folder, and every session folder present is complete and equal to the reference.
    const killedDir = join(root, 'slow-killed');
    expect(existsSync(join(killedDir, 'merged'))).toBe(false);
    const finished = readdirSync(join(killedDir, 'sessions'));
    expect(finished).toContain(killedAfter);
    expect(finished.length).toBeLessThan(4);
    // The session processes of the killed run stop themselves: none publishes a session later
    // (each slow session takes 0.5 s; wait for three of them).
    await new Promise((r) => setTimeout(r, 1500));
    expect(readdirSync(join(killedDir, 'sessions')).sort()).toEqual([...finished].sort());
    for (const id of finished) expect(diffTrees(join(root, 'slow-ref/sessions', id), join(killedDir, 'sessions', id))).toEqual([]);
    // Anything half-written can only be in the staging folder.
    for (const f of listFiles(killedDir)) expect(f.startsWith('.staging/') || f.startsWith('sessions/')).toBe(true);

    const rerun = await run(withDouble(['run', 'slow.json', '--out', 'slow-killed', '--jobs', '2', '--log-format', 'json']));
    expect(rerun.code).toBe(0);
    const skipped = events(rerun.stdout).filter((e) => e.message === 'up to date (skipped)').map((e) => e.session);
    expect(skipped.sort()).toEqual([...finished].sort());
    expect(diffTrees(join(root, 'slow-ref'), killedDir)).toEqual([]);
  }, 60_000);

  it('stops the session processes of a killed run before they publish, and the rerun leaves no staging behind', async () => {
    const child = spawn(process.execPath, [BIN, ...withDouble(['run', 'busy.json', '--out', 'busy-killed', '--jobs', '2', '--log-format', 'json'])], { cwd: root, env: cleanEnv(), stdio: ['ignore', 'pipe', 'pipe'] });
    // Kill the run once both sessions are inside their blocking analysis.
    await new Promise<void>((resolveKill) => {
      let buf = '';
      child.stdout.setEncoding('utf8').on('data', (d: string) => {
        buf += d;
        const busy = new Set(events(buf.slice(0, buf.lastIndexOf('\n') + 1)).filter((e) => e.step === 'double' && e.fraction === 1).map((e) => e.session));
        if (busy.size === 2 && child.exitCode === null && !child.killed) {
          child.kill('SIGKILL');
          resolveKill();
        }
      });
    });
    await new Promise((r) => child.on('close', r));
    // The orphaned session processes finish blocking within 1.5 s; give them 3 s to (not) publish.
    await new Promise((r) => setTimeout(r, 3000));
    const dir = join(root, 'busy-killed');
    expect(existsSync(join(dir, 'sessions')) ? readdirSync(join(dir, 'sessions')) : []).toEqual([]);
    const rerun = await run(withDouble(['run', 'busy.json', '--out', 'busy-killed', '--jobs', '2', '--quiet']));
    expect(rerun.code).toBe(0);
    expect(readdirSync(join(dir, 'sessions')).sort()).toEqual(['sim-seed1', 'sim-seed2']);
    expect(existsSync(join(dir, '.staging'))).toBe(false);
  }, 60_000);
});

// Benchmarks of the `tuningfork` command (run against the built packages after `tsc -b`):
// - a batch of 8 simulated 60-minute sessions analysed with --jobs 2 vs --jobs 1 (target: ≤ 0.6×),
//   with the merge timed separately, and a measure of how free the two cores were meanwhile;
// - start-up of `tuningfork --help` (target: ≤ 0.3 s).
// The analysis is the session pipeline (analyzeSession of the tuningfork package) when it exists;
// until then a stand-in written here that runs real stage work per session: signal's
// conditionSite on every photometry site (low-pass, bleaching fits, robust control fit, ΔF/F,
// z-score) and writes per-site fits and a 20 Hz z-scored trace table.
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { writeDemoSession } from '@tuningfork/cli';
import { simulateSession } from '@tuningfork/simulate';
import type { BenchCase, BenchRow } from '../harness.js';

const REPO = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const BIN = join(REPO, 'packages', 'cli', 'dist', 'bin.js');
const N_SESSIONS = 8;
const DURATION_SEC = 3600;

/** The process and its descendants (Linux /proc; just the process elsewhere). */
function processTree(pid: number): number[] {
  const out = [pid];
  for (let k = 0; k < out.length; k++) {
    try {
      const kids = readFileSync(`/proc/${out[k]}/task/${out[k]}/children`, 'utf8').trim();
      if (kids !== '') out.push(...kids.split(/\s+/).map(Number));
    } catch { /* exited, or no /proc */ }
  }
  return out;
}

/**
 * Wall time and peak memory of one command: the sum over the process and its session child
 * processes of each one's peak RSS (VmHWM; threads included).
 */
function timed(args: readonly string[], cwd: string): Promise<{ sec: number; peakMB: number; code: number | null; stderr: string }> {
  return new Promise((resolveRun) => {
    const t0 = process.hrtime.bigint();
    const child = spawn(process.execPath, [BIN, ...args], { cwd, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    const peakKB = new Map<number, number>();
    child.stderr.setEncoding('utf8').on('data', (d: string) => { stderr += d; });
    const poll = setInterval(() => {
      for (const pid of processTree(child.pid!)) {
        try {
          const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
          if (m !== null) peakKB.set(pid, Math.max(peakKB.get(pid) ?? 0, Number(m[1])));
        } catch { /* exited */ }
      }
    }, 100);
    child.on('close', (code) => {
      clearInterval(poll);
      const total = [...peakKB.values()].reduce((a, b) => a + b, 0);
      resolveRun({ sec: Number(process.hrtime.bigint() - t0) / 1e9, peakMB: total / 1024, code, stderr });
    });
  });
}

function median(x: number[]): number {
  const s = [...x].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
}

/** The stand-in pipeline module (absolute file URLs, so it can live in a temporary folder). */
function standInPipeline(dir: string): string {
  const signal = pathToFileURL(join(REPO, 'packages', 'signal', 'dist', 'index.js')).href;
  const core = pathToFileURL(join(REPO, 'packages', 'core', 'dist', 'index.js')).href;
  const file = join(dir, 'conditioning-pipeline.mjs');
  writeFileSync(file, `
import { conditionSite } from ${JSON.stringify(signal)};
import { makeProvenance } from ${JSON.stringify(core)};
export async function analyzeSession(session, options, { onProgress }) {
  const sites = session.photometry;
  const fits = { site: [], slope: new Float64Array(sites.length), intercept: new Float64Array(sites.length), flags: [] };
  const traces = {};
  sites.forEach((site, i) => {
    onProgress('condition', i / sites.length);
    const c = conditionSite(site);
    fits.site.push(site.name);
    fits.slope[i] = c.fit ? c.fit.slope : NaN;
    fits.intercept[i] = c.fit ? c.fit.intercept : NaN;
    fits.flags.push(c.flags.join(';'));
    const step = Math.round(site.signal.sampleRate / 20);
    const z = c.z.signal.values;
    const n = Math.floor(z.length / step);
    if (traces.time === undefined) traces.time = Float64Array.from({ length: n }, (_, k) => site.signal.t0 + (k * step) / site.signal.sampleRate);
    traces[site.name + '_z'] = Float64Array.from({ length: n }, (_, k) => z[k * step]);
  });
  onProgress('condition', 1);
  return { outputs: { sessionId: session.id, tables: { fits: { rows: sites.length, columns: fits }, traces: { rows: traces.time.length, columns: traces } },
    texts: {}, provenance: makeProvenance('benchConditioning', options, options.seed ?? null), warnings: [] } };
}
`);
  return file;
}

/**
 * How much two cores are really free now: the wall time of two concurrent CPU-bound processes
 * relative to one (1.0 on two idle cores; 2.0 when only one core is available because of other
 * load). Reported beside the batch ratio so a loaded machine is not mistaken for overhead.
 */
async function contention(): Promise<number> {
  const spin = ['-e', 'let x = 0; for (let i = 0; i < 2e8; i++) x += Math.sqrt(i); if (x < 0) console.log(x);'];
  const one = (): Promise<number> => new Promise((res) => {
    const t0 = process.hrtime.bigint();
    spawn(process.execPath, spin, { stdio: 'ignore' }).on('close', () => res(Number(process.hrtime.bigint() - t0) / 1e9));
  });
  const single = await one();
  const t0 = process.hrtime.bigint();
  await Promise.all([one(), one()]);
  return Number(process.hrtime.bigint() - t0) / 1e9 / single;
}

async function hasPipeline(): Promise<boolean> {
  try {
    const m = (await import('tuningfork')) as Record<string, unknown>;
    return typeof m.analyzeSession === 'function';
  } catch {
    return false;
  }
}

/** Files of a folder with their bytes, for the serial-vs-parallel identity check. */
function sameTrees(a: string, b: string): boolean {
  const list = (d: string): string[] => readdirSync(d, { recursive: true }).map(String).filter((f) => statSync(join(d, f)).isFile()).sort();
  const fa = list(a);
  const fb = list(b);
  return fa.length === fb.length && fa.every((f, i) => f === fb[i] && readFileSync(join(a, f)).equals(readFileSync(join(b, f))));
}

async function batchCase(): Promise<BenchRow[]> {
  const work = mkdtempSync(join(tmpdir(), 'tf-bench-cli-'));
  try {
    const real = await hasPipeline();
    const pipeline = real ? 'tuningfork' : standInPipeline(work);
    const sessions = [];
    for (let k = 1; k <= N_SESSIONS; k++) {
      const sim = simulateSession({ durationSec: DURATION_SEC, seed: k });
      await writeDemoSession(sim, join(work, `s${k}`), { csv: false, truth: false });
      sessions.push({ manifest: `s${k}/session.json`, animal: `rat${(k % 4) + 1}`, group: k <= N_SESSIONS / 2 ? 'A' : 'B' });
    }
    writeFileSync(join(work, 'batch.json'), JSON.stringify({ seed: 1, sessions }));
    // The real pipeline takes about a minute per 60-minute session: one repetition each then.
    const reps = Number(process.env.TF_BENCH_REPS ?? (real ? 1 : 2));
    const before = await contention();
    const serial: number[] = [];
    const parallel: number[] = [];
    let peakSerial = 0;
    let peakParallel = 0;
    for (let r = 0; r < reps; r++) {
      for (const [jobs, times] of [[1, serial], [2, parallel]] as const) {
        const out = `out-j${jobs}`;
        // --no-merge: the merge is one serial step after the sessions; it is timed on its own below.
        const res = await timed(['run', 'batch.json', '--out', out, '--jobs', String(jobs), '--force', '--no-merge', '--quiet', '--pipeline', pipeline], work);
        if (res.code !== 0) throw new Error(`tuningfork run --jobs ${jobs} failed: ${res.stderr}`);
        times.push(res.sec);
        if (jobs === 1) peakSerial = Math.max(peakSerial, res.peakMB);
        else peakParallel = Math.max(peakParallel, res.peakMB);
      }
    }
    const merge = await timed(['merge', 'batch.json', '--out', 'out-j2', '--quiet', '--pipeline', pipeline], work);
    if (merge.code !== 0) throw new Error(`tuningfork merge failed: ${merge.stderr}`);
    const after = await contention();
    const identical = sameTrees(join(work, 'out-j1', 'sessions'), join(work, 'out-j2', 'sessions'));
    const ms = median(serial);
    const mp = median(parallel);
    const ratio = mp / ms;
    const what = real ? 'session pipeline' : 'stand-in: conditionSite on every site';
    const size = `${N_SESSIONS} sessions × 60 min × 1 kHz × 4 sites + 10 units`;
    return [
      { operation: `cli: batch, --jobs 1 (${what})`, size, medianSec: ms, peakMB: peakSerial, note: `${reps} reps` },
      { operation: 'cli: merge of the 8 sessions', size, medianSec: merge.sec, peakMB: merge.peakMB, note: 'one run; serial step after the sessions' },
      {
        operation: `cli: batch, --jobs 2 (${what})`,
        size,
        medianSec: mp,
        peakMB: peakParallel,
        note: `${ratio <= 0.6 ? 'PASS' : 'FAIL'} ratio ${ratio.toFixed(2)} of serial (target ≤ 0.6); outputs ${identical ? 'byte-identical' : 'DIFFER'} to serial; two CPU-bound processes took ${before.toFixed(2)}× / ${after.toFixed(2)}× one before / after (1.0 = two free cores)`,
      },
    ];
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}

async function helpCase(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  for (const args of [['--help'], ['run', '--help']]) {
    const times: number[] = [];
    let peak = 0;
    for (let i = 0; i < 15; i++) {
      const r = await timed(args, REPO);
      if (r.code !== 0) throw new Error(`tuningfork ${args.join(' ')} failed: ${r.stderr}`);
      if (i >= 2) times.push(r.sec); // two warm-up starts (disk cache)
      peak = Math.max(peak, r.peakMB);
    }
    const m = median(times);
    rows.push({ operation: `cli: start-up, tuningfork ${args.join(' ')}`, size: 'process start to exit', medianSec: m, peakMB: peak, note: `${m <= 0.3 ? 'PASS' : 'FAIL'} (target ≤ 0.3 s)` });
  }
  return rows;
}

export const cases: BenchCase[] = [
  { name: 'cli: start-up (--help)', size: 'process start to exit', custom: helpCase },
  { name: 'cli: batch of 8 × 60-min sessions, --jobs 2 vs --jobs 1', size: '8 × 60 min × 1 kHz × 4 sites', custom: batchCase },
];


// Benchmarks of @tuningfork/io (issue 3). Targets: Arrow IPC read of the 60-minute 1 kHz 4-site
// session's channels (time + 8 channels, 3.6e6 rows) ≤ 0.3 s; CSV read ≥ 50 MB/s with peak RSS
// under 2× the parsed columns' in-memory size, also for a 2 GB file.
// CSV reads run in a fresh child process so its peak RSS is the reader's own (not the setup's).
import { spawnSync } from 'node:child_process';
import { closeSync, mkdtempSync, openSync, rmSync, statSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { readArrow, readTrace, writeArrow, writeCsv } from '@tuningfork/io';
import { simulateSession } from '@tuningfork/simulate';
import type { BenchCase, BenchRow } from '../harness.js';

const repoRoot = fileURLToPath(new URL('../..', import.meta.url));
const workDir = mkdtempSync(join(tmpdir(), 'tf-bench-io-'));
process.on('exit', () => rmSync(workDir, { recursive: true, force: true }));

type Channels = Record<string, Float64Array>;
let cached: Channels | null = null;
/** time + 8 channels (4 sites × signal, control) of the simulator's 60-minute 1 kHz session. */
function sessionChannels(): Channels {
  if (cached) return cached;
  const sim = simulateSession({ durationSec: 3600, photometryRate: 1000, nSites: 4, nUnits: 0, seed: 1 });
  const first = sim.session.photometry[0]!.signal;
  const n = first.values.length;
  const out: Channels = { time: Float64Array.from({ length: n }, (_, i) => first.t0 + i / first.sampleRate) };
  for (const s of sim.session.photometry) {
    out[`${s.name}_signal`] = s.signal.values;
    out[`${s.name}_control`] = s.control.values;
  }
  cached = out;
  return out;
}

/** Write channels as CSV with the time to 3 decimals and channels to `decimals` decimals (an acquisition system's output). */
function writeFixedCsv(path: string, ch: Channels, decimals: number, repeatTo = 0): number {
  const names = Object.keys(ch);
  const cols = names.map((k) => ch[k]!);
  const n = cols[0]!.length;
  // Channel text per row, computed once (reused when the block is repeated to reach repeatTo bytes).
  const rest: string[] = new Array<string>(n);
  for (let i = 0; i < n; i++) {
    let s = '';
    for (let j = 1; j < cols.length; j++) s += ',' + cols[j]![i]!.toFixed(decimals);
    rest[i] = s + '\n';
  }
  const fd = openSync(path, 'w');
  let bytes = 0;
  let buf = names.join(',') + '\n';
  let ms = 0;
  do {
    for (let i = 0; i < n; i++, ms++) {
      const sec = Math.floor(ms / 1000);
      const frac = ms - sec * 1000;
      buf += `${sec}.${frac < 10 ? '00' : frac < 100 ? '0' : ''}${frac}${rest[i]}`;
      if (buf.length > 1 << 23) {
        bytes += writeSync(fd, buf);
        buf = '';
      }
    }
  } while (bytes + buf.length < repeatTo);
  bytes += writeSync(fd, buf);
  closeSync(fd);
  return bytes;
}

interface ChildResult {
  sec: number;
  cpuSec: number;
  rows: number;
  cols: number;
  bytes: number;
  maxRssKB: number;
  baselineRssMB: number;
}

/** Read a CSV with readCsv in a fresh Node process and return its timing and peak RSS. */
function readInChild(path: string): ChildResult {
  const script = `
    import { readCsv } from '@tuningfork/io';
    const baselineRssMB = process.memoryUsage().rss / 1e6;
    const c0 = process.cpuUsage();
    const t0 = process.hrtime.bigint();
    const t = await readCsv(process.argv[1]);
    const sec = Number(process.hrtime.bigint() - t0) / 1e9;
    const cu = process.cpuUsage(c0);
    const cpuSec = (cu.user + cu.system) / 1e6;
    const cols = Object.keys(t.columns).length;
    console.log(JSON.stringify({ sec, cpuSec, rows: t.rows, cols, bytes: t.bytes, maxRssKB: process.resourceUsage().maxRSS, baselineRssMB }));`;
  const r = spawnSync(process.execPath, ['--input-type=module', '-e', script, path], { cwd: repoRoot, encoding: 'utf8', maxBuffer: 1 << 20 });
  if (r.status !== 0) throw new Error(`child readCsv failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as ChildResult;
}

function csvRow(operation: string, size: string, runs: ChildResult[]): BenchRow {
  const secs = runs.map((r) => r.sec).sort((a, b) => a - b);
  const med = secs[(secs.length - 1) >> 1]!;
  const r = runs[0]!;
  const mbps = r.bytes / 1e6 / med;
  const cpus = runs.map((x) => x.cpuSec).sort((a, b) => a - b);
  const cpuMbps = r.bytes / 1e6 / cpus[(cpus.length - 1) >> 1]!;
  const colBytes = r.rows * r.cols * 8;
  const peak = Math.max(...runs.map((x) => x.maxRssKB)) * 1024;
  const ratio = peak / colBytes;
  return {
    operation,
    size,
    medianSec: med,
    peakMB: peak / 1e6,
    note: `${mbps.toFixed(0)} MB/s wall (target ≥ 50: ${mbps >= 50 ? 'PASS' : 'FAIL'}), ${cpuMbps.toFixed(0)} MB per CPU-second; peak RSS ${(peak / 1e6).toFixed(0)} MB = ${ratio.toFixed(2)}× the parsed columns (${(colBytes / 1e6).toFixed(0)} MB; target < 2×: ${ratio < 2 ? 'PASS' : 'FAIL'}); RSS before reading ${r.baselineRssMB.toFixed(0)} MB; ${runs.length} run(s), child process`,
  };
}

let arrowPath: string | null = null;
async function sessionArrow(): Promise<string> {
  if (arrowPath) return arrowPath;
  const p = join(workDir, 'session.arrow');
  await writeArrow(p, sessionChannels(), { format: 'file' });
  arrowPath = p;
  return p;
}

export const cases: BenchCase[] = [
  {
    name: 'io: Arrow IPC read, session channels',
    size: 'time + 8 channels × 3.6e6 rows (60 min @ 1 kHz, 4 sites; 259 MB)',
    custom: async () => {
      const path = await sessionArrow();
      const wall: number[] = [];
      const cpu: number[] = [];
      let sink = 0;
      for (let rep = 0; rep < 9; rep++) {
        const c0 = process.cpuUsage();
        const t0 = process.hrtime.bigint();
        const t = await readArrow(path);
        wall.push(Number(process.hrtime.bigint() - t0) / 1e9);
        const cu = process.cpuUsage(c0);
        cpu.push((cu.user + cu.system) / 1e6);
        sink += t.columns.time![t.rows - 1]! + t.rows;
      }
      const med = (a: number[]) => a.sort((x, y) => x - y)[(a.length - 1) >> 1]!;
      const w = med(wall);
      return [{
        operation: 'io: Arrow IPC read, session channels',
        size: 'time + 8 channels × 3.6e6 rows (60 min @ 1 kHz, 4 sites; 259 MB)',
        medianSec: w,
        note: `${w <= 0.3 ? 'PASS' : 'FAIL'} (target ≤ 0.3 s); CPU ${med(cpu).toFixed(3)} s (user + system, median of 9)${sink > 0 ? '' : '!'}`,
      }];
    },
  },
  {
    name: 'io: readTrace from Arrow (uniform-grid check)',
    size: 'time + 8 channels × 3.6e6 rows',
    setup: sessionArrow,
    run: async (path: string) => {
      const tr = await readTrace(path);
      return tr.sampling === 'uniform' ? tr.sampleRate : 0;
    },
    reps: 3,
  },
  {
    name: 'io: CSV read, 60 min session',
    size: 'time + 8 channels × 3.6e6 rows',
    custom: async () => {
      const ch = sessionChannels();
      const shortest = join(workDir, 'session-shortest.csv');
      await writeCsv(shortest, ch);
      const fixed = join(workDir, 'session-6dp.csv');
      writeFixedCsv(fixed, ch, 6);
      const sizeOf = (p: string) => `${(statSync(p).size / 1e6).toFixed(0)} MB`;
      const rows = [
        csvRow('io: CSV read, 60 min session, shortest round-trip digits', `3.6e6 rows × 9 cols, ${sizeOf(shortest)}`, [0, 1, 2].map(() => readInChild(shortest))),
        csvRow('io: CSV read, 60 min session, 6 decimals', `3.6e6 rows × 9 cols, ${sizeOf(fixed)}`, [0, 1, 2].map(() => readInChild(fixed))),
      ];
      rmSync(shortest);
      rmSync(fixed);
      return rows;
    },
  },
  {
    name: 'io: CSV read, 2 GB file',
    size: '2 GB',
    custom: () => {
      // The session's first 10 minutes (6 decimals), repeated with a running clock until ≥ 2 GB.
      const ch = sessionChannels();
      const block: Channels = {};
      for (const [k, v] of Object.entries(ch)) block[k] = v.subarray(0, 600_000);
      const path = join(workDir, 'big.csv');
      const bytes = writeFixedCsv(path, block, 6, 2e9);
      try {
        const r = readInChild(path);
        return [csvRow('io: CSV read, 2 GB file (one run)', `${r.rows.toExponential(2)} rows × 9 cols, ${(bytes / 1e9).toFixed(2)} GB`, [r])];
      } finally {
        rmSync(path);
      }
    },
  },
];

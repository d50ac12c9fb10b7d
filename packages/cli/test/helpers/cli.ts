// Helpers of the cli tests: run the built `tuningfork` binary as a user would, make small
// simulated sessions with its own `demo` command, and compare output folders byte for byte.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
/** Repository root. */
export const REPO = resolve(here, '../../../..');
/** The built command. */
export const BIN = join(REPO, 'packages/cli/dist/bin.js');
/** The test double of the session pipeline (test/fixtures/pipeline-double.mjs). */
export const DOUBLE = join(REPO, 'packages/cli/test/fixtures/pipeline-double.mjs');

/** Build the cli (and what it depends on) when its dist/ is missing. */
export function ensureBuilt(): void {
  if (existsSync(BIN)) return;
  const r = spawnSync('npx', ['tsc', '-b', 'packages/cli'], { cwd: REPO, encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`npx tsc -b packages/cli failed:\n${r.stdout}\n${r.stderr}`);
}

/** Result of one command. */
export interface CliResult {
  readonly code: number | null;
  readonly signal: NodeJS.Signals | null;
  readonly stdout: string;
  readonly stderr: string;
}

/** Run `tuningfork <args>` in `cwd` and wait for it. */
export function runCli(args: readonly string[], cwd: string, env: Readonly<Record<string, string>> = {}): Promise<CliResult> {
  return new Promise((resolvePromise, reject) => {
    const child = spawn(process.execPath, [BIN, ...args], { cwd, env: cleanEnv(env), stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => { stdout += d; });
    child.stderr.setEncoding('utf8').on('data', (d: string) => { stderr += d; });
    child.on('error', reject);
    child.on('close', (code, signal) => resolvePromise({ code, signal, stdout, stderr }));
  });
}

/** The environment of a child: ours without Slurm array variables (tests set them explicitly). */
export function cleanEnv(extra: Readonly<Record<string, string>> = {}): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!k.startsWith('SLURM_') && !k.startsWith('VITEST') && k !== 'NODE_OPTIONS') env[k] = v;
  return { ...env, ...extra };
}

/** A fresh temporary folder; remove it with rmSync when done. */
export function tempDir(prefix: string): string {
  return mkdtempSync(join(tmpdir(), `tf-cli-${prefix}-`));
}

/** Every file under `dir`, relative, sorted. */
export function listFiles(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string): void => {
    for (const name of readdirSync(d)) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p);
      else out.push(relative(dir, p));
    }
  };
  if (existsSync(dir)) walk(dir);
  return out.sort();
}

/**
 * Differences between two folders: files present in only one, or with different bytes.
 * Empty when the folders are identical.
 */
export function diffTrees(a: string, b: string): string[] {
  const fa = listFiles(a);
  const fb = listFiles(b);
  const diffs: string[] = [];
  const sb = new Set(fb);
  for (const f of fa) {
    if (!sb.has(f)) diffs.push(`only in ${a}: ${f}`);
    else if (!readFileSync(join(a, f)).equals(readFileSync(join(b, f)))) diffs.push(`differs: ${f}`);
  }
  const sa = new Set(fa);
  for (const f of fb) if (!sa.has(f)) diffs.push(`only in ${b}: ${f}`);
  return diffs;
}

/**
 * Make `n` short simulated sessions with the cli's demo command (`data/s<k>/input/session.json`,
 * session ids `sim-seed<k>`) and a batch manifest `batch.json` listing them in scrambled order
 * with animal and group labels and the given shared options.
 */
export async function makeBatch(root: string, n: number, options: Record<string, unknown> = {}): Promise<string> {
  const runs = [];
  for (let k = 1; k <= n; k++) {
    runs.push(runCli(['demo', '--no-analysis', '--quiet', '--duration', '30', '--sites', '1', '--units', '2', '--seed', String(k), '--out', `data/s${k}`], root));
  }
  for (const r of await Promise.all(runs)) if (r.code !== 0) throw new Error(`demo failed: ${r.stderr}`);
  const order = Array.from({ length: n }, (_, i) => i + 1).sort((x, y) => ((x * 7) % n) - ((y * 7) % n));
  writeBatch(root, 'batch.json', order, options);
  return join(root, 'batch.json');
}

/** Write a batch manifest over sessions `data/s<k>` (k in `order`), animals by parity, groups by half. */
export function writeBatch(root: string, name: string, order: readonly number[], options: Record<string, unknown>, extra: Record<number, Record<string, unknown>> = {}): void {
  const sessions = order.map((k) => ({
    manifest: `data/s${k}/input/session.json`,
    animal: k % 2 === 0 ? 'ratB' : 'ratA',
    group: k <= 2 ? 'DMS' : 'NAc',
    ...(extra[k] ?? {}),
  }));
  writeFileSync(join(root, name), `${JSON.stringify({ seed: 7, options, sessions }, null, 2)}\n`);
}

/** Remove a folder tree (test clean-up). */
export function removeTree(dir: string): void {
  rmSync(dir, { recursive: true, force: true });
}

/** True when text holds a JavaScript stack trace line. */
export function hasStackTrace(text: string): boolean {
  return /^\s+at .+(\(|:\d+:\d+)/m.test(text);
}

// Runs the agents of a recovery study serially or split across worker threads. The split is
// contiguous and every agent's randomness is its own stream, so results are identical to serial.
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { ResultWarning } from '@tuningfork/core';
import { runAgent } from './recovery-agents.js';
import type { AgentResult, RecoveryTask } from './recovery-agents.js';

export interface RunOutcome {
  readonly results: AgentResult[];
  readonly workersUsed: number;
  readonly warnings: ResultWarning[];
}

function runSerial(task: RecoveryTask, from: number, to: number): AgentResult[] {
  const out: AgentResult[] = [];
  for (let i = from; i < to; i++) out.push(runAgent(task, i));
  return out;
}

/** file: URL of tsx's ESM register API (dev-only path: sources run through tsx). */
function tsxEsmApi(): string {
  const pkgPath = createRequire(import.meta.url).resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as { exports: Record<string, { import: { default: string } }> };
  return pathToFileURL(join(dirname(pkgPath), pkg.exports['./esm/api']!.import.default)).href;
}

function spawn(task: RecoveryTask, from: number, to: number): Promise<AgentResult[]> {
  const js = new URL('./recovery-worker.js', import.meta.url);
  let worker: Worker;
  if (existsSync(fileURLToPath(js))) {
    worker = new Worker(js, { workerData: { task, from, to } });
  } else {
    const ts = new URL('./recovery-worker.ts', import.meta.url);
    const loader = tsxEsmApi();
    const execArgv = process.execArgv.includes('--conditions=@tuningfork/source') ? process.execArgv : [...process.execArgv, '--conditions=@tuningfork/source'];
    // Running from TypeScript sources: source-bootstrap.cjs registers tsx in the worker, then imports the .ts entry.
    worker = new Worker(new URL('./source-bootstrap.cjs', import.meta.url), { execArgv, workerData: { task, from, to, loader, entry: ts.href } });
  }
  return new Promise((resolve, reject) => {
    worker.once('message', (m: AgentResult[]) => {
      resolve(m);
      void worker.terminate();
    });
    worker.once('error', reject);
    worker.once('exit', (code) => {
      if (code !== 0) reject(new Error(`recovery worker exited with code ${code}`));
    });
  });
}

/** Run agents 0 … nAgents − 1 on up to `workers` threads (1 = this thread). */
export async function runAgents(fn: string, task: RecoveryTask, nAgents: number, workers: number): Promise<RunOutcome> {
  const w = Math.min(workers, nAgents);
  if (w <= 1) return { results: runSerial(task, 0, nAgents), workersUsed: 1, warnings: [] };
  const bounds: number[] = [];
  for (let c = 0; c <= w; c++) bounds.push(Math.round((c * nAgents) / w));
  const warnings: ResultWarning[] = [];
  let failed = 0;
  const chunks = await Promise.all(
    bounds.slice(0, -1).map(async (from, c) => {
      const to = bounds[c + 1]!;
      try {
        return await spawn(task, from, to);
      } catch (e) {
        failed++;
        if (failed === 1) {
          warnings.push({
            code: 'workers-unavailable',
            message: `${fn}: a worker thread could not run (${e instanceof Error ? e.message : String(e)}); its agents were computed on the main thread (results are identical, only slower).`,
          });
        }
        return runSerial(task, from, to);
      }
    }),
  );
  return { results: chunks.flat(), workersUsed: w - failed, warnings };
}

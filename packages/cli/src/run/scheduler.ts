import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { errorLine } from '../errors.js';
import { TuningforkError } from '@tuningfork/core';
import type { JobEvent, SessionJob, SessionResult } from './job-types.js';

/** Messages from a worker thread. */
export type WorkerMessage =
  | { readonly type: 'event'; readonly event: JobEvent }
  | { readonly type: 'result'; readonly result: SessionResult };

/** Options of runJobs. */
export interface RunJobsOptions {
  /** Number of sessions analysed at once; 1 runs them one after another in this thread. */
  readonly jobs: number;
  /** Receives progress and log events of every session. */
  readonly onEvent: (event: JobEvent) => void;
  /** Called when a session ends (done, skipped or failed). */
  readonly onResult: (result: SessionResult) => void;
  /** Aborting terminates the workers; sessions not finished are reported as failed. */
  readonly signal?: AbortSignal;
}

function crashed(job: SessionJob, why: string): SessionResult {
  const err = new TuningforkError('TF_INTERNAL', `the worker analysing session '${job.id}' stopped: ${why}`);
  return { id: job.id, status: 'failed', phase: 'analyse', code: err.code, line: errorLine(err), warnings: 0, tables: [], seconds: 0 };
}

/**
 * Run session jobs, serially in this thread (jobs = 1) or over `jobs` worker threads, and return
 * the results in job order. Each session is processed by the same function either way and its
 * seed is fixed in the job, so outputs do not depend on `jobs` or on the order sessions finish.
 */
export async function runJobs(list: readonly SessionJob[], options: RunJobsOptions): Promise<SessionResult[]> {
  const results = new Map<string, SessionResult>();
  const nWorkers = Math.max(1, Math.min(options.jobs, list.length));
  if (nWorkers === 1) {
    const { processSession } = await import('./process-session.js');
    for (const job of list) {
      if (options.signal?.aborted === true) break;
      const r = await processSession(job, options.onEvent);
      results.set(job.id, r);
      options.onResult(r);
    }
    return list.flatMap((j) => results.get(j.id) ?? []);
  }

  const queue = [...list];
  const workerUrl = new URL('./worker.js', import.meta.url);
  const workers = new Set<Worker>();
  await new Promise<void>((resolveAll) => {
    let running = 0;
    const finish = () => {
      if (running === 0 && (queue.length === 0 || options.signal?.aborted === true)) resolveAll();
    };
    const startWorker = () => {
      // Each session worker gets its share of the cores for the threads a stage starts inside it
      // (e.g. encode's Poisson GLM); the share changes timing only, never numbers.
      const share = Math.max(1, Math.floor(availableParallelism() / nWorkers));
      const w = new Worker(workerUrl, { env: { ...process.env, TUNINGFORK_THREADS: String(share) } });
      workers.add(w);
      let current: SessionJob | null = null;
      const next = () => {
        const job = options.signal?.aborted === true ? undefined : queue.shift();
        if (job === undefined) {
          workers.delete(w);
          void w.terminate();
          finish();
          return;
        }
        current = job;
        running++;
        w.postMessage({ job });
      };
      w.on('message', (msg: WorkerMessage) => {
        if (msg.type === 'event') {
          options.onEvent(msg.event);
          return;
        }
        results.set(msg.result.id, msg.result);
        options.onResult(msg.result);
        current = null;
        running--;
        next();
      });
      w.on('error', (e) => {
        if (current !== null) {
          const r = crashed(current, e instanceof Error ? e.message : String(e));
          results.set(current.id, r);
          options.onResult(r);
          current = null;
          running--;
        }
        workers.delete(w);
        if (queue.length > 0 && options.signal?.aborted !== true) startWorker();
        else finish();
      });
      w.on('exit', (code) => {
        if (current !== null) {
          const r = crashed(current, `exit code ${code}`);
          results.set(current.id, r);
          options.onResult(r);
          current = null;
          running--;
          workers.delete(w);
          if (queue.length > 0 && options.signal?.aborted !== true) startWorker();
          else finish();
        }
      });
      next();
    };
    options.signal?.addEventListener('abort', () => {
      for (const w of workers) void w.terminate();
    }, { once: true });
    for (let i = 0; i < nWorkers; i++) startWorker();
  });
  return list.flatMap((j) => results.get(j.id) ?? []);
}

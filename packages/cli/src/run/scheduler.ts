import { fork } from 'node:child_process';
import type { ChildProcess } from 'node:child_process';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { errorLine } from '../errors.js';
import { OWNER_PID_ENV } from '../output/staging.js';
import { TuningforkError } from '@tuningfork/core';
import type { JobEvent, SessionJob, SessionResult } from './job-types.js';

/** Messages from a session process. */
export type SessionMessage =
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
  /** Aborting kills the session processes; sessions not finished are reported as failed. */
  readonly signal?: AbortSignal;
}

/**
 * V8 flags of a session process. With one core to itself (the other cores run other sessions),
 * V8's background threads (concurrent marking, parallel scavenges, concurrent compilation) only
 * compete with the other sessions for cores, so the process runs V8 single-threaded: 2 sessions
 * side by side on 2 cores took 20.0 s against 23.1 s with background threads (60-min sessions).
 */
function sessionProcessFlags(coreShare: number): string[] {
  return coreShare === 1 ? ['--single-threaded'] : [];
}

function crashed(job: SessionJob, why: string): SessionResult {
  const err = new TuningforkError('TF_INTERNAL', `the process analysing session '${job.id}' stopped: ${why}`);
  return { id: job.id, status: 'failed', phase: 'analyse', code: err.code, line: errorLine(err), warnings: 0, tables: [], seconds: 0 };
}

/**
 * Run session jobs, serially in this thread (jobs = 1) or over `jobs` child processes, and return
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
  const entry = fileURLToPath(new URL('./session-process.js', import.meta.url));
  // Each session process gets its share of the cores for the threads a stage starts inside it
  // (e.g. encode's Poisson GLM); the share changes timing only, never numbers.
  const share = Math.max(1, Math.floor(availableParallelism() / nWorkers));
  const children = new Set<ChildProcess>();
  await new Promise<void>((resolveAll) => {
    let running = 0;
    const finish = () => {
      if (running === 0 && (queue.length === 0 || options.signal?.aborted === true)) resolveAll();
    };
    const startChild = () => {
      const child = fork(entry, [], {
        execArgv: [...process.execArgv, ...sessionProcessFlags(share)],
        env: { ...process.env, TUNINGFORK_THREADS: String(share), [OWNER_PID_ENV]: String(process.pid) },
        serialization: 'advanced',
        stdio: ['ignore', 'inherit', 'inherit', 'ipc'],
      });
      children.add(child);
      let current: SessionJob | null = null;
      let gone = false;
      const next = () => {
        const job = options.signal?.aborted === true ? undefined : queue.shift();
        if (job === undefined) {
          children.delete(child);
          if (child.connected) child.disconnect(); // the child exits on disconnect
          finish();
          return;
        }
        current = job;
        running++;
        child.send({ job });
      };
      const lost = (why: string) => {
        if (gone) return;
        gone = true;
        children.delete(child);
        if (current !== null) {
          const r = crashed(current, why);
          results.set(current.id, r);
          options.onResult(r);
          current = null;
          running--;
          if (queue.length > 0 && options.signal?.aborted !== true) startChild();
        }
        finish();
      };
      child.on('message', (msg: SessionMessage) => {
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
      child.on('error', (e) => lost(e.message));
      child.on('exit', (code, sig) => lost(sig !== null ? `signal ${sig}` : `exit code ${code}`));
      next();
    };
    options.signal?.addEventListener('abort', () => {
      for (const c of children) c.kill();
    }, { once: true });
    for (let i = 0; i < nWorkers; i++) startChild();
  });
  return list.flatMap((j) => results.get(j.id) ?? []);
}

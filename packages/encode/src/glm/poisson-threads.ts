// Internal: runs the units of poissonGLMCV on this thread and, for large problems, on worker
// threads too, synchronously (the public function stays synchronous). Units are dealt out in
// turn (unit i to thread i mod w, which balances units of unequal cost); a worker receives the context and its units, fits them with the same code
// (fitUnit) and posts the fits through a MessagePort, then sets a shared flag that this thread
// waits on with Atomics.wait; the message is read with receiveMessageOnPort. Each unit's fit is
// deterministic and independent of the others, so results are identical for any thread count.
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { MessageChannel, Worker, receiveMessageOnPort } from 'node:worker_threads';
import type { MessagePort } from 'node:worker_threads';
import { TuningforkError, threadBudget } from '@tuningfork/core';
import type { ErrorCode, ResultWarning } from '@tuningfork/core';
import { fitUnit, unitCounts } from './poisson-unit.js';
import type { GlmContext, UnitInput } from './poisson-unit.js';
import type { PoissonCellFit } from './poisson-glm-cv.js';

/** Flag states shared with a worker. */
export const FLAG_STARTED = 1;
export const FLAG_DONE = 2;
export const FLAG_FAILED = 3;

/** Design non-zeros × units below which auto mode stays on one thread (worker start-up ≈ 0.1–0.3 s). */
const AUTO_MIN_WORK = 5e6;
/** Seconds to wait for a worker to start before its units are fitted here instead. */
const START_TIMEOUT_SEC = 60;

/** What a worker receives. */
export interface GlmWorkerData {
  readonly ctx: GlmContext;
  readonly units: readonly UnitInput[];
  /** Index of each unit in the call (names default to unit<index>). */
  readonly indices: readonly number[];
  readonly port: MessagePort;
  readonly flag: Int32Array;
  readonly loader?: string;
  readonly entry?: string;
}

/** What a worker posts: the fits, or the error it met. */
export type GlmWorkerReply = { readonly fits: PoissonCellFit[] } | { readonly error: { code?: string; message: string; details?: unknown } };

/** file: URL of tsx's ESM register API (used only when running from TypeScript sources). */
function tsxEsmApi(): string {
  const pkgPath = createRequire(import.meta.url).resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as { exports: Record<string, { import: { default: string } }> };
  return pathToFileURL(join(dirname(pkgPath), pkg.exports['./esm/api']!.import.default)).href;
}

interface Running {
  readonly worker: Worker;
  readonly port: MessagePort;
  readonly flag: Int32Array;
  readonly t0: number;
}

function spawn(ctx: GlmContext, units: readonly UnitInput[], indices: readonly number[]): Running {
  const flag = new Int32Array(new SharedArrayBuffer(4));
  const { port1, port2 } = new MessageChannel();
  const chunk = indices.map((ui) => {
    const u = units[ui]!;
    return { ...(typeof u?.name === 'string' ? { name: u.name } : {}), values: u.values };
  });
  const base = { ctx, units: chunk, indices, port: port2, flag };
  const js = new URL('./poisson-worker.js', import.meta.url);
  let worker: Worker;
  if (existsSync(fileURLToPath(js))) {
    worker = new Worker(js, { workerData: base, transferList: [port2] });
  } else {
    // Running from TypeScript sources (tests, tsx): source-bootstrap.cjs registers tsx in the worker, then imports the .ts entry.
    const entry = new URL('./poisson-worker.ts', import.meta.url).href;
    const execArgv = process.execArgv.includes('--conditions=@tuningfork/source') ? process.execArgv : [...process.execArgv, '--conditions=@tuningfork/source'];
    worker = new Worker(new URL('../internal/source-bootstrap.cjs', import.meta.url), { execArgv, workerData: { ...base, loader: tsxEsmApi(), entry }, transferList: [port2] });
  }
  worker.unref();
  worker.on('error', () => { /* reported through the flag or the start timeout */ });
  return { worker, port: port1, flag, t0: performance.now() };
}

/** Block until the worker is done; its fits, or null when it never started. */
function collect(r: Running): PoissonCellFit[] | null {
  for (;;) {
    const state = Atomics.load(r.flag, 0);
    if (state === FLAG_DONE || state === FLAG_FAILED) break;
    if (state === 0 && performance.now() - r.t0 > START_TIMEOUT_SEC * 1000) return null;
    Atomics.wait(r.flag, 0, state, 200);
  }
  const m = receiveMessageOnPort(r.port)?.message as GlmWorkerReply | undefined;
  r.port.close();
  void r.worker.terminate();
  if (!m) return null;
  if ('error' in m) {
    const e = m.error;
    if (e.code) throw new TuningforkError(e.code as ErrorCode, e.message, (e.details ?? {}) as Record<string, unknown>);
    throw new Error(e.message);
  }
  return m.fits;
}

/** Fit every unit, on up to `threads` threads (0 = auto). */
export function runUnits(ctx: GlmContext, units: readonly UnitInput[], threads: number): { cells: PoissonCellFit[]; warnings: ResultWarning[] } {
  const U = units.length;
  const nnz = ctx.design.rowPtr[ctx.design.nRows]!;
  // Auto: core's threadBudget (cores, or the budget a parent process set). Thread count never
  // changes results.
  const auto = threadBudget();
  let w = threads > 0 ? threads : nnz * U >= AUTO_MIN_WORK ? auto : 1;
  w = Math.max(1, Math.min(w, U));
  if (w === 1) return { cells: units.map((u, ui) => fitUnit(ctx, u, ui)), warnings: [] };
  // Validate every unit first, so a bad count throws the same error as on one thread.
  units.forEach((u, ui) => unitCounts(ctx, u, ui));
  const share = Array.from({ length: w }, (_, c) => {
    const idx: number[] = [];
    for (let ui = c; ui < U; ui += w) idx.push(ui);
    return idx;
  });
  const running: (Running | null)[] = [];
  const warnings: ResultWarning[] = [];
  let reason = '';
  for (let c = 1; c < w; c++) {
    try {
      running.push(spawn(ctx, units, share[c]!));
    } catch (e) {
      reason = e instanceof Error ? e.message : String(e);
      running.push(null);
    }
  }
  const cells = new Array<PoissonCellFit>(U);
  try {
    for (const ui of share[0]!) cells[ui] = fitUnit(ctx, units[ui]!, ui);
    running.forEach((r, c) => {
      const idx = share[c + 1]!;
      const fits = r ? collect(r) : null;
      if (fits) idx.forEach((ui, k) => { cells[ui] = fits[k]!; });
      else {
        if (!reason) reason = `no reply within ${START_TIMEOUT_SEC} s`;
        for (const ui of idx) cells[ui] = fitUnit(ctx, units[ui]!, ui);
      }
    });
  } finally {
    for (const r of running) if (r) void r.worker.terminate();
  }
  if (reason) {
    warnings.push({
      code: 'workers-unavailable',
      message: `${ctx.fn}: a worker thread could not run (${reason}); its units were fitted on the main thread (results are identical, only slower).`,
      details: { threads: w },
    });
  }
  return { cells, warnings };
}

/**
 * Column blocks of one or more products W·Y, delivered in column order to the per-bin code of
 * the time-course engine. Three ways to compute them, all giving the same bits:
 *
 * - 'js': `weightedBlock` (count-plan.ts) on the main thread;
 * - 'simd': the WebAssembly SIMD kernel (simd-kernel.ts) on the main thread;
 * - 'simd' with threads > 1: the same kernel on the main thread and on worker threads sharing the
 *   WebAssembly memory. Every thread claims blocks from one atomic counter into a ring of output
 *   slots, so threads run ahead of the main thread's in-order consumption; the main thread
 *   computes the next unclaimed block whenever the one it needs is not ready, and blocks with
 *   Atomics.wait only when no block is left to claim.
 *   A block is the same function of the same inputs whichever thread computes it, so results do
 *   not depend on the number of threads or on scheduling.
 *
 * The trailing partial block (fewer than 4 columns) always uses the JS kernel. Workers are
 * started once per process (unref'd, so they never keep it alive) from a small inline script
 * that needs nothing but the compiled module, so the same code runs from dist/ and from the
 * TypeScript sources. A worker claims blocks only after it has instantiated the kernel, and its
 * code cannot throw after that, so a claimed block is always completed (a worker killed from
 * outside in the middle of a block would leave the calling thread waiting).
 */
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import type { ResultWarning } from '@tuningfork/core';
import { BLOCK, makeTable, weightedBlock } from './count-plan.js';
import type { CountPlan } from './count-plan.js';
import { instantiate, makeWasmProduct, runArgs, wasmModule } from './simd-kernel.js';
import type { RunFn, WasmProduct } from './simd-kernel.js';
import { warn } from './validate.js';

/** One product: plan × y, written block by block into `out` (4·R values, column-major). */
export interface ProductSpec {
  readonly plan: CountPlan;
  readonly y: Float64Array;
  readonly out: Float64Array;
}

export type KernelChoice = 'auto' | 'js' | 'simd';

export interface BlockSource {
  /** Fill every product's `out` with the block of columns [c0, c0 + width); c0 advances by 4. */
  fill(c0: number, width: number): void;
  /** Call once after the last block (also on error): releases the workers from this job. */
  close(): void;
  /** Warnings about the compute path (e.g. workers that could not start). */
  readonly warnings: ResultWarning[];
}

/** Below this many table lookups (R · groups · columns, summed over products) 'auto' uses JS. */
const MIN_SIMD_WORK = 4_000_000;
/** Below this many, 'auto' stays on the main thread (a worker hand-off costs ~0.1 ms). */
const MIN_THREAD_WORK = 100_000_000;
/** Output slots per product: how far workers may run ahead. */
const SLOTS = 32;
/** Poll interval of waits on other threads (ms). */
const WAIT_MS = 0.2;
/** How long the calling thread waits for a block a worker holds before computing it itself (ms). */
const RESCUE_MS = 2;

function lookups(products: readonly ProductSpec[], cols: number): number {
  let w = 0;
  for (const p of products) w += p.plan.resamples * p.plan.groups * cols;
  return w;
}

/**
 * A block source for `products` over a matrix of `cols` columns. `kernel: 'auto'` picks JS for
 * small work and SIMD otherwise; `threads` (≥ 1) is the number of threads computing blocks,
 * the calling one included, used only with SIMD and large work.
 */
export function makeBlockSource(fn: string, products: readonly ProductSpec[], cols: number, kernel: KernelChoice, threads: number): BlockSource {
  const warnings: ResultWarning[] = [];
  const tables = products.map((p) => ({ table: null as Float64Array | null, p }));
  const jsFill = (k: number, c0: number, width: number) => {
    const t = tables[k]!;
    t.table ??= makeTable(t.p.plan.groups);
    weightedBlock(t.p.plan, t.p.y, cols, c0, width, t.table, t.p.out);
  };
  const work = lookups(products, cols);
  const useSimd = cols >= BLOCK && wasmModule() !== null && (kernel === 'simd' || (kernel === 'auto' && work >= MIN_SIMD_WORK));
  if (!useSimd) {
    return { warnings, fill: (c0, width) => { for (let k = 0; k < products.length; k++) jsFill(k, c0, width); }, close: () => {} };
  }
  const nFull = Math.floor(cols / BLOCK);
  let workers = Math.max(0, Math.min(threads, availableParallelism()) - 1);
  if (kernel === 'auto' && work < MIN_THREAD_WORK) workers = 0;
  if (nFull < 2) workers = 0;
  let pool: Worker[] = [];
  if (workers > 0) {
    const started = workerPool(workers);
    if (started.error) {
      warnings.push(warn('single-thread', `${fn}: worker threads could not start (${started.error}); the bootstrap product ran on the main thread only (same results, slower).`, { threads }));
    }
    pool = started.workers;
  }
  const slots = pool.length > 0 ? SLOTS : 1;
  const nSlots = pool.length > 0 ? slots + 1 : 1; // + the calling thread's own slot
  const wasm: WasmProduct[] = [];
  for (const [k, p] of products.entries()) {
    const w = makeWasmProduct(p.plan, p.y, cols, pool.length + 1, nSlots, k);
    if (w === null) {
      return { warnings, fill: (c0, width) => { for (let k = 0; k < products.length; k++) jsFill(k, c0, width); }, close: () => {} };
    }
    wasm.push(w);
  }
  const runs: RunFn[] = wasm.map(instantiate);
  const views = wasm.map((w) => Array.from({ length: nSlots }, (_, s) => new Float64Array(w.memory.buffer, w.slotPtr + s * w.slotBytes, w.slotBytes / 8)));
  const compute = (thread: number, slot: number, block: number) => {
    for (let k = 0; k < wasm.length; k++) runs[k]!(...runArgs(wasm[k]!, thread, slot, block * BLOCK));
  };
  const deliver = (slot: number) => {
    for (let k = 0; k < products.length; k++) {
      const v = views[k]![slot]!;
      const out = products[k]!.out;
      const R = products[k]!.plan.resamples;
      for (let b = 0, q = 0; b < R; b++, q += 4) {
        out[b] = v[q]!; out[R + b] = v[q + 1]!; out[2 * R + b] = v[q + 2]!; out[3 * R + b] = v[q + 3]!;
      }
    }
  };
  if (pool.length === 0) {
    return {
      warnings,
      fill: (c0, width) => {
        if (width < BLOCK) { for (let k = 0; k < products.length; k++) jsFill(k, c0, width); return; }
        compute(0, 0, c0 / BLOCK);
        deliver(0);
      },
      close: () => {},
    };
  }
  // Shared control words: [0] next block to claim, [1] blocks consumed by the calling thread,
  // [2] workers inside the claim loop, [3] job closed, [4 + s] = block + 1 once the block that
  // last went to ring slot s is written there (or was consumed without it, see below).
  const control = new Int32Array(new SharedArrayBuffer(4 * (4 + slots)));
  const job = {
    module: wasmModule(), control: control.buffer, slots, nBlocks: nFull,
    products: wasm.map((w) => ({ memory: w.memory, args: runArgs(w, 0, 0, 0), tabPtr: w.tabPtr, slotPtr: w.slotPtr, slotBytes: w.slotBytes })),
  };
  pool.forEach((worker, i) => worker.postMessage({ ...job, thread: i + 1 }));
  // The calling thread claims blocks from the same counter as the workers, into the same ring
  // (so it shares the work instead of waiting for it): while the block it needs next is not
  // ready, it computes the next unclaimed block whose ring slot is free. When a worker holds the
  // needed block longer than RESCUE_MS (a worker descheduled on a loaded machine) it computes a
  // second copy in a private slot (index `slots`). Both copies are the same bits; the worker's
  // late copy lands in its ring slot, which is not reused before it is written.
  const own = slots;
  const slotFree = (b: number, consumed: number) => b < consumed + slots && (b < slots || Atomics.load(control, 4 + (b % slots)) === b - slots + 1);
  return {
    warnings,
    fill: (c0, width) => {
      if (width < BLOCK) { for (let k = 0; k < products.length; k++) jsFill(k, c0, width); return; }
      const j = c0 / BLOCK;
      const flag = 4 + (j % slots);
      let waitedMs = 0;
      for (;;) {
        if (Atomics.load(control, flag) === j + 1) { deliver(j % slots); break; }
        const next = Atomics.load(control, 0);
        if (next < nFull && slotFree(next, j)) {
          if (Atomics.compareExchange(control, 0, next, next + 1) === next) {
            compute(0, next % slots, next);
            Atomics.store(control, 4 + (next % slots), next + 1);
            Atomics.notify(control, 4 + (next % slots));
          }
          continue;
        }
        if (waitedMs >= RESCUE_MS) { compute(0, own, j); deliver(own); break; }
        Atomics.wait(control, flag, Atomics.load(control, flag), WAIT_MS);
        waitedMs += WAIT_MS;
      }
      Atomics.store(control, 1, j + 1);
      Atomics.notify(control, 1);
    },
    close: () => {
      Atomics.store(control, 3, 1);
      Atomics.notify(control, 1);
      // Workers may still be writing a rescued block; the memory is reused by the next call.
      for (let busy = Atomics.load(control, 2); busy > 0; busy = Atomics.load(control, 2)) Atomics.wait(control, 2, busy, WAIT_MS);
    },
  };
}

// ---- The worker pool (one per process, grown on demand). ----

/** Worker body: claims blocks of a job until none are left. Plain JS, no imports of this package. */
const WORKER_SOURCE = `
const { parentPort } = require('node:worker_threads');
parentPort.on('message', (job) => {
  const control = new Int32Array(job.control);
  const t = job.thread;
  const S = job.slots;
  const runs = job.products.map((p) => new WebAssembly.Instance(job.module, { env: { mem: p.memory } }).exports.run);
  const args = job.products.map((p) => { const a = p.args.slice(); a[1] = p.tabPtr[t]; return a; });
  Atomics.add(control, 2, 1);
  outer: for (;;) {
    const j = Atomics.add(control, 0, 1);
    if (j >= job.nBlocks || Atomics.load(control, 3) === 1) break;
    // Ring slot j % S is free once block j − S was consumed and written there.
    for (;;) {
      if (Atomics.load(control, 3) === 1) break outer;
      const done = Atomics.load(control, 1);
      if (j < done + S && (j < S || Atomics.load(control, 4 + (j % S)) === j - S + 1)) break;
      Atomics.wait(control, 1, done, 1);
    }
    for (let k = 0; k < runs.length; k++) {
      const a = args[k];
      a[6] = job.products[k].slotPtr + (j % S) * job.products[k].slotBytes;
      a[7] = j * 32;
      runs[k](...a);
    }
    Atomics.store(control, 4 + (j % S), j + 1);
    Atomics.notify(control, 4 + (j % S));
  }
  Atomics.sub(control, 2, 1);
  Atomics.notify(control, 2);
});
`;

const pool: Worker[] = [];
let poolError = '';

function workerPool(count: number): { workers: Worker[]; error: string } {
  while (!poolError && pool.length < count) {
    try {
      const w = new Worker(WORKER_SOURCE, { eval: true });
      w.unref();
      w.on('error', (e: Error) => {
        poolError = e.message;
        const i = pool.indexOf(w);
        if (i >= 0) pool.splice(i, 1);
      });
      pool.push(w);
    } catch (e) {
      poolError = e instanceof Error ? e.message : String(e);
    }
  }
  return { workers: pool.slice(0, count), error: poolError };
}

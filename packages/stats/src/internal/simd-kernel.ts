/**
 * WebAssembly SIMD version of `weightedBlock` (count-plan.ts): the same table method, the same
 * operations in the same order on each column, two columns per f64x2 lane pair — so its output
 * is bit-for-bit that of the JS kernel (IEEE add and multiply are exact per lane and neither
 * side contracts a·b + c into a fused multiply–add; 2·t is written t + t, which is the same
 * number). The module is a few hundred bytes assembled below (no toolchain), compiled once per
 * process on first use, and instantiated per (plan, matrix) on a shared memory holding a copy of
 * the matrix, the plan's offsets as byte addresses, its extra terms, a table per thread and
 * output slots. Only full blocks of 4 columns go through WebAssembly (block-source.ts chooses).
 *
 * Cost per resample, group of 8 trials and 4 columns: two offset loads, four 16-byte table
 * loads and four f64x2 additions (the JS kernel: eight scalar loads, twelve additions and
 * bounds checks) — about 2.5–3× faster than the JS kernel on x64.
 */
import { I32, V128, compileKernel, ifElse, kernelModule, op, wasmApi, whileLoop } from '@tuningfork/core';
import type { WasmMemory, WasmModule } from '@tuningfork/core';
import { BLOCK } from './count-plan.js';
import type { CountPlan } from './count-plan.js';

/** Bytes per group in the WebAssembly table: 256 entries × 4 columns, then the same doubled. */
const GROUP_BYTES = 2 * 256 * BLOCK * 8;

// ---- The one function of the module, assembled with core's minimal assembler. ----

const { get, set, i32c } = op;
const ADD = op.i32add;
const SUB = op.i32sub;
const MUL = op.i32mul;
const SHL = op.i32shl;
const SHR_U = op.i32shrU;
const AND = op.i32and;
const LT_S = op.i32ltS;
const GT_S = op.i32gtS;
const SELECT = op.select;
const i32load = op.i32load;
const i32load16 = op.i32load16u;
const i32load8 = op.i32load8u;
const f64load = op.f64load;
const vload = op.vload;
const vstore = op.vstore;
const VZERO = op.vzero;
const FADD = op.f64x2add;
const FMUL = op.f64x2mul;
const SPLAT = op.f64x2splat;

/**
 * run(yPtr, tablePtr, offPtr, esPtr, erPtr, ecPtr, outPtr, c0Bytes, R, ng, n, colBytes, general):
 * builds the subset-sum table of the 4 columns at byte offset c0Bytes of each row, then
 * the sums, written interleaved: out[4b + jj] for resample b and column c0 + jj. Offsets in
 * memory are 2 bytes per resample and group (bit-0 mask, bit-1 mask); extra rows are byte offsets of their row
 * (row · colBytes). Each group's table is followed by its doubled copy (2t = t + t exactly), so
 * that a count's bit 1 costs a lookup and no multiplication. Per resample the additions run over
 * the groups in order, then over its extra terms, exactly as in `weightedBlock`. (Visiting the
 * groups a few at a time to keep their tables in L1 was measured: no faster on x64.)
 */
function moduleBytes(): Uint8Array {
  // Parameters 0..12.
  const [Y, TAB, OFF, ES, ER, EC, OUT, C0, R, NG, N, COLB, GEN] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12] as const;
  const nParams = 13;
  let nextLocal = nParams;
  const i32Local = () => nextLocal++;
  const [G, BASE, I0, GS, K, LEN, P, B, END, E, E1, A, PTR, Q, D, E2, A2] = Array.from({ length: 17 }, i32Local) as number[] as [
    number, number, number, number, number, number, number, number, number, number, number, number, number, number, number, number, number];
  const nI32 = nextLocal - nParams;
  const v128Local = () => nextLocal++;
  const [Y01, Y23, W, S01, S23, T01, T23] = [v128Local(), v128Local(), v128Local(), v128Local(), v128Local(), v128Local(), v128Local()];
  const nV128 = nextLocal - nParams - nI32;

  // ---- Table: for g < ng, doubling over the group's rows. ----
  const innerCopy = whileLoop([...get(P), ...get(BASE), ...get(LEN), ...ADD, ...LT_S], [
    // store(P + LEN, load(P) + y01); store(P + LEN + 16, load(P + 16) + y23)
    ...get(P), ...get(LEN), ...ADD, ...get(P), ...vload(0), ...get(Y01), ...FADD, ...vstore(0),
    ...get(P), ...get(LEN), ...ADD, ...get(P), ...vload(16), ...get(Y23), ...FADD, ...vstore(16),
    ...get(P), ...i32c(32), ...ADD, ...set(P),
  ]);
  const rowLoop = whileLoop([...get(K), ...get(GS), ...LT_S], [
    // yo = Y + (I0 + K)·COLB + C0
    ...get(Y), ...get(I0), ...get(K), ...ADD, ...get(COLB), ...MUL, ...ADD, ...get(C0), ...ADD, ...set(E),
    ...get(E), ...vload(0), ...set(Y01),
    ...get(E), ...vload(16), ...set(Y23),
    ...i32c(32), ...get(K), ...SHL, ...set(LEN),
    ...get(BASE), ...set(P),
    ...innerCopy,
    ...get(K), ...i32c(1), ...ADD, ...set(K),
  ]);
  const tableLoop = whileLoop([...get(G), ...get(NG), ...LT_S], [
    ...get(TAB), ...get(G), ...i32c(GROUP_BYTES), ...MUL, ...ADD, ...set(BASE),
    ...get(BASE), ...VZERO, ...vstore(0),
    ...get(BASE), ...VZERO, ...vstore(16),
    ...get(G), ...i32c(8), ...MUL, ...set(I0),
    // gs = min(8, n − i0)
    ...get(N), ...get(I0), ...SUB, ...set(GS),
    ...i32c(8), ...get(GS), ...get(GS), ...i32c(8), ...GT_S, ...SELECT, ...set(GS),
    ...i32c(0), ...set(K),
    ...rowLoop,
    // Doubled copy of the 2^gs entries: store(P + 8192, load(P) + load(P)).
    ...ifElse(get(GEN), [
      ...get(BASE), ...set(P),
      ...get(BASE), ...i32c(32), ...get(GS), ...SHL, ...ADD, ...set(END),
      ...whileLoop([...get(P), ...get(END), ...LT_S], [
        ...get(P), ...get(P), ...vload(0), ...get(P), ...vload(0), ...FADD, ...vstore(8192),
        ...get(P), ...i32c(16), ...ADD, ...set(P),
      ]),
    ], []),
    ...get(G), ...i32c(1), ...ADD, ...set(G),
  ]);

  // ---- Sums: zero out[], then per resample over all groups, then the extra terms. ----
  // Q = OUT + 32b is resample b's pair of accumulators.
  const zeroLoop = whileLoop([...get(B), ...get(R), ...LT_S], [
    ...get(OUT), ...get(B), ...i32c(32), ...MUL, ...ADD, ...set(Q),
    ...get(Q), ...VZERO, ...vstore(0),
    ...get(Q), ...VZERO, ...vstore(16),
    ...get(B), ...i32c(1), ...ADD, ...set(B),
  ]);
  // Offsets are 2 bytes per resample and group: bit-0 mask, bit-1 mask. BASE walks the tables.
  const generalGroups = whileLoop([...get(PTR), ...get(END), ...LT_S], [
    ...get(PTR), ...i32load16(0), ...set(E),
    ...get(BASE), ...get(E), ...i32c(255), ...AND, ...i32c(5), ...SHL, ...ADD, ...set(A),
    ...get(BASE), ...get(E), ...i32c(8), ...SHR_U, ...i32c(5), ...SHL, ...ADD, ...set(E),
    ...get(S01), ...get(A), ...vload(0), ...get(E), ...vload(8192), ...FADD, ...FADD, ...set(S01),
    ...get(S23), ...get(A), ...vload(16), ...get(E), ...vload(8192 + 16), ...FADD, ...FADD, ...set(S23),
    ...get(PTR), ...i32c(2), ...ADD, ...set(PTR),
    ...get(BASE), ...i32c(GROUP_BYTES), ...ADD, ...set(BASE),
  ]);
  const binaryGroups = whileLoop([...get(PTR), ...get(END), ...LT_S], [
    ...get(BASE), ...get(PTR), ...i32load8(0), ...i32c(5), ...SHL, ...ADD, ...set(A),
    ...get(S01), ...get(A), ...vload(0), ...FADD, ...set(S01),
    ...get(S23), ...get(A), ...vload(16), ...FADD, ...set(S23),
    ...get(PTR), ...i32c(2), ...ADD, ...set(PTR),
    ...get(BASE), ...i32c(GROUP_BYTES), ...ADD, ...set(BASE),
  ]);
  // Two resamples at a time (b, b + 1): the same additions per resample in the same order, on
  // two independent accumulator chains, so the adds of one hide the latency of the other's.
  // Their offsets are D = 2·ng bytes apart; both walk the same group tables.
  const generalPairs = whileLoop([...get(PTR), ...get(END), ...LT_S], [
    ...get(PTR), ...i32load16(0), ...set(E),
    ...get(PTR), ...get(D), ...ADD, ...i32load16(0), ...set(E2),
    ...get(BASE), ...get(E), ...i32c(255), ...AND, ...i32c(5), ...SHL, ...ADD, ...set(A),
    ...get(BASE), ...get(E), ...i32c(8), ...SHR_U, ...i32c(5), ...SHL, ...ADD, ...set(E),
    ...get(BASE), ...get(E2), ...i32c(255), ...AND, ...i32c(5), ...SHL, ...ADD, ...set(A2),
    ...get(BASE), ...get(E2), ...i32c(8), ...SHR_U, ...i32c(5), ...SHL, ...ADD, ...set(E2),
    ...get(S01), ...get(A), ...vload(0), ...get(E), ...vload(8192), ...FADD, ...FADD, ...set(S01),
    ...get(T01), ...get(A2), ...vload(0), ...get(E2), ...vload(8192), ...FADD, ...FADD, ...set(T01),
    ...get(S23), ...get(A), ...vload(16), ...get(E), ...vload(8192 + 16), ...FADD, ...FADD, ...set(S23),
    ...get(T23), ...get(A2), ...vload(16), ...get(E2), ...vload(8192 + 16), ...FADD, ...FADD, ...set(T23),
    ...get(PTR), ...i32c(2), ...ADD, ...set(PTR),
    ...get(BASE), ...i32c(GROUP_BYTES), ...ADD, ...set(BASE),
  ]);
  const binaryPairs = whileLoop([...get(PTR), ...get(END), ...LT_S], [
    ...get(BASE), ...get(PTR), ...i32load8(0), ...i32c(5), ...SHL, ...ADD, ...set(A),
    ...get(BASE), ...get(PTR), ...get(D), ...ADD, ...i32load8(0), ...i32c(5), ...SHL, ...ADD, ...set(A2),
    ...get(S01), ...get(A), ...vload(0), ...FADD, ...set(S01),
    ...get(T01), ...get(A2), ...vload(0), ...FADD, ...set(T01),
    ...get(S23), ...get(A), ...vload(16), ...FADD, ...set(S23),
    ...get(T23), ...get(A2), ...vload(16), ...FADD, ...set(T23),
    ...get(PTR), ...i32c(2), ...ADD, ...set(PTR),
    ...get(BASE), ...i32c(GROUP_BYTES), ...ADD, ...set(BASE),
  ]);
  const pairLoop = whileLoop([...get(B), ...i32c(1), ...ADD, ...get(R), ...LT_S], [
    ...get(OUT), ...get(B), ...i32c(32), ...MUL, ...ADD, ...set(Q),
    ...get(Q), ...vload(0), ...set(S01),
    ...get(Q), ...vload(16), ...set(S23),
    ...get(Q), ...vload(32), ...set(T01),
    ...get(Q), ...vload(48), ...set(T23),
    ...get(OFF), ...get(B), ...get(NG), ...MUL, ...i32c(2), ...MUL, ...ADD, ...set(PTR),
    ...get(PTR), ...get(D), ...ADD, ...set(END),
    ...get(TAB), ...set(BASE),
    ...ifElse(get(GEN), generalPairs, binaryPairs),
    ...get(Q), ...get(S01), ...vstore(0),
    ...get(Q), ...get(S23), ...vstore(16),
    ...get(Q), ...get(T01), ...vstore(32),
    ...get(Q), ...get(T23), ...vstore(48),
    ...get(B), ...i32c(2), ...ADD, ...set(B),
  ]);
  const resampleLoop = whileLoop([...get(B), ...get(R), ...LT_S], [
    ...get(OUT), ...get(B), ...i32c(32), ...MUL, ...ADD, ...set(Q),
    ...get(Q), ...vload(0), ...set(S01),
    ...get(Q), ...vload(16), ...set(S23),
    // PTR = OFF + 2·b·ng, END = PTR + 2·ng, BASE = TAB
    ...get(OFF), ...get(B), ...get(NG), ...MUL, ...i32c(2), ...MUL, ...ADD, ...set(PTR),
    ...get(PTR), ...get(NG), ...i32c(2), ...MUL, ...ADD, ...set(END),
    ...get(TAB), ...set(BASE),
    ...ifElse(get(GEN), generalGroups, binaryGroups),
    ...get(Q), ...get(S01), ...vstore(0),
    ...get(Q), ...get(S23), ...vstore(16),
    ...get(B), ...i32c(1), ...ADD, ...set(B),
  ]);
  const extrasLoop = whileLoop([...get(B), ...get(R), ...LT_S], [
    ...get(OUT), ...get(B), ...i32c(32), ...MUL, ...ADD, ...set(Q),
    ...get(Q), ...vload(0), ...set(S01),
    ...get(Q), ...vload(16), ...set(S23),
    ...get(ES), ...get(B), ...i32c(4), ...MUL, ...ADD, ...set(K),
    ...get(K), ...i32load(0), ...set(E),
    ...get(K), ...i32load(4), ...set(E1),
    ...whileLoop([...get(E), ...get(E1), ...LT_S], [
      // yo = Y + er[e] + C0 (in K); w = splat(ec[e])
      ...get(Y), ...get(ER), ...get(E), ...i32c(4), ...MUL, ...ADD, ...i32load(0), ...ADD, ...get(C0), ...ADD, ...set(K),
      ...get(EC), ...get(E), ...i32c(8), ...MUL, ...ADD, ...f64load(0), ...SPLAT, ...set(W),
      ...get(S01), ...get(W), ...get(K), ...vload(0), ...FMUL, ...FADD, ...set(S01),
      ...get(S23), ...get(W), ...get(K), ...vload(16), ...FMUL, ...FADD, ...set(S23),
      ...get(E), ...i32c(1), ...ADD, ...set(E),
    ]),
    ...get(Q), ...get(S01), ...vstore(0),
    ...get(Q), ...get(S23), ...vstore(16),
    ...get(B), ...i32c(1), ...ADD, ...set(B),
  ]);
  const body = [
    ...i32c(0), ...set(G),
    ...tableLoop,
    ...i32c(0), ...set(B),
    ...zeroLoop,
    ...i32c(0), ...set(G),
    ...i32c(0), ...set(B),
    ...get(NG), ...i32c(2), ...MUL, ...set(D),
    ...pairLoop,
    ...resampleLoop,
    ...ifElse(get(GEN), [...i32c(0), ...set(B), ...extrasLoop], []),
  ];
  // Imports env.mem as a shared memory (1 … 32768 pages) so worker threads can use it.
  return kernelModule({ nParams, locals: [[nI32, I32], [nV128, V128]], body, name: 'run', sharedMaxPages: 32768 });
}

// ---- Compilation (once) and per-product memories. ----

let compiled: WasmModule | null | undefined;

/** The compiled module, or null when this runtime lacks WebAssembly SIMD. */
export function wasmModule(): WasmModule | null {
  if (compiled !== undefined) return compiled;
  compiled = compileKernel(moduleBytes());
  return compiled;
}

const PAGE = 65536;

export type RunFn = (y: number, tab: number, off: number, es: number, er: number, ec: number, out: number,
  c0Bytes: number, R: number, ng: number, n: number, colBytes: number, general: number) => void;

/**
 * One product W·Y in WebAssembly memory: Y, the plan's extra terms, and per thread t a table and
 * a copy of the offsets as absolute byte addresses into that table; then `slots` output blocks
 * of 4·R values (interleaved: 4b + jj for resample b, column c0 + jj).
 */
export interface WasmProduct {
  readonly memory: WasmMemory;
  readonly R: number;
  readonly ng: number;
  readonly n: number;
  readonly colBytes: number;
  readonly general: number;
  readonly esPtr: number;
  readonly erPtr: number;
  readonly ecPtr: number;
  readonly tabPtr: readonly number[];
  readonly offPtr: number;
  readonly slotPtr: number;
  readonly slotBytes: number;
}

/** Arguments of `run` for thread t, output slot s, block starting at column c0. */
export function runArgs(p: WasmProduct, t: number, slot: number, c0: number): Parameters<RunFn> {
  return [0, p.tabPtr[t]!, p.offPtr, p.esPtr, p.erPtr, p.ecPtr, p.slotPtr + slot * p.slotBytes, c0 * 8, p.R, p.ng, p.n, p.colBytes, p.general];
}

/**
 * Lay out plan × y (n × cols, row-major) in shared WebAssembly memory number `index` of this
 * thread (so worker threads can use it; see `memoryFor`). Null when the module is unavailable or
 * the layout exceeds 2 GiB (i32 addresses). The memory is reused by the next call with the same
 * index: the caller must be done with the product by then (calls are synchronous).
 */
export function makeWasmProduct(plan: CountPlan, y: Float64Array, cols: number, threads: number, slots: number, index: number): WasmProduct | null {
  if (wasmModule() === null) return null;
  const R = plan.resamples;
  const ng = plan.groups;
  const n = plan.n;
  const align = (x: number) => Math.ceil(x / 16) * 16;
  let at = align(n * cols * 8);
  const tabPtr: number[] = [];
  for (let t = 0; t < threads; t++) {
    tabPtr.push(at);
    at = align(at + ng * GROUP_BYTES);
  }
  const offPtr = at;
  at = align(at + plan.offsets.length);
  const esPtr = at;
  const erPtr = align(esPtr + (R + 1) * 4);
  const ecPtr = align(erPtr + Math.max(plan.nExtra, 1) * 4);
  const slotPtr = align(ecPtr + Math.max(plan.nExtra, 1) * 8);
  const slotBytes = BLOCK * R * 8;
  const total = slotPtr + slots * slotBytes + 64;
  if (total >= 2 ** 31) return null;
  const memory = memoryFor(index, Math.ceil(total / PAGE));
  const buf = memory.buffer;
  new Float64Array(buf, 0, n * cols).set(y.subarray(0, n * cols));
  // plan.offsets[k] = (g·256 + mask)·4 doubles: keep the mask bytes (bit 0, bit 1 per group).
  const off = new Uint8Array(buf, offPtr, plan.offsets.length);
  for (let k = 0; k < off.length; k++) off[k] = (plan.offsets[k]! >> 2) & 255;
  new Int32Array(buf, esPtr, R + 1).set(plan.extraStart);
  const er = new Int32Array(buf, erPtr, plan.nExtra);
  for (let e = 0; e < plan.nExtra; e++) er[e] = plan.extraRow[e]! * cols * 8;
  new Float64Array(buf, ecPtr, plan.nExtra).set(plan.extraCount.subarray(0, plan.nExtra));
  return { memory, R, ng, n, colBytes: cols * 8, general: plan.binary ? 0 : 1, esPtr, erPtr, ecPtr, tabPtr, offPtr, slotPtr, slotBytes };
}

/**
 * Shared memories are reused from call to call, one per product index, and replaced only when
 * too small: V8 frees the backing store of a dropped shared memory only at a full GC, which
 * large allocations outside its heap do not trigger, so fresh memories per call piled up
 * (1.2 GB in the step-4 benchmark). Reuse keeps the largest layout seen so far alive.
 */
const memories: WasmMemory[] = [];

function memoryFor(index: number, pages: number): WasmMemory {
  const have = memories[index];
  if (have !== undefined && have.buffer.byteLength >= pages * PAGE) return have;
  const memory = new (wasmApi()!).Memory({ initial: pages, maximum: pages, shared: true });
  memories[index] = memory;
  return memory;
}

/** The kernel bound to one product's memory. */
export function instantiate(p: WasmProduct): RunFn {
  return new (wasmApi()!).Instance(wasmModule()!, { env: { mem: p.memory } }).exports['run'] as RunFn;
}

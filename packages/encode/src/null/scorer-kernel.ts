/**
 * Internal: the two dense steps of the fixed-penalty scorer (fixed-penalty-scorer.ts) for four
 * right-hand sides at once, in WebAssembly SIMD: w_b = S·v_b and q_b = w_bᵀ·K·w_b (K symmetric,
 * read from its upper triangle). Lanes hold right-hand sides (v₀,v₁) and (v₂,v₃); every lane
 * performs the JavaScript loop's multiplications and additions in the same order (WebAssembly
 * neither reorders nor fuses f64 arithmetic), so the results are bit-for-bit those of the loop.
 */
import { I32, V128, WASM_PAGE, compileKernel, kernelModule, op, wasmApi, whileLoop } from '@tuningfork/core';
import type { WasmMemory, WasmModule } from '@tuningfork/core';

/**
 * run(S, K, pm, V, W, Q): S and K are pm × pm row-major; V holds per j the pairs (v₀,v₁)(v₂,v₃)
 * (32 bytes per j); W receives w in the same layout; Q receives (q₀,q₁)(q₂,q₃).
 */
function scorerBytes(): Uint8Array {
  const [S, K, PM, V, W, Q] = [0, 1, 2, 3, 4, 5] as const;
  const [I, ROW, P, END, JP, ROWB] = [6, 7, 8, 9, 10, 11] as const;
  const [A01, A23, X, W01, W23, Q01, Q23] = [12, 13, 14, 15, 16, 17, 18] as const;
  const { get, set, i32c } = op;
  const add2 = op.f64x2add;
  const mul2 = op.f64x2mul;
  // A01 += X·load(JP); A23 += X·load(JP + 16); P += 8; JP += 32 — while P < END.
  const dotLoop = whileLoop([...get(P), ...get(END), ...op.i32ltU], [
    ...get(P), ...op.f64load(0), ...op.f64x2splat, ...set(X),
    ...get(A01), ...get(X), ...get(JP), ...op.vload(0), ...mul2, ...add2, ...set(A01),
    ...get(A23), ...get(X), ...get(JP), ...op.vload(16), ...mul2, ...add2, ...set(A23),
    ...get(P), ...i32c(8), ...op.i32add, ...set(P),
    ...get(JP), ...i32c(32), ...op.i32add, ...set(JP),
  ]);
  const matVec = [
    ...get(PM), ...i32c(3), ...op.i32shl, ...set(ROWB),
    ...i32c(0), ...set(I),
    ...get(S), ...set(ROW),
    ...whileLoop([...get(I), ...get(PM), ...op.i32ltS], [
      ...op.vzero, ...set(A01), ...op.vzero, ...set(A23),
      ...get(ROW), ...set(P),
      ...get(ROW), ...get(ROWB), ...op.i32add, ...set(END),
      ...get(V), ...set(JP),
      ...dotLoop,
      ...get(W), ...get(I), ...i32c(5), ...op.i32shl, ...op.i32add, ...set(JP),
      ...get(JP), ...get(A01), ...op.vstore(0),
      ...get(JP), ...get(A23), ...op.vstore(16),
      ...get(ROW), ...get(ROWB), ...op.i32add, ...set(ROW),
      ...get(I), ...i32c(1), ...op.i32add, ...set(I),
    ]),
  ];
  const quad = [
    ...op.vzero, ...set(Q01), ...op.vzero, ...set(Q23),
    ...i32c(0), ...set(I),
    ...get(K), ...set(ROW),
    ...whileLoop([...get(I), ...get(PM), ...op.i32ltS], [
      // W01, W23 = w at i; A = (0.5·K[i,i])·w_i
      ...get(W), ...get(I), ...i32c(5), ...op.i32shl, ...op.i32add, ...set(JP),
      ...get(JP), ...op.vload(0), ...set(W01),
      ...get(JP), ...op.vload(16), ...set(W23),
      ...get(ROW), ...get(I), ...i32c(3), ...op.i32shl, ...op.i32add, ...set(P),
      ...op.f64c(0.5), ...get(P), ...op.f64load(0), ...op.f64mul, ...op.f64x2splat, ...set(X),
      ...get(X), ...get(W01), ...mul2, ...set(A01),
      ...get(X), ...get(W23), ...mul2, ...set(A23),
      // j > i
      ...get(P), ...i32c(8), ...op.i32add, ...set(P),
      ...get(ROW), ...get(ROWB), ...op.i32add, ...set(END),
      ...get(JP), ...i32c(32), ...op.i32add, ...set(JP),
      ...dotLoop,
      ...get(Q01), ...get(W01), ...get(A01), ...mul2, ...add2, ...set(Q01),
      ...get(Q23), ...get(W23), ...get(A23), ...mul2, ...add2, ...set(Q23),
      ...get(ROW), ...get(ROWB), ...op.i32add, ...set(ROW),
      ...get(I), ...i32c(1), ...op.i32add, ...set(I),
    ]),
    ...get(Q), ...get(Q01), ...op.vstore(0),
    ...get(Q), ...get(Q23), ...op.vstore(16),
  ];
  return kernelModule({ nParams: 6, locals: [[6, I32], [7, V128]], body: [...matVec, ...quad], name: 'run' });
}

type RunFn = (s: number, k: number, pm: number, v: number, w: number, q: number) => void;

let compiled: WasmModule | null | undefined;

/** Matrices (S, K pairs) laid out once in a kernel memory, with scratch for v, w and q. */
export class ScorerKernel {
  private readonly memory: WasmMemory;
  private readonly run: RunFn;
  private readonly offsets: Int32Array;
  private readonly dims: Int32Array;
  private readonly vPtr: number;
  private readonly wPtr: number;
  private readonly qPtr: number;
  readonly v: Float64Array;
  readonly w: Float64Array;
  readonly q: Float64Array;

  private constructor(memory: WasmMemory, run: RunFn, offsets: Int32Array, dims: Int32Array, vPtr: number, wPtr: number, qPtr: number, maxPm: number) {
    this.memory = memory;
    this.run = run;
    this.offsets = offsets;
    this.dims = dims;
    this.vPtr = vPtr;
    this.wPtr = wPtr;
    this.qPtr = qPtr;
    this.v = new Float64Array(memory.buffer, vPtr, 4 * maxPm);
    this.w = new Float64Array(memory.buffer, wPtr, 4 * maxPm);
    this.q = new Float64Array(memory.buffer, qPtr, 4);
  }

  /** A kernel over the given (S, K, pm) items, or null without WebAssembly SIMD. */
  static create(items: readonly { s: Float64Array; k: Float64Array; pm: number }[]): ScorerKernel | null {
    compiled ??= compileKernel(scorerBytes());
    const api = wasmApi();
    if (!compiled || !api) return null;
    let maxPm = 1;
    let at = 0;
    const offsets = new Int32Array(2 * items.length);
    items.forEach((it, i) => {
      maxPm = Math.max(maxPm, it.pm);
      offsets[2 * i] = at;
      at += 8 * it.pm * it.pm;
      offsets[2 * i + 1] = at;
      at += 8 * it.pm * it.pm;
    });
    const vPtr = at;
    const wPtr = vPtr + 32 * maxPm;
    const qPtr = wPtr + 32 * maxPm;
    const total = qPtr + 32;
    try {
      const memory = new api.Memory({ initial: Math.ceil(total / WASM_PAGE) });
      const run = new api.Instance(compiled, { env: { mem: memory } }).exports['run'] as RunFn;
      items.forEach((it, i) => {
        new Float64Array(memory.buffer, offsets[2 * i]!, it.pm * it.pm).set(it.s);
        new Float64Array(memory.buffer, offsets[2 * i + 1]!, it.pm * it.pm).set(it.k);
      });
      return new ScorerKernel(memory, run, offsets, Int32Array.from(items, (it) => it.pm), vPtr, wPtr, qPtr, maxPm);
    } catch {
      return null;
    }
  }

  /**
   * For item i, with `v` holding the four right-hand sides interleaved (4j + b), write
   * w_b = S·v_b to `w` (4j + b) and q_b = w_bᵀKw_b to `q` (b).
   */
  apply(i: number): void {
    this.run(this.offsets[2 * i]!, this.offsets[2 * i + 1]!, this.dims[i]!, this.vPtr, this.wPtr, this.qPtr);
  }
}

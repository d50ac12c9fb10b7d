/**
 * Internal: the weighted Gram XᵀWX of a sparse-row design (with the implicit intercept) in
 * WebAssembly. The same loops and the same floating-point operations in the same order as the
 * JavaScript `weightedGram` (poisson-irls.ts) — WebAssembly neither reorders nor fuses f64
 * arithmetic — so the results are bit-for-bit equal; only the per-update overhead of the
 * scatter (index loads, bounds checks) is lower. The design is copied into the kernel's memory
 * once per design and thread; μ (and the row mask) once per call.
 */
import { F64, I32, WASM_PAGE, compileKernel, ifElse, kernelModule, op, wasmApi, whileLoop } from '@tuningfork/core';
import type { WasmMemory, WasmModule } from '@tuningfork/core';

/**
 * gram(rp, cb, val, mu, h, r0, r1, stride, rowBytes, valid):
 *   for t = r0 + ⌊(stride − 1)/2⌋; t < r1; t += stride, skipping rows with valid[t] = 0 (valid ≠ 0):
 *     m = stride·μ_t; h[0] += m
 *     for each non-zero a of row t: w = m·x_a; h[0, j_a] += w; h[j_a, j_b] += w·x_b for b ≥ a
 * rp: row pointers (i32, n + 1); cb: (column + 1)·8 per non-zero (i32); val: values (f64);
 * mu (f64, n); h ((p+1)², f64, row-major, upper triangle and row 0 written); rowBytes = 8(p+1).
 */
function gramBytes(): Uint8Array {
  const [RP, CB, VAL, MU, H, R0, R1, STRIDE, ROWB, VALID] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9] as const;
  const [T, PA, END, HA, BASE, PB, PV, PVA, ADDR] = [10, 11, 12, 13, 14, 15, 16, 17, 18] as const;
  const [M, W] = [19, 20] as const;
  const { get, set, tee, i32c } = op;
  // Inner loop over b ≥ a: ADDR = BASE + cb[b]; h[ADDR] += W·val[b].
  const inner = whileLoop([...get(PB), ...get(END), ...op.i32ltU], [
    ...get(BASE), ...get(PB), ...op.i32load(0), ...op.i32add, ...tee(ADDR),
    ...get(ADDR), ...op.f64load(0), ...get(W), ...get(PV), ...op.f64load(0), ...op.f64mul, ...op.f64add,
    ...op.f64store(0),
    ...get(PB), ...i32c(4), ...op.i32add, ...set(PB),
    ...get(PV), ...i32c(8), ...op.i32add, ...set(PV),
  ]);
  // Loop over the non-zeros a of the row (PA walks cb, PVA walks val).
  const outer = whileLoop([...get(PA), ...get(END), ...op.i32ltU], [
    ...get(PA), ...op.i32load(0), ...set(HA),
    ...get(M), ...get(PVA), ...op.f64load(0), ...op.f64mul, ...set(W),
    // h[0, j_a] += w
    ...get(H), ...get(HA), ...op.i32add, ...tee(ADDR), ...get(ADDR), ...op.f64load(0), ...get(W), ...op.f64add, ...op.f64store(0),
    // BASE = H + j_a·rowBytes = H + (HA / 8)·rowBytes
    ...get(H), ...get(HA), ...i32c(3), ...op.i32shrU, ...get(ROWB), ...op.i32mul, ...op.i32add, ...set(BASE),
    ...get(PA), ...set(PB),
    ...get(PVA), ...set(PV),
    ...inner,
    ...get(PA), ...i32c(4), ...op.i32add, ...set(PA),
    ...get(PVA), ...i32c(8), ...op.i32add, ...set(PVA),
  ]);
  const row = [
    // m = stride·μ_t; h[0] += m
    ...get(STRIDE), ...op.f64ConvertI32S, ...get(MU), ...get(T), ...i32c(3), ...op.i32shl, ...op.i32add, ...op.f64load(0), ...op.f64mul, ...set(M),
    ...get(H), ...get(H), ...op.f64load(0), ...get(M), ...op.f64add, ...op.f64store(0),
    // PA = cb + 4·rp[t], END = cb + 4·rp[t + 1], PVA = val + 8·rp[t]
    ...get(RP), ...get(T), ...i32c(2), ...op.i32shl, ...op.i32add, ...tee(ADDR), ...op.i32load(0), ...set(PB),
    ...get(CB), ...get(PB), ...i32c(2), ...op.i32shl, ...op.i32add, ...set(PA),
    ...get(VAL), ...get(PB), ...i32c(3), ...op.i32shl, ...op.i32add, ...set(PVA),
    ...get(CB), ...get(ADDR), ...op.i32load(4), ...i32c(2), ...op.i32shl, ...op.i32add, ...set(END),
    ...outer,
  ];
  const body = [
    ...get(R0), ...get(STRIDE), ...i32c(1), ...op.i32sub, ...i32c(1), ...op.i32shrU, ...op.i32add, ...set(T),
    ...whileLoop([...get(T), ...get(R1), ...op.i32ltS], [
      ...ifElse([...get(VALID), ...op.i32eqz], row, ifElse([...get(VALID), ...get(T), ...op.i32add, ...op.i32load8u(0)], row, [])),
      ...get(T), ...get(STRIDE), ...op.i32add, ...set(T),
    ]),
  ];
  return kernelModule({ nParams: 10, locals: [[9, I32], [2, F64]], body, name: 'gram' });
}

let compiled: WasmModule | null | undefined;

type GramFn = (rp: number, cb: number, val: number, mu: number, h: number, r0: number, r1: number, stride: number, rowBytes: number, valid: number) => void;

/** A design laid out in one kernel memory, with room for μ, the row mask and h after it. */
interface Layout {
  readonly memory: WasmMemory;
  readonly run: GramFn;
  readonly cb: number;
  readonly val: number;
  readonly mu: number;
  readonly valid: number;
  readonly h: number;
  readonly n: number;
  readonly q1: number;
}

/** Per design CSR (keyed by its row pointers) on this thread. */
const layouts = new WeakMap<Int32Array, Layout | null>();

/** The CSR arrays of a design (row pointers, column indices, values) and its column count p. */
export interface GramDesign {
  readonly n: number;
  readonly p: number;
  readonly rowPtr: Int32Array;
  readonly colIdx: Int32Array;
  readonly values: Float64Array;
}

function layoutFor(d: GramDesign): Layout | null {
  if (layouts.has(d.rowPtr)) return layouts.get(d.rowPtr)!;
  let out: Layout | null = null;
  compiled ??= compileKernel(gramBytes());
  const api = wasmApi();
  const nnz = d.rowPtr[d.n]!;
  const q1 = d.p + 1;
  const align = (x: number) => Math.ceil(x / 16) * 16;
  const rp = 0;
  const cb = align(rp + 4 * (d.n + 1));
  const val = align(cb + 4 * nnz);
  const mu = align(val + 8 * nnz);
  const valid = align(mu + 8 * d.n);
  const h = align(valid + d.n);
  const total = h + 8 * q1 * q1;
  if (compiled && api && total < 2 ** 31) {
    try {
      const memory = new api.Memory({ initial: Math.ceil(total / WASM_PAGE) });
      const run = new api.Instance(compiled, { env: { mem: memory } }).exports['gram'] as GramFn;
      const buf = memory.buffer;
      new Int32Array(buf, rp, d.n + 1).set(d.rowPtr.subarray(0, d.n + 1));
      const c = new Int32Array(buf, cb, nnz);
      for (let k = 0; k < nnz; k++) c[k] = (d.colIdx[k]! + 1) * 8;
      new Float64Array(buf, val, nnz).set(d.values.subarray(0, nnz));
      out = { memory, run, cb, val, mu, valid, h, n: d.n, q1 };
    } catch {
      out = null;
    }
  }
  layouts.set(d.rowPtr, out);
  return out;
}

/**
 * Add the weighted Gram of `d` over the row ranges (flattened [r0, r1) pairs), every stride-th
 * row with weight stride·μ_t, to h ((p+1)², upper triangle and row 0). Returns false (h
 * untouched) when WebAssembly is unavailable; the caller then runs the JavaScript loop.
 */
export function gramWasm(d: GramDesign, ranges: Int32Array, muArr: Float64Array, rowValid: Uint8Array | null, h: Float64Array, stride: number): boolean {
  const L = layoutFor(d);
  if (L === null) return false;
  const buf = L.memory.buffer;
  new Float64Array(buf, L.mu, L.n).set(muArr.subarray(0, L.n));
  if (rowValid) new Uint8Array(buf, L.valid, L.n).set(rowValid.subarray(0, L.n));
  const hv = new Float64Array(buf, L.h, L.q1 * L.q1);
  hv.set(h);
  for (let q = 0; q < ranges.length; q += 2) {
    L.run(0, L.cb, L.val, L.mu, L.h, ranges[q]!, ranges[q + 1]!, stride, 8 * L.q1, rowValid ? L.valid : 0);
  }
  h.set(hv);
  return true;
}

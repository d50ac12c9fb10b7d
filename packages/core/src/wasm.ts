/**
 * A minimal WebAssembly assembler for the few numeric kernels of this project that JavaScript
 * cannot run fast enough (sparse scatter loops, SIMD table lookups). A kernel is one exported
 * function over one imported memory, written as byte arrays with the helpers below; no toolchain
 * and no build step, so the same code runs from TypeScript sources and from dist/.
 *
 * Only the opcodes the kernels use are named here; see the WebAssembly core specification
 * (W3C, WebAssembly Core Specification 2.0, §5.4 "Instructions") for their encodings.
 */

// The TypeScript libs of this repo (es2023 + node types) do not declare the WebAssembly global;
// these are the few members used.
export interface WasmMemory { readonly buffer: ArrayBuffer; grow(pages: number): number }
export interface WasmModule { readonly kind?: 'module' }
export interface WasmInstance { readonly exports: Record<string, unknown> }
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => WasmModule;
  Instance: new (module: WasmModule, imports: Record<string, Record<string, unknown>>) => WasmInstance;
  Memory: new (descriptor: { initial: number; maximum?: number; shared?: boolean }) => WasmMemory;
}
declare const WebAssembly: WasmApi | undefined;

/** The runtime's WebAssembly object, or null where there is none. */
export function wasmApi(): WasmApi | null {
  return typeof WebAssembly === 'object' && WebAssembly !== null ? WebAssembly : null;
}

/** Bytes of one WebAssembly memory page. */
export const WASM_PAGE = 65536;

/** Unsigned LEB128. */
export function uleb(n: number): number[] {
  const out: number[] = [];
  do {
    let byte = n & 0x7f;
    n >>>= 7;
    if (n !== 0) byte |= 0x80;
    out.push(byte);
  } while (n !== 0);
  return out;
}

/** Signed LEB128. */
export function sleb(n: number): number[] {
  const out: number[] = [];
  for (;;) {
    const byte = n & 0x7f;
    n >>= 7;
    if ((n === 0 && (byte & 0x40) === 0) || (n === -1 && (byte & 0x40) !== 0)) { out.push(byte); return out; }
    out.push(byte | 0x80);
  }
}

/** Value types. */
export const I32 = 0x7f;
export const F64 = 0x7c;
export const V128 = 0x7b;

/** Instructions (each an array of bytes, to be spread into a body). */
export const op = {
  get: (i: number) => [0x20, ...uleb(i)],
  set: (i: number) => [0x21, ...uleb(i)],
  tee: (i: number) => [0x22, ...uleb(i)],
  i32c: (v: number) => [0x41, ...sleb(v)],
  /** f64.const: the 8 little-endian bytes of v. */
  f64c: (v: number) => [0x44, ...new Uint8Array(Float64Array.of(v).buffer)],
  i32add: [0x6a],
  i32sub: [0x6b],
  i32mul: [0x6c],
  i32and: [0x71],
  i32shl: [0x74],
  i32shrU: [0x76],
  i32ltS: [0x48],
  i32ltU: [0x49],
  i32gtS: [0x4a],
  i32eqz: [0x45],
  i32ne: [0x47],
  select: [0x1b],
  f64add: [0xa0],
  f64mul: [0xa2],
  f64ConvertI32S: [0xb7],
  /** Loads and stores with a static byte offset (natural alignment). */
  i32load: (offset: number) => [0x28, 2, ...uleb(offset)],
  i32load16u: (offset: number) => [0x2f, 1, ...uleb(offset)],
  i32load8u: (offset: number) => [0x2d, 0, ...uleb(offset)],
  f64load: (offset: number) => [0x2b, 3, ...uleb(offset)],
  f64store: (offset: number) => [0x39, 3, ...uleb(offset)],
  /** SIMD (0xfd prefix). */
  simd: (code: number) => [0xfd, ...uleb(code)],
  vload: (offset: number) => [0xfd, ...uleb(0x00), 3, ...uleb(offset)],
  vstore: (offset: number) => [0xfd, ...uleb(0x0b), 3, ...uleb(offset)],
  vzero: [0xfd, ...uleb(0x0c), ...new Array<number>(16).fill(0)],
  f64x2add: [0xfd, ...uleb(0xf0)],
  f64x2mul: [0xfd, ...uleb(0xf2)],
  f64x2splat: [0xfd, ...uleb(0x14)],
} as const;

/** while (cond) { body } as block/loop/br_if. */
export function whileLoop(cond: readonly number[], body: readonly number[]): number[] {
  return [0x02, 0x40, 0x03, 0x40, ...cond, ...op.i32eqz, 0x0d, 1, ...body, 0x0c, 0, 0x0b, 0x0b];
}

/** if (cond) { then } else { otherwise }. */
export function ifElse(cond: readonly number[], then: readonly number[], otherwise: readonly number[]): number[] {
  return [...cond, 0x04, 0x40, ...then, 0x05, ...otherwise, 0x0b];
}

/** Declaration of a kernel: i32 parameters, locals by type, and the body (without the final `end`). */
export interface KernelSpec {
  readonly nParams: number;
  /** Local groups after the parameters, in order: [count, type]. */
  readonly locals: readonly (readonly [number, number])[];
  readonly body: readonly number[];
  /** Export name of the function. */
  readonly name: string;
  /** Import env.mem as a shared memory (for worker threads), with this maximum in pages. */
  readonly sharedMaxPages?: number;
}

/**
 * Bytes of a module with one function `(i32 × nParams) → ()` exported as `name`, importing
 * `env.mem` (1 page minimum; shared with the given maximum when `sharedMaxPages` is set).
 */
export function kernelModule(k: KernelSpec): Uint8Array {
  const section = (id: number, content: number[]) => [id, ...uleb(content.length), ...content];
  const name = (str: string) => [str.length, ...Array.from(str, (ch) => ch.charCodeAt(0))];
  const body = [...uleb(k.locals.length), ...k.locals.flatMap(([count, type]) => [...uleb(count), type]), ...k.body, 0x0b];
  const memType = k.sharedMaxPages !== undefined ? [0x03, 0x01, ...uleb(k.sharedMaxPages)] : [0x00, 0x01];
  return new Uint8Array([
    0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00,
    ...section(1, [1, 0x60, k.nParams, ...new Array<number>(k.nParams).fill(I32), 0]),
    ...section(2, [1, ...name('env'), ...name('mem'), 0x02, ...memType]),
    ...section(3, [1, 0]),
    ...section(7, [1, ...name(k.name), 0x00, 0]),
    ...section(10, [1, ...uleb(body.length), ...body]),
  ]);
}

/** Compile kernel bytes, or null when this runtime lacks WebAssembly or rejects the module. */
export function compileKernel(bytes: Uint8Array): WasmModule | null {
  const api = wasmApi();
  if (api === null) return null;
  try {
    return api.validate(bytes) ? new api.Module(bytes) : null;
  } catch {
    return null;
  }
}

import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { Worker } from 'node:worker_threads';
import { threadBudget } from './threads.js';
import { VERSION } from './version.js';

/** One hashed input of a computation. */
export interface ProvenanceInput {
  /** A label or file path as given by the user. */
  readonly name: string;
  /** Lower-case hex SHA-256 of the input bytes. */
  readonly sha256: string;
  readonly bytes: number;
}

/** What produced an output: enough to rerun it and to detect changed inputs. */
export interface Provenance {
  readonly tool: 'tuningfork';
  readonly version: string;
  /** The operation that produced the output, e.g. 'simulateSession'. */
  readonly operation: string;
  /** Fully resolved options (defaults included). */
  readonly options: unknown;
  /** The seed, or null when the operation is deterministic without one. */
  readonly seed: number | null;
  readonly inputs: readonly ProvenanceInput[];
}

/** SHA-256 (hex) of bytes or of a UTF-8 string. */
export function sha256(data: Uint8Array | string): string {
  return createHash('sha256').update(data).digest('hex');
}

/** SHA-256 (hex) of a typed array's underlying bytes (platform byte order, little-endian here). */
export function sha256Typed(a: ArrayBufferView): string {
  return sha256(new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
}

/** Stream a file through SHA-256 without loading it whole. */
export async function sha256File(path: string): Promise<ProvenanceInput> {
  const h = createHash('sha256');
  let bytes = 0;
  for await (const chunk of createReadStream(path)) {
    h.update(chunk as Buffer);
    bytes += (chunk as Buffer).length;
  }
  return { name: path, sha256: h.digest('hex'), bytes };
}

/** The hashing thread of sha256FilesInBackground (CommonJS source, run with eval). */
const HASH_WORKER = `
const { parentPort, workerData } = require('node:worker_threads');
const { createHash } = require('node:crypto');
const { createReadStream } = require('node:fs');
(async () => {
  const out = [];
  for (const path of workerData) {
    const h = createHash('sha256');
    let bytes = 0;
    for await (const chunk of createReadStream(path)) { h.update(chunk); bytes += chunk.length; }
    out.push({ name: path, sha256: h.digest('hex'), bytes });
  }
  parentPort.postMessage({ ok: true, out });
})().catch((e) => parentPort.postMessage({ ok: false, message: String(e && e.message), code: e && e.code }));
`;

/**
 * Start hashing files (SHA-256, streamed) on a separate thread, so that the caller can read and
 * decode them meanwhile; await the promise for the same results as sha256File on each path, in
 * order. With a thread budget of 1 (TUNINGFORK_THREADS=1) the files are hashed on this thread,
 * interleaved with the caller's own asynchronous reads. The promise never rejects before it is awaited and handled: a failure
 * (e.g. a missing file) rejects it with the file system's error.
 */
export function sha256FilesInBackground(paths: readonly string[]): Promise<ProvenanceInput[]> {
  const list = [...paths];
  if (threadBudget() < 2 || list.length === 0) {
    const run = async () => {
      const out: ProvenanceInput[] = [];
      for (const p of list) out.push(await sha256File(p));
      return out;
    };
    const p = run();
    p.catch(() => {}); // handled by whoever awaits it
    return p;
  }
  const p = new Promise<ProvenanceInput[]>((resolve, reject) => {
    const w = new Worker(HASH_WORKER, { eval: true, workerData: list });
    w.once('message', (m: { ok: boolean; out?: ProvenanceInput[]; message?: string; code?: string }) => {
      void w.terminate();
      if (m.ok) resolve(m.out!);
      else reject(Object.assign(new Error(m.message), { code: m.code }));
    });
    w.once('error', reject);
    // A thread that ends without a message (killed, out of memory) must not leave the caller waiting.
    w.once('exit', (code) => reject(new Error(`sha256FilesInBackground: the hashing thread exited (code ${code}) before reporting`)));
  });
  p.catch(() => {}); // handled by whoever awaits it
  return p;
}

/** Hash an in-memory input under a label. */
export function hashInput(name: string, data: Uint8Array | string | ArrayBufferView): ProvenanceInput {
  if (typeof data === 'string') return { name, sha256: sha256(data), bytes: Buffer.byteLength(data) };
  const u8 = data instanceof Uint8Array ? data : new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  return { name, sha256: sha256(u8), bytes: u8.byteLength };
}

/** JSON with object keys sorted at every level, so equal content gives equal text and hash. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) => {
    if (v instanceof Float64Array || v instanceof Float32Array || v instanceof Int32Array || v instanceof Uint32Array) return Array.from(v);
    if (v && typeof v === 'object' && !Array.isArray(v)) {
      const o = v as Record<string, unknown>;
      return Object.fromEntries(Object.keys(o).sort().map((k) => [k, o[k]]));
    }
    return v;
  });
}

/** Build a provenance record. */
export function makeProvenance(operation: string, options: unknown, seed: number | null, inputs: readonly ProvenanceInput[] = []): Provenance {
  return { tool: 'tuningfork', version: VERSION, operation, options, seed, inputs };
}

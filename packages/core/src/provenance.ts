import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
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

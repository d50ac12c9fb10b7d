// Arrow IPC encoding of a merged table, one record batch per session. io's encodeArrow takes
// whole columns (string columns are encoded value by value, which for the session/animal/group
// labels of long per-sample tables costs seconds and gigabytes); here the numeric columns of each
// session are reused without copying and the label columns are built directly as Utf8 buffers.
import { Field, Float64, Int32, makeData, RecordBatch, Schema, Struct, Table, tableToIPC, Utf8 } from 'apache-arrow';
import type { Data, DataType } from 'apache-arrow';

/** The kind of a merged column. */
export type MergedKind = 'int' | 'float' | 'string';

/** One session's part of a merged table: its label values and its columns by name. */
export interface MergedPart {
  readonly rows: number;
  readonly labels: Readonly<Record<string, string>>;
  readonly numbers: Readonly<Record<string, Float64Array>>;
  readonly strings: Readonly<Record<string, readonly string[]>>;
}

/** Utf8 data holding `n` copies of one text. */
function repeatedUtf8(text: string, n: number): Data<Utf8> {
  const bytes = Buffer.from(text, 'utf8');
  const len = bytes.length;
  const values = new Uint8Array(len * n);
  for (let i = 0; i < n; i++) values.set(bytes, i * len);
  const offsets = new Int32Array(n + 1);
  for (let i = 0; i <= n; i++) offsets[i] = i * len;
  return makeData({ type: new Utf8(), length: n, nullCount: 0, valueOffsets: offsets, data: values });
}

/** Utf8 data of a string array, encoded into one buffer. */
function utf8(values: readonly string[]): Data<Utf8> {
  const n = values.length;
  const offsets = new Int32Array(n + 1);
  let total = 0;
  for (let i = 0; i < n; i++) {
    total += Buffer.byteLength(values[i]!, 'utf8');
    offsets[i + 1] = total;
  }
  const buf = Buffer.alloc(total);
  for (let i = 0; i < n; i++) buf.write(values[i]!, offsets[i]!, 'utf8');
  return makeData({ type: new Utf8(), length: n, nullCount: 0, valueOffsets: offsets, data: new Uint8Array(buf.buffer, buf.byteOffset, total) });
}

/**
 * Encode a merged table as Arrow IPC (file format): label columns first (Utf8), then `order`
 * with the unified kinds (Int32, Float64, Utf8); a column a session lacks is NaN or ''.
 */
export function encodeMergedArrow(labelNames: readonly string[], order: readonly string[], kinds: ReadonlyMap<string, MergedKind>, parts: readonly MergedPart[]): Uint8Array {
  const typeOf = (k: MergedKind): DataType => (k === 'int' ? new Int32() : k === 'float' ? new Float64() : new Utf8());
  const fields = [
    ...labelNames.map((n) => new Field(n, new Utf8(), false)),
    ...order.map((n) => new Field(n, typeOf(kinds.get(n)!), false)),
  ];
  const schema = new Schema(fields);
  const batches = parts.map((p) => {
    const n = p.rows;
    const children: Data[] = labelNames.map((l) => repeatedUtf8(p.labels[l] ?? '', n));
    for (const name of order) {
      const k = kinds.get(name)!;
      if (k === 'string') {
        children.push(p.strings[name] !== undefined ? utf8(p.strings[name]) : repeatedUtf8('', n));
      } else if (k === 'int') {
        children.push(makeData({ type: new Int32(), length: n, nullCount: 0, data: Int32Array.from(p.numbers[name]!) }));
      } else {
        const v = p.numbers[name] ?? new Float64Array(n).fill(NaN);
        children.push(makeData({ type: new Float64(), length: n, nullCount: 0, data: v }));
      }
    }
    return new RecordBatch(schema, makeData({ type: new Struct(fields), length: n, nullCount: 0, children }));
  });
  return tableToIPC(new Table(schema, batches), 'file');
}

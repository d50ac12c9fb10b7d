import { TuningforkError, type ResultWarning } from '@tuningfork/core';
import type { CsvTable } from '../csv/csv-options.js';
import { bindColumns, type BoundColumn, type NormalizedSpec } from './column-specs.js';
import { detectDelimiter, isBomPrefix, splitHeader } from './csv-header.js';
import { CELL_BAD, CELL_MISSING, POW10, classifyCell, decimalToDouble, isNullValue, makeNullTokens, type NullTokens } from './number-text.js';

const LF = 10;
const CR = 13;
const QUOTE = 34;
const SPACE = 32;
const TAB = 9;
const PLUS = 43;
const MINUS = 45;

const KIND_NUMBER = 1;
const KIND_STRING = 2;

/** Columns smaller than this are copied to an exact-length buffer at the end; larger ones are views. */
const COMPACT_BELOW_BYTES = 8 << 20;
/** Distinct strings remembered for interning (repeated event names and unit labels share one string). */
const INTERN_LIMIT = 1 << 16;
const INITIAL_ROWS = 1024;

/** Everything the parser needs to know, already validated. */
export interface CsvParserConfig {
  /** Public function name used in messages. */
  readonly fn: string;
  /** File path or label used in messages and in the result. */
  readonly file: string;
  readonly delimiter: 'auto' | ',' | '\t' | ';';
  readonly decimal: '.' | ',';
  /** Lines starting with this text are skipped; '' disables comments. */
  readonly commentPrefix: string;
  readonly nullTokens: readonly string[];
  /** Selected columns, or null for every column as a number. */
  readonly specs: readonly NormalizedSpec[] | null;
  /** Total size of the input in bytes when known (for the row-capacity estimate), else 0. */
  readonly expectedBytes: number;
  /** With `specs === null`, read every column as text instead of numbers. @defaultValue false */
  readonly allStrings?: boolean;
}

const EMPTY = Buffer.alloc(0);

/**
 * Incremental RFC 4180 parser over byte chunks (any chunk boundaries, including inside quoted
 * fields, numbers, multi-byte characters and CRLF pairs). `push` each chunk, then `finish`.
 *
 * A record that is incomplete at the end of a chunk is carried over and parsed again with the
 * next chunk; nothing of it is committed before it is complete, so values, strings and line
 * numbers never see half a record.
 */
export class CsvParser {
  private readonly cfg: CsvParserConfig;
  private readonly nulls: NullTokens;
  private readonly decimalComma: boolean;
  private readonly decByte: number;
  private readonly comment: Buffer;
  private readonly scratch = new Float64Array(1);
  private delim = -1;
  private phase = 0; // 0 BOM check, 1 header, 2 data
  private carry: Buffer | null = null;
  private pushed = 0;
  private base = 0;
  private line = 1;
  private afterCR = false;
  private fields: string[] = [];
  private bound: BoundColumn[] = [];
  private nFields = 0;
  private kinds = new Uint8Array(0);
  private slots = new Int32Array(0);
  private finite = new Uint8Array(0);
  private num: Float64Array[] = [];
  private str: string[][] = [];
  private pending: string[] = [];
  private cap = 0;
  private rows = 0;
  private dataStart = 0;
  private anchorRows: number[] = [];
  private anchorLines: number[] = [];
  private lastLine = -2;
  private readonly warnings: ResultWarning[] = [];
  private readonly intern = new Map<string, string>();
  private headerLine = 0;

  constructor(cfg: CsvParserConfig) {
    this.cfg = cfg;
    this.decimalComma = cfg.decimal === ',';
    this.nulls = makeNullTokens(cfg.nullTokens, this.decimalComma);
    this.decByte = cfg.decimal.charCodeAt(0);
    this.comment = Buffer.from(cfg.commentPrefix, 'utf8');
  }

  /** Feed the next chunk of bytes. */
  push(chunk: Uint8Array): void {
    if (chunk.length === 0) return;
    const before = this.pushed;
    this.pushed += chunk.length;
    let buf = Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    if (this.carry !== null) {
      const carry = this.carry;
      this.carry = null;
      // Usually the carried partial record ends at the chunk's first line end: join only that
      // much (a small copy) and parse the rest of the chunk in place.
      const lf = buf.indexOf(LF);
      const cr = buf.indexOf(CR);
      const k = lf < 0 ? cr : cr < 0 ? lf : Math.min(lf, cr);
      if (k >= 0 && k + 1 < buf.length) {
        const head = Buffer.concat([carry, buf.subarray(0, k + 1)]);
        this.base = before - carry.length;
        const done = this.consume(head, false);
        if (done === head.length) {
          buf = buf.subarray(k + 1);
          this.base = before + k + 1;
        } else {
          // The record goes on past that line end (a quoted line break): join the rest.
          buf = Buffer.concat([head.subarray(done), buf.subarray(k + 1)]);
          this.base = before - carry.length + done;
        }
      } else {
        buf = Buffer.concat([carry, buf]);
        this.base = this.pushed - buf.length;
      }
    } else this.base = before;
    const used = this.consume(buf, false);
    if (used < buf.length) this.carry = Buffer.from(buf.subarray(used));
  }

  /** Parse what is left and build the table. */
  finish(): CsvTable {
    const buf = this.carry ?? EMPTY;
    this.carry = null;
    this.base = this.pushed - buf.length;
    this.consume(buf, true);
    if (this.phase < 2) {
      throw new TuningforkError('TF_BAD_FILE', `${this.cfg.fn}: file '${this.cfg.file}' is empty: it has no header line${this.pushed > 0 ? ' (only blank lines, comments or a byte-order mark)' : ''}. Expected a header such as 'time,signal,control' followed by data rows.`, { fn: this.cfg.fn, file: this.cfg.file, bytes: this.pushed });
    }
    return this.build();
  }

  private consume(buf: Buffer, eof: boolean): number {
    let pos = 0;
    if (this.phase === 0) {
      if (buf.length < 3 && !eof && isBomPrefix(buf)) return 0;
      if (buf.length >= 3 && buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) pos = 3;
      this.phase = 1;
    }
    if (this.phase === 1) {
      pos = this.consumeHeader(buf, pos, eof);
      if (this.phase === 1) return pos;
    }
    return this.consumeData(buf, pos, eof);
  }

  /** Skip a CR's LF partner when the CR ended the previous buffer. */
  private skipPendingLF(buf: Buffer, pos: number): number {
    if (this.afterCR && pos < buf.length) {
      this.afterCR = false;
      if (buf[pos] === LF) return pos + 1;
    }
    return pos;
  }

  /**
   * At a record start: -2 when this is not a comment line, -1 when it cannot be decided or the
   * comment's end is not in the buffer yet, else the offset after the comment's line end.
   */
  private skipComment(buf: Buffer, pos: number, eof: boolean): number {
    const c = this.comment;
    const end = buf.length;
    for (let k = 0; k < c.length; k++) {
      if (pos + k >= end) return eof ? -2 : -1;
      if (buf[pos + k] !== c[k]) return -2;
    }
    return this.lineEnd(buf, pos + c.length, eof);
  }

  /** Offset after the next line end (LF, CR or CRLF) from pos, or -1 if not in the buffer yet. */
  private lineEnd(buf: Buffer, pos: number, eof: boolean): number {
    const end = buf.length;
    for (let p = pos; p < end; p++) {
      const b = buf[p];
      if (b === LF) return p + 1;
      if (b === CR) {
        if (p + 1 < end) return buf[p + 1] === LF ? p + 2 : p + 1;
        if (!eof) this.afterCR = true;
        return p + 1;
      }
    }
    return eof ? end : -1;
  }

  private consumeHeader(buf: Buffer, start: number, eof: boolean): number {
    const end = buf.length;
    let pos = start;
    for (;;) {
      pos = this.skipPendingLF(buf, pos);
      if (pos >= end) return pos;
      const b = buf[pos]!;
      if (b === LF || b === CR) {
        const next = this.lineEnd(buf, pos, eof);
        pos = next;
        this.line++;
        continue;
      }
      if (this.comment.length > 0) {
        const r = this.skipComment(buf, pos, eof);
        if (r === -1) return pos;
        if (r >= 0) {
          pos = r;
          this.line++;
          continue;
        }
      }
      break;
    }
    // Find the header record's end, honouring quotes.
    let p = pos;
    let inQuote = false;
    let newlines = 0;
    for (; p < end; p++) {
      const b = buf[p];
      if (b === QUOTE) inQuote = !inQuote;
      else if (!inQuote && (b === LF || b === CR)) break;
      else if (b === LF) newlines++;
    }
    if (p >= end && !eof) return pos;
    if (inQuote) this.fail('TF_BAD_FILE', `the header starting on line ${this.line} has an unterminated quoted field.`, { line: this.line });
    const headerBytes = buf.subarray(pos, p);
    this.delim = this.cfg.delimiter === 'auto' ? detectDelimiter(headerBytes, this.decimalComma) : this.cfg.delimiter.charCodeAt(0);
    const fields = splitHeader(headerBytes.toString('utf8'), String.fromCharCode(this.delim)).map((f) => f.trim());
    this.headerLine = this.line;
    this.line += 1 + newlines;
    let next = p;
    if (p < end) {
      if (buf[p] === CR) {
        if (p + 1 < end) next = buf[p + 1] === LF ? p + 2 : p + 1;
        else {
          next = p + 1;
          if (!eof) this.afterCR = true;
        }
      } else next = p + 1;
    }
    this.setup(fields);
    this.phase = 2;
    this.dataStart = this.base + next;
    return next;
  }

  private setup(fields: string[]): void {
    this.fields = fields;
    this.nFields = fields.length;
    this.bound = bindColumns(
      this.cfg.fn,
      this.cfg.file,
      fields,
      this.cfg.specs ?? (this.cfg.allStrings === true ? fields.map((name) => ({ name, as: name, type: 'string' as const, required: true, finite: false })) : null),
    );
    this.kinds = new Uint8Array(this.nFields); // 0: not selected, skipped
    this.slots = new Int32Array(this.nFields);
    this.finite = new Uint8Array(this.nFields);
    let nNum = 0;
    let nStr = 0;
    for (const b of this.bound) {
      if (b.type === 'number') {
        this.kinds[b.index] = KIND_NUMBER;
        this.slots[b.index] = nNum++;
        this.finite[b.index] = b.finite ? 1 : 0;
      } else {
        this.kinds[b.index] = KIND_STRING;
        this.slots[b.index] = nStr++;
      }
    }
    this.cap = INITIAL_ROWS;
    this.num = Array.from({ length: nNum }, () => new Float64Array(this.cap));
    this.str = Array.from({ length: nStr }, () => []);
    this.pending = new Array<string>(nStr).fill('');
  }

  private grow(absPos: number): void {
    const old = this.cap;
    let next = Math.ceil(old * (this.cfg.expectedBytes > 0 ? 1.5 : 2));
    if (this.cfg.expectedBytes > 0 && this.rows > 0) {
      const perRow = (absPos - this.dataStart) / this.rows;
      if (perRow > 0) {
        const estimate = this.rows + (this.cfg.expectedBytes - absPos) / perRow;
        next = Math.max(next, Math.ceil(estimate * 1.1) + INITIAL_ROWS);
      }
    }
    for (let k = 0; k < this.num.length; k++) {
      const a = new Float64Array(next);
      a.set(this.num[k]!.subarray(0, this.rows));
      this.num[k] = a;
    }
    this.cap = next;
  }

  private fail(code: 'TF_BAD_FILE' | 'TF_BAD_CELL' | 'TF_NON_FINITE', what: string, details: Record<string, unknown>): never {
    throw new TuningforkError(code, `${this.cfg.fn}: file '${this.cfg.file}', ${what}`, { fn: this.cfg.fn, file: this.cfg.file, ...details });
  }

  private cellError(field: number, line: number, text: string, kind: number): never {
    const column = this.fields[field]!;
    const where = `column '${column}', line ${line} (data row ${this.rows + 1})`;
    const shown = JSON.stringify(text.length > 60 ? `${text.slice(0, 57)}...` : text);
    const details = { column, line, row: this.rows, text };
    if (kind === CELL_BAD) {
      this.fail('TF_BAD_CELL', `${where}: cannot read ${shown} as a number. Expected a decimal number (decimal mark '${this.cfg.decimal}'), an empty cell or one of ${[...this.cfg.nullTokens].map((t) => `'${t}'`).join(', ')} for a missing value. Fix the cell, or add the text to nullTokens if it marks a missing value.`, details);
    }
    this.fail('TF_NON_FINITE', `${where}: the column must hold finite numbers but the cell is ${kind === CELL_MISSING ? 'missing' : shown}. Fill the cell, or drop finite: true for this column to read it as ${kind === CELL_MISSING ? 'NaN' : 'is'}.`, details);
  }

  /** Parse a quoted field starting at `pos` (the opening quote). Returns false when incomplete. */
  private quoted(buf: Buffer, pos: number, eof: boolean, out: { text: string; next: number; newlines: number }, line: number): boolean {
    const end = buf.length;
    let p = pos + 1;
    let escaped = false;
    for (;;) {
      const q = buf.indexOf(QUOTE, p);
      if (q < 0) {
        if (eof) this.fail('TF_BAD_FILE', `line ${line}: a quoted field is never closed (the file ends inside it). Close the quote or escape inner quotes as "".`, { line });
        return false;
      }
      if (q + 1 >= end && !eof) return false;
      if (buf[q + 1] === QUOTE) {
        escaped = true;
        p = q + 2;
        continue;
      }
      let text = buf.toString('utf8', pos + 1, q);
      if (escaped) text = text.replaceAll('""', '"');
      let newlines = 0;
      for (let i = pos + 1; i < q; i++) {
        const b = buf[i];
        if (b === LF || (b === CR && buf[i + 1] !== LF)) newlines++;
      }
      // Only blanks may follow the closing quote before the delimiter or line end.
      let n = q + 1;
      while (n < end && (buf[n] === SPACE || (buf[n] === TAB && this.delim !== TAB))) n++;
      if (n < end) {
        const b = buf[n];
        if (b !== this.delim && b !== LF && b !== CR) {
          this.fail('TF_BAD_FILE', `line ${line + newlines}: unexpected text after the closing quote of a quoted field (byte ${JSON.stringify(String.fromCharCode(b!))}). Quote the whole field and write inner quotes as "".`, { line: line + newlines });
        }
      } else if (!eof) return false;
      out.text = text;
      out.next = n;
      out.newlines = newlines;
      return true;
    }
  }

  private internString(s: string): string {
    const hit = this.intern.get(s);
    if (hit !== undefined) return hit;
    if (this.intern.size < INTERN_LIMIT) this.intern.set(s, s);
    return s;
  }

  private consumeData(buf: Buffer, start: number, eof: boolean): number {
    const end = buf.length;
    const delim = this.delim;
    const tabBlank = delim !== TAB;
    const dec = this.decByte;
    const nf = this.nFields;
    const kinds = this.kinds;
    const slots = this.slots;
    const finite = this.finite;
    const num = this.num;
    const pending = this.pending;
    const comment0 = this.comment.length > 0 ? this.comment[0]! : -1;
    const numericNulls = this.nulls.values.length > 0;
    const q = { text: '', next: 0, newlines: 0 };
    let pos = start;
    let line = this.line;
    records: while (pos < end) {
      if (this.afterCR) {
        this.afterCR = false;
        if (buf[pos] === LF) {
          pos++;
          continue;
        }
      }
      const recStart = pos;
      let c = buf[pos]!;
      if (c === LF) {
        pos++;
        line++;
        continue;
      }
      if (c === CR) {
        pos++;
        line++;
        if (pos < end) {
          if (buf[pos] === LF) pos++;
        } else if (!eof) this.afterCR = true;
        continue;
      }
      if (c === comment0) {
        const r = this.skipComment(buf, pos, eof);
        if (r === -1) break;
        if (r >= 0) {
          pos = r;
          line++;
          continue;
        }
      }
      if (this.rows === this.cap) this.grow(this.base + pos);
      const row = this.rows;
      let nl = 0;
      let f = 0;
      let terminated = false;
      for (;;) {
        const kind = kinds[f]!;
        const fieldStart = pos;
        if (pos < end && buf[pos] === QUOTE) {
          if (!this.quoted(buf, pos, eof, q, line + nl)) {
            pos = recStart;
            break records;
          }
          if (kind === KIND_NUMBER) {
            const k = classifyCell(q.text, this.decimalComma, this.nulls, this.scratch);
            let v = NaN;
            if (k === CELL_BAD) this.cellError(f, line + nl, q.text, k);
            if (k !== CELL_MISSING) v = this.scratch[0]!;
            if (finite[f] === 1 && !Number.isFinite(v)) this.cellError(f, line + nl, q.text, k);
            num[slots[f]!]![row] = v;
          } else if (kind === KIND_STRING) pending[slots[f]!] = this.internString(q.text);
          nl += q.newlines;
          pos = q.next;
        } else if (kind === KIND_NUMBER) {
          // Fast path: scan a decimal literal byte by byte.
          let p = pos;
          while (p < end && ((c = buf[p]!) === SPACE || (c === TAB && tabBlank))) p++;
          const numStart = p;
          let neg = false;
          if (p < end) {
            c = buf[p]!;
            if (c === MINUS) {
              neg = true;
              p++;
            } else if (c === PLUS) p++;
          }
          let mant = 0;
          let ext = 0;
          let nExt = 0;
          let digits = 0;
          let e10 = 0;
          let exact = true;
          while (p < end) {
            const d = buf[p]! - 48;
            if (d < 0 || d > 9) break;
            if (mant !== 0 || d !== 0) {
              // Up to 2^53 in mant (exact while the true value < 2^53), then 4 digits in ext.
              if (nExt === 0) {
                const next = mant * 10 + d;
                if (next <= 9007199254740991) mant = next;
                else {
                  ext = d;
                  nExt = 1;
                }
              } else if (nExt < 4) {
                ext = ext * 10 + d;
                nExt++;
              } else exact = false;
            }
            digits++;
            p++;
          }
          if (p < end && buf[p] === dec) {
            p++;
            while (p < end) {
              const d = buf[p]! - 48;
              if (d < 0 || d > 9) break;
              if (mant !== 0 || d !== 0) {
                if (nExt === 0) {
                  const next = mant * 10 + d;
                  if (next <= 9007199254740991) mant = next;
                  else {
                    ext = d;
                    nExt = 1;
                  }
                  e10--;
                } else if (nExt < 4) {
                  ext = ext * 10 + d;
                  nExt++;
                  e10--;
                } else exact = false;
              } else e10--;
              digits++;
              p++;
            }
          }
          let ok = digits > 0;
          if (ok && p < end && (buf[p]! | 0x20) === 101) {
            p++;
            let eneg = false;
            if (p < end) {
              c = buf[p]!;
              if (c === MINUS) {
                eneg = true;
                p++;
              } else if (c === PLUS) p++;
            }
            let ev = 0;
            let ed = 0;
            while (p < end) {
              const d = buf[p]! - 48;
              if (d < 0 || d > 9) break;
              if (ev < 100000) ev = ev * 10 + d;
              ed++;
              p++;
            }
            if (ed === 0) ok = false;
            e10 += eneg ? -ev : ev;
          }
          const numEnd = p;
          while (p < end && ((c = buf[p]!) === SPACE || (c === TAB && tabBlank))) p++;
          if (p < end) {
            c = buf[p]!;
            if (c !== delim && c !== LF && c !== CR) ok = false;
          } else if (!eof) {
            pos = recStart;
            break records;
          }
          if (ok) {
            let v: number;
            if (mant === 0 && exact) v = 0;
            else if (exact && e10 >= -22 && e10 <= 22) {
              if (nExt === 0) v = e10 >= 0 ? mant * POW10[e10]! : mant / POW10[-e10]!;
              else v = decimalToDouble(mant, ext, nExt, e10);
            } else v = NaN;
            if (v !== v) {
              const t = buf.toString('latin1', neg || buf[numStart] === PLUS ? numStart + 1 : numStart, numEnd);
              v = Number(this.decimalComma ? t.replace(',', '.') : t);
              if (finite[f] === 1 && !Number.isFinite(v)) this.cellError(f, line + nl, buf.toString('latin1', numStart, numEnd), 0);
            }
            if (neg) v = -v;
            if (numericNulls && isNullValue(this.nulls, v)) {
              v = NaN;
              if (finite[f] === 1) this.cellError(f, line + nl, '', CELL_MISSING);
            }
            num[slots[f]!]![row] = v;
            pos = p;
          } else {
            // Slow path: the whole field as text (empty, null token, Infinity, or bad).
            while (p < end && (c = buf[p]!) !== delim && c !== LF && c !== CR) p++;
            if (p >= end && !eof) {
              pos = recStart;
              break records;
            }
            const text = buf.toString('utf8', fieldStart, p);
            const k = classifyCell(text, this.decimalComma, this.nulls, this.scratch);
            if (k === CELL_BAD) this.cellError(f, line + nl, text, k);
            const v = k === CELL_MISSING ? NaN : this.scratch[0]!;
            if (finite[f] === 1 && !Number.isFinite(v)) this.cellError(f, line + nl, text, k);
            num[slots[f]!]![row] = v;
            pos = p;
          }
        } else {
          let p = pos;
          while (p < end && (c = buf[p]!) !== delim && c !== LF && c !== CR) p++;
          if (p >= end && !eof) {
            pos = recStart;
            break records;
          }
          if (kind === KIND_STRING) pending[slots[f]!] = this.internString(buf.toString('utf8', fieldStart, p));
          pos = p;
        }
        f++;
        if (pos >= end) break; // end of input (eof): an unterminated last record
        c = buf[pos]!;
        if (c === delim) {
          if (f === nf) {
            this.fail('TF_BAD_FILE', `line ${line + nl}: the record has more than the ${nf} fields of the header (line ${this.headerLine}). Remove the extra fields (a trailing '${String.fromCharCode(delim)}'?) or quote text containing '${String.fromCharCode(delim)}'.`, { line: line + nl, expected: nf });
          }
          pos++;
          continue;
        }
        pos++;
        if (c === CR) {
          if (pos < end) {
            if (buf[pos] === LF) pos++;
          } else if (!eof) this.afterCR = true;
        }
        terminated = true;
        break;
      }
      if (f < nf) {
        if (!terminated) {
          this.warnings.push({
            code: 'IO_TRUNCATED_LAST_LINE',
            message: `${this.cfg.fn}: file '${this.cfg.file}', line ${line}: the last line has ${f} of ${nf} fields and no line end (the file looks cut off); it was dropped.`,
            details: { file: this.cfg.file, line, fields: f, expected: nf },
          });
          pos = end;
          break;
        }
        this.fail('TF_BAD_FILE', `line ${line + nl}: the record has ${f} fields but the header (line ${this.headerLine}) has ${nf}. Every row needs a value (possibly empty) for every column.`, { line: line + nl, fields: f, expected: nf });
      }
      // Commit the record.
      for (let s = 0; s < pending.length; s++) this.str[s]!.push(pending[s]!);
      if (line !== this.lastLine + 1) {
        this.anchorRows.push(row);
        this.anchorLines.push(line);
      }
      this.lastLine = line;
      this.rows = row + 1;
      line += 1 + nl;
    }
    this.line = line;
    return pos;
  }

  private build(): CsvTable {
    const rows = this.rows;
    const columns: Record<string, Float64Array> = {};
    const strings: Record<string, string[]> = {};
    const nulls: Record<string, number> = {};
    for (const b of this.bound) {
      if (b.type === 'number') {
        const full = this.num[this.slots[b.index]!]!;
        const col = rows * 8 < COMPACT_BELOW_BYTES ? full.slice(0, rows) : full.subarray(0, rows);
        let missing = 0;
        for (let i = 0; i < rows; i++) if (col[i] !== col[i]) missing++;
        columns[b.as] = col;
        nulls[b.as] = missing;
      } else {
        const col = this.str[this.slots[b.index]!]!;
        let missing = 0;
        for (let i = 0; i < rows; i++) if (col[i] === '') missing++;
        strings[b.as] = col;
        nulls[b.as] = missing;
      }
    }
    return {
      source: this.cfg.file,
      rows,
      columns,
      strings,
      nulls,
      fields: this.fields,
      warnings: this.warnings,
      delimiter: String.fromCharCode(this.delim) as CsvTable['delimiter'],
      bytes: this.pushed,
      headerLine: this.headerLine,
      lineAnchors: { rows: Uint32Array.from(this.anchorRows), lines: Float64Array.from(this.anchorLines) },
    };
  }
}

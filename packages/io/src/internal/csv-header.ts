// Header-line helpers of the CSV parser: byte-order mark, delimiter detection, header splitting.

const QUOTE = 34;
const TAB = 9;

/** True when the bytes so far could be the start of a UTF-8 byte-order mark. */
export function isBomPrefix(buf: Buffer): boolean {
  const bom = [0xef, 0xbb, 0xbf];
  for (let i = 0; i < buf.length; i++) if (buf[i] !== bom[i]) return false;
  return true;
}

/** Pick the delimiter (',', tab or ';') that occurs most often outside quotes in the header. */
export function detectDelimiter(header: Uint8Array, decimalComma: boolean): number {
  let comma = 0;
  let tab = 0;
  let semi = 0;
  let inQuote = false;
  for (let i = 0; i < header.length; i++) {
    const b = header[i];
    if (b === QUOTE) inQuote = !inQuote;
    else if (!inQuote) {
      if (b === 44) comma++;
      else if (b === TAB) tab++;
      else if (b === 59) semi++;
    }
  }
  if (decimalComma) comma = -1;
  if (tab > comma && tab >= semi) return TAB;
  if (semi > comma && semi > tab) return 59;
  return decimalComma ? (semi >= tab && semi > 0 ? 59 : TAB) : 44;
}

/** Split one header record (RFC 4180 quoting) into field texts. */
export function splitHeader(text: string, delim: string): string[] {
  const out: string[] = [];
  let i = 0;
  for (;;) {
    let field = '';
    if (text[i] === '"') {
      i++;
      for (;;) {
        const q = text.indexOf('"', i);
        if (q < 0) {
          field += text.slice(i);
          i = text.length;
          break;
        }
        field += text.slice(i, q);
        if (text[q + 1] === '"') {
          field += '"';
          i = q + 2;
        } else {
          i = q + 1;
          break;
        }
      }
      const d = text.indexOf(delim, i);
      i = d < 0 ? text.length : d;
    } else {
      const d = text.indexOf(delim, i);
      field = text.slice(i, d < 0 ? text.length : d);
      i = d < 0 ? text.length : d;
    }
    out.push(field);
    if (i >= text.length) break;
    i++; // past the delimiter
  }
  return out;
}

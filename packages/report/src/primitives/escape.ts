/**
 * Escape a string for XML/HTML text or a double- or single-quoted attribute value.
 *
 * Replaces `&`, `<`, `>`, `"` and `'` by entity references, and replaces characters that XML 1.0
 * forbids (C0 controls other than tab, line feed and carriage return; lone UTF-16 surrogates;
 * U+FFFE and U+FFFF) by U+FFFD, so any user string (file, channel, event, unit or option text)
 * can be placed in SVG or HTML and still parse as text, never as markup.
 *
 * @param text - Any string; non-strings are converted with `String()` first.
 * @returns The escaped text.
 * @example
 * escapeXml('<img src=x onerror=alert(1)>') // '&lt;img src=x onerror=alert(1)&gt;'
 */
export function escapeXml(text: unknown): string {
  const s = typeof text === 'string' ? text : String(text);
  // Fast path: nothing to replace.
  if (!NEEDS_WORK.test(s)) return s;
  return s.replace(REPLACE, replaceOne);
}

// eslint-disable-next-line no-control-regex
const NEEDS_WORK = /[&<>"'\u0000-\u0008\u000B\u000C\u000E-\u001F\uD800-\uDFFF\uFFFE\uFFFF]/;
// Valid surrogate pairs are kept; lone surrogates and forbidden code units are replaced.
// eslint-disable-next-line no-control-regex
const REPLACE = /[&<>"']|[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF][\uDC00-\uDFFF]|[\uD800-\uDFFF]/g;

function replaceOne(ch: string): string {
  switch (ch) {
    case '&': return '&amp;';
    case '<': return '&lt;';
    case '>': return '&gt;';
    case '"': return '&quot;';
    case "'": return '&#39;';
    default: return ch.length === 2 ? ch : '\uFFFD';
  }
}

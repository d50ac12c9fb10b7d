import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { escapeXml } from '../src/index.js';
import { parseXml } from './support/xml.js';

describe('escapeXml', () => {
  // Reference: XML 1.0 (Fifth Edition), W3C 2008, §2.4 (markup characters) and §4.6 (predefined entities).
  it('escapeXml(text) replaces the five markup characters by the predefined entities', () => {
    expect(escapeXml(`<img src=x onerror=alert(1)>`)).toBe('&lt;img src=x onerror=alert(1)&gt;');
    expect(escapeXml(`a & b "c" 'd'`)).toBe('a &amp; b &quot;c&quot; &#39;d&#39;');
  });

  it('escapeXml(text) replaces characters XML 1.0 forbids (§2.2 Char production) by U+FFFD and keeps valid pairs', () => {
    expect(escapeXml('a\u0000b\u0008c\u000Bd\uFFFEe')).toBe('a\uFFFDb\uFFFDc\uFFFDd\uFFFDe');
    expect(escapeXml('tab\tnl\ncr\r')).toBe('tab\tnl\ncr\r');
    expect(escapeXml('lone \uD800 high, pair \uD83D\uDE00')).toBe('lone \uFFFD high, pair \uD83D\uDE00');
  });

  it('escapeXml(text) round-trips any string through an XML parser as text and as an attribute value', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 60 }), (s) => {
        const esc = escapeXml(s);
        const doc = parseXml(`<r a="${esc}" b='${esc}'>${esc}</r>`);
        // Expected: the input with forbidden characters replaced, as XML 1.0 §2.2 requires.
        const expected = s.replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g, '\uFFFD');
        expect(doc.text).toBe(expected);
        expect(doc.attrs.get('a')).toBe(expected);
        expect(doc.attrs.get('b')).toBe(expected);
      }),
      { seed: 11, numRuns: 300 },
    );
  });
});

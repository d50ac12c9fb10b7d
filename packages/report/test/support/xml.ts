/**
 * A small strict XML 1.0 well-formedness checker and tree builder, for tests (no dependencies).
 *
 * Checks: one root element; matching, properly nested tags; names per the XML Name production
 * (ASCII subset plus any non-ASCII letter); unique attribute names per element; quoted attribute
 * values without '<'; only the five predefined entities and numeric character references (valid
 * code points); no ']]>' in text; comments without '--'; CDATA sections; processing instructions;
 * the XML declaration only at the very start; a DOCTYPE is rejected (SVG fragments need none);
 * namespace prefixes of element and attribute names must be declared (xmlns:p) in scope, and the
 * xml prefix is predefined. Throws an Error naming the offset and problem.
 */
export interface XmlElement {
  readonly name: string;
  readonly attrs: Map<string, string>;
  readonly children: XmlElement[];
  /** Concatenated text content directly inside this element (entities decoded). */
  text: string;
}

const NAME_START = /[A-Za-z_:\u00C0-\uFFFF]/;
const NAME_CHAR = /[A-Za-z0-9_:.\-\u00B7\u00C0-\uFFFF]/;

function isXmlChar(cp: number): boolean {
  return cp === 0x9 || cp === 0xa || cp === 0xd || (cp >= 0x20 && cp <= 0xd7ff) || (cp >= 0xe000 && cp <= 0xfffd) || (cp >= 0x10000 && cp <= 0x10ffff);
}

export function parseXml(src: string): XmlElement {
  let i = 0;
  const fail = (msg: string): never => {
    const line = src.slice(0, i).split('\n').length;
    throw new Error(`XML not well-formed at offset ${i} (line ${line}): ${msg}; near ${JSON.stringify(src.slice(Math.max(0, i - 40), i + 40))}`);
  };
  for (let k = 0; k < src.length; k++) {
    const cp = src.codePointAt(k)!;
    if (cp > 0xffff) k++;
    else if (cp >= 0xd800 && cp <= 0xdfff) { i = k; fail('lone surrogate'); }
    if (!isXmlChar(cp)) { i = k; fail(`character U+${cp.toString(16)} not allowed in XML`); }
  }
  const readName = (): string => {
    const s = i;
    if (i >= src.length || !NAME_START.test(src[i]!)) fail('expected a name');
    i++;
    while (i < src.length && NAME_CHAR.test(src[i]!)) i++;
    return src.slice(s, i);
  };
  const skipWs = () => {
    while (i < src.length && /[ \t\r\n]/.test(src[i]!)) i++;
  };
  const decode = (raw: string, where: string): string => {
    let out = '';
    let k = 0;
    while (k < raw.length) {
      const amp = raw.indexOf('&', k);
      if (amp < 0) { out += raw.slice(k); break; }
      out += raw.slice(k, amp);
      const semi = raw.indexOf(';', amp);
      if (semi < 0) fail(`unterminated entity reference in ${where}`);
      const ent = raw.slice(amp + 1, semi);
      if (ent === 'amp') out += '&';
      else if (ent === 'lt') out += '<';
      else if (ent === 'gt') out += '>';
      else if (ent === 'quot') out += '"';
      else if (ent === 'apos') out += "'";
      else if (/^#[0-9]+$/.test(ent) || /^#x[0-9a-fA-F]+$/.test(ent)) {
        const cp = ent[1] === 'x' ? parseInt(ent.slice(2), 16) : parseInt(ent.slice(1), 10);
        if (!isXmlChar(cp)) fail(`character reference &${ent}; is not a valid XML character`);
        out += String.fromCodePoint(cp);
      } else fail(`undefined entity &${ent}; in ${where}`);
      k = semi + 1;
    }
    return out;
  };
  const nsStack: Set<string>[] = [new Set(['xml', 'xmlns'])];
  const checkPrefix = (name: string, scope: Set<string>) => {
    const c = name.indexOf(':');
    if (c < 0) return;
    if (c === 0 || c === name.length - 1 || name.indexOf(':', c + 1) >= 0) fail(`bad qualified name ${name}`);
    const p = name.slice(0, c);
    if (!scope.has(p)) fail(`namespace prefix '${p}' of ${name} is not declared`);
  };
  // Prolog
  if (src.startsWith('<?xml')) {
    const e = src.indexOf('?>');
    if (e < 0) fail('unterminated XML declaration');
    i = e + 2;
  }
  const misc = () => {
    for (;;) {
      skipWs();
      if (src.startsWith('<!--', i)) comment();
      else if (src.startsWith('<?', i)) pi();
      else return;
    }
  };
  const comment = () => {
    const e = src.indexOf('-->', i + 4);
    if (e < 0) fail('unterminated comment');
    if (src.slice(i + 4, e).includes('--')) fail("'--' inside a comment");
    i = e + 3;
  };
  const pi = () => {
    i += 2;
    const target = readName();
    if (target.toLowerCase() === 'xml') fail('XML declaration not at the start');
    const e = src.indexOf('?>', i);
    if (e < 0) fail('unterminated processing instruction');
    i = e + 2;
  };
  misc();
  if (src.startsWith('<!DOCTYPE', i)) fail('DOCTYPE not expected');
  if (src[i] !== '<') fail('expected the root element');
  const root = element();
  misc();
  if (i !== src.length) fail('content after the root element');
  return root;

  function element(): XmlElement {
    i++; // '<'
    const name = readName();
    const attrs = new Map<string, string>();
    const scope = new Set(nsStack[nsStack.length - 1]);
    const rawAttrs: [string, string][] = [];
    for (;;) {
      const before = i;
      skipWs();
      if (src.startsWith('/>', i) || src[i] === '>') break;
      if (i === before) fail('expected whitespace before an attribute');
      const an = readName();
      skipWs();
      if (src[i] !== '=') fail(`expected '=' after attribute ${an}`);
      i++;
      skipWs();
      const q = src[i];
      if (q !== '"' && q !== "'") fail(`attribute ${an} value must be quoted`);
      const e = src.indexOf(q!, i + 1);
      if (e < 0) fail(`unterminated value of attribute ${an}`);
      const raw = src.slice(i + 1, e);
      if (raw.includes('<')) fail(`'<' inside the value of attribute ${an}`);
      if (attrs.has(an)) fail(`duplicate attribute ${an} on <${name}>`);
      const val = decode(raw, `attribute ${an}`);
      attrs.set(an, val);
      rawAttrs.push([an, val]);
      i = e + 1;
      if (an.startsWith('xmlns:')) {
        if (val === '') fail(`empty namespace for ${an}`);
        scope.add(an.slice(6));
      }
    }
    checkPrefix(name, scope);
    for (const [an] of rawAttrs) if (!an.startsWith('xmlns')) checkPrefix(an, scope);
    const el: XmlElement = { name, attrs, children: [], text: '' };
    if (src.startsWith('/>', i)) {
      i += 2;
      return el;
    }
    i++; // '>'
    nsStack.push(scope);
    for (;;) {
      const lt = src.indexOf('<', i);
      if (lt < 0) fail(`unclosed element <${name}>`);
      const text = src.slice(i, lt);
      if (text.includes(']]>')) fail("']]>' in text");
      if (text.includes('&')) el.text += decode(text, 'text');
      else el.text += text;
      i = lt;
      if (src.startsWith('</', i)) {
        i += 2;
        const end = readName();
        if (end !== name) fail(`end tag </${end}> does not match <${name}>`);
        skipWs();
        if (src[i] !== '>') fail(`expected '>' in end tag </${end}>`);
        i++;
        nsStack.pop();
        return el;
      }
      if (src.startsWith('<!--', i)) comment();
      else if (src.startsWith('<![CDATA[', i)) {
        const e = src.indexOf(']]>', i);
        if (e < 0) fail('unterminated CDATA');
        el.text += src.slice(i + 9, e);
        i = e + 3;
      } else if (src.startsWith('<?', i)) pi();
      else if (src.startsWith('<!', i)) fail('markup declaration inside content');
      else el.children.push(element());
    }
  }
}

/** All descendant elements (depth first, document order), optionally filtered. */
export function descendants(el: XmlElement, pred: (e: XmlElement) => boolean = () => true): XmlElement[] {
  const out: XmlElement[] = [];
  const walk = (e: XmlElement) => {
    for (const c of e.children) {
      if (pred(c)) out.push(c);
      walk(c);
    }
  };
  walk(el);
  return out;
}

/** Text of an element and all its descendants. */
export function allText(el: XmlElement): string {
  return el.text + el.children.map(allText).join('');
}

/** Elements whose class attribute contains `cls`. */
export function byClass(el: XmlElement, cls: string): XmlElement[] {
  return descendants(el, (e) => (e.attrs.get('class') ?? '').split(/\s+/).includes(cls));
}

/**
 * The cell grammar of tuningfork's tabular readers, shared by the byte-level CSV fast path and
 * the string slow path: optional blanks (space, tab), then a decimal literal
 * `[+-]digits[.digits][(e|E)[+-]digits]` (either side of the decimal mark may be empty, not
 * both) or `[+-]Infinity`, then optional blanks. Values are exactly what `Number(text)` gives
 * for that text (with a decimal comma read as a point). Hexadecimal, binary, octal and
 * underscore forms, which `Number` also accepts, are not table numbers and are rejected.
 */

/** 10^0 … 10^22: every one is exactly representable as a double (Clinger 1990 fast path). */
export const POW10 = new Float64Array([
  1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
  1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
]);

const DECIMAL_POINT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const DECIMAL_COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;
const INFINITY = /^[+-]?Infinity$/;

/** classifyCell result: a number was parsed into out[0]. */
export const CELL_NUMBER = 0;
/** classifyCell result: the cell is empty or a null token. */
export const CELL_MISSING = 1;
/** classifyCell result: the cell is not a number. */
export const CELL_BAD = 2;

/** Remove leading and trailing spaces and tabs (the only blanks the grammar allows). */
export function trimBlanks(text: string): string {
  let a = 0;
  let b = text.length;
  while (a < b && (text.charCodeAt(a) === 32 || text.charCodeAt(a) === 9)) a++;
  while (b > a && (text.charCodeAt(b - 1) === 32 || text.charCodeAt(b - 1) === 9)) b--;
  return a === 0 && b === text.length ? text : text.slice(a, b);
}

/**
 * Null tokens, split into texts (matched after trimming blanks) and the values of tokens that
 * are themselves numbers (e.g. '-999'), which match any cell of equal value ('-999.0' too).
 */
export interface NullTokens {
  readonly texts: ReadonlySet<string>;
  readonly values: Float64Array;
}

/** Build NullTokens from the option list. */
export function makeNullTokens(tokens: readonly string[], decimalComma: boolean): NullTokens {
  const texts = new Set<string>();
  const values: number[] = [];
  const re = decimalComma ? DECIMAL_COMMA : DECIMAL_POINT;
  for (const tok of tokens) {
    const t = trimBlanks(tok);
    if (re.test(t)) values.push(Number(decimalComma ? t.replace(',', '.') : t));
    else texts.add(t);
  }
  return { texts, values: Float64Array.from(values) };
}

/** True when `v` equals the value of a numeric null token. */
export function isNullValue(nulls: NullTokens, v: number): boolean {
  const vals = nulls.values;
  for (let i = 0; i < vals.length; i++) if (vals[i] === v) return true;
  return false;
}

/**
 * Classify and parse one cell. On `CELL_NUMBER` the value is in `out[0]`.
 *
 * @param text - Cell text (already unquoted).
 * @param decimalComma - True when the decimal mark is ','.
 * @param nulls - Null tokens; the empty text (after trimming blanks) is always missing.
 */
export function classifyCell(text: string, decimalComma: boolean, nulls: NullTokens, out: Float64Array): number {
  const t = trimBlanks(text);
  if (t.length === 0 || nulls.texts.has(t)) return CELL_MISSING;
  if ((decimalComma ? DECIMAL_COMMA : DECIMAL_POINT).test(t)) {
    const v = Number(decimalComma ? t.replace(',', '.') : t);
    if (nulls.values.length > 0 && isNullValue(nulls, v)) return CELL_MISSING;
    out[0] = v;
    return CELL_NUMBER;
  }
  if (INFINITY.test(t)) {
    out[0] = t.charCodeAt(0) === 45 ? -Infinity : Infinity;
    return CELL_NUMBER;
  }
  return CELL_BAD;
}

const SPLIT = 134217729; // 2^27 + 1, Veltkamp splitting constant
const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);

/** Dekker's exact product: a·b = p + returned error (no overflow for |a·b| < 2^996). */
function productError(a: number, b: number, p: number): number {
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  return ((ah * bh - p) + ah * bl + al * bh) + al * bl;
}

/**
 * Correctly rounded value of the decimal (mant·10^nExt + ext)·10^e10 for mant < 2^53,
 * ext < 10^nExt ≤ 10^4 and |e10| ≤ 22, or NaN when double-double precision cannot decide the
 * rounding (the caller then uses Number on the text).
 *
 * Method: the integer mantissa (≤ 67 bits) is formed exactly as a double-double (Dekker 1971
 * product, Knuth 1969 sum), multiplied or divided by the exact double 10^|e10| with error
 * below 2^-103 of the result, and renormalised to hi + lo with |lo| ≤ ulp(hi)/2. hi is the
 * correctly rounded value unless hi + lo lies within 2^-96·|hi| of a rounding boundary
 * (half an ulp; a quarter above a power of two), which is reported as NaN.
 *
 * References
 * - Dekker, T. J. (1971). A floating-point technique for extending the available precision.
 *   Numerische Mathematik 18:224–242. doi:10.1007/BF01397083
 * - Clinger, W. D. (1990). How to read floating point numbers accurately. PLDI '90, 92–101.
 *   doi:10.1145/93542.93557
 */
export function decimalToDouble(mant: number, ext: number, nExt: number, e10: number): number {
  // m = mant·10^nExt + ext, exactly, as mh + ml.
  const scale = POW10[nExt]!;
  const p = mant * scale;
  const pe = productError(mant, scale, p);
  let mh = p + ext;
  const bb = mh - p;
  let ml = (p - (mh - bb)) + (ext - bb) + pe;
  const s = mh + ml;
  ml = ml - (s - mh);
  mh = s;
  let hi: number;
  let lo: number;
  if (e10 >= 0) {
    const b = POW10[e10]!;
    const q = mh * b;
    const qe = productError(mh, b, q) + ml * b;
    hi = q + qe;
    lo = qe - (hi - q);
  } else {
    const b = POW10[-e10]!;
    const q1 = mh / b;
    const r = q1 * b;
    const re = productError(q1, b, r);
    const rem = ((mh - r) - re) + ml;
    const q2 = rem / b;
    hi = q1 + q2;
    lo = q2 - (hi - q1);
  }
  F64[0] = hi;
  const exp = (U32[1]! >>> 20) & 0x7ff;
  if (exp <= 53 || exp === 0x7ff) return NaN;
  const powerOfTwo = (U32[1]! & 0xfffff) === 0 && U32[0] === 0;
  U32[1] = (exp - 53) << 20; // 2^(exp − 1076) = ulp(hi) / 2
  U32[0] = 0;
  const halfUlp = F64[0]!;
  const boundary = powerOfTwo && (lo < 0) === (hi > 0) ? halfUlp / 2 : halfUlp;
  const margin = Math.abs(hi) * 1.262177448353619e-29; // 2^-96
  return Math.abs(lo) + margin < boundary ? hi : NaN;
}

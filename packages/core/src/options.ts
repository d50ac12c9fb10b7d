import { TuningforkError } from './errors.js';

/** Levenshtein distance, for "did you mean" hints. */
function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  let prev = new Int32Array(n + 1);
  let cur = new Int32Array(n + 1);
  for (let j = 0; j <= n; j++) prev[j] = j;
  for (let i = 1; i <= m; i++) {
    cur[0] = i;
    for (let j = 1; j <= n; j++) {
      const cost = a.charCodeAt(i - 1) === b.charCodeAt(j - 1) ? 0 : 1;
      cur[j] = Math.min(prev[j]! + 1, cur[j - 1]! + 1, prev[j - 1]! + cost);
    }
    [prev, cur] = [cur, prev];
  }
  return prev[n]!;
}

/** The closest known key to `key`, or undefined when none is reasonably close. */
export function closestKey(key: string, known: readonly string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  for (const k of known) {
    const d = editDistance(key.toLowerCase(), k.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = k;
    }
  }
  return bestD <= Math.max(2, Math.floor(key.length / 3)) ? best : undefined;
}

type Resolved<D, O> = { readonly [K in keyof D]: K extends keyof O ? Exclude<O[K], undefined> | D[K] : D[K] };

/**
 * Merge user options over frozen defaults, rejecting unknown keys.
 *
 * Keys whose value is `undefined` fall back to the default. An unknown key throws
 * `TF_UNKNOWN_OPTION` with a "did you mean" hint, so a typo never silently uses a default.
 *
 * @param fn - Name of the calling function, used in the message.
 * @param defaults - Every known key with its default value.
 * @param options - The caller's options (may be undefined).
 * @throws {TuningforkError} TF_UNKNOWN_OPTION, TF_BAD_OPTION (options not an object).
 */
export function resolveOptions<D extends object, O extends object>(
  fn: string,
  defaults: D,
  options: O | undefined,
): Resolved<D, O> {
  if (options === undefined || options === null) return { ...defaults } as Resolved<D, O>;
  if (typeof options !== 'object' || Array.isArray(options)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: options must be an object, got ${Array.isArray(options) ? 'an array' : typeof options}.`, { fn });
  }
  const known = Object.keys(defaults);
  const out: Record<string, unknown> = { ...(defaults as Record<string, unknown>) };
  for (const [k, v] of Object.entries(options)) {
    if (!Object.prototype.hasOwnProperty.call(defaults, k)) {
      const hint = closestKey(k, known);
      throw new TuningforkError(
        'TF_UNKNOWN_OPTION',
        `${fn}: unknown option '${k}'.${hint ? ` Did you mean '${hint}'?` : ''} Known options: ${known.join(', ')}.`,
        { fn, option: k, ...(hint ? { suggestion: hint } : {}) },
      );
    }
    if (v !== undefined) out[k] = v;
  }
  return out as Resolved<D, O>;
}

function fail(fn: string, name: string, value: unknown, expected: string): never {
  throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be ${expected}, got ${formatValue(value)}.`, { fn, option: name, value });
}

/** Short printable form of a value for error messages. */
export function formatValue(v: unknown): string {
  if (typeof v === 'string') return JSON.stringify(v.length > 60 ? `${v.slice(0, 57)}...` : v);
  if (typeof v === 'number' || typeof v === 'boolean' || v === null || v === undefined) return String(v);
  if (Array.isArray(v)) return `an array of length ${v.length}`;
  return typeof v;
}

/** Require a finite number. @throws TF_BAD_OPTION */
export function checkFinite(fn: string, name: string, v: unknown): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(fn, name, v, 'a finite number');
  return v;
}
/** Require a finite number > 0. @throws TF_BAD_OPTION */
export function checkPositive(fn: string, name: string, v: unknown): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) fail(fn, name, v, 'a finite number > 0');
  return v;
}
/** Require a finite number ≥ 0. @throws TF_BAD_OPTION */
export function checkNonNegative(fn: string, name: string, v: unknown): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) fail(fn, name, v, 'a finite number ≥ 0');
  return v;
}
/** Require an integer in [min, max]. @throws TF_BAD_OPTION */
export function checkInteger(fn: string, name: string, v: unknown, min = -Infinity, max = Infinity): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < min || v > max) {
    const range = max === Infinity ? `≥ ${min}` : `in [${min}, ${max}]`;
    fail(fn, name, v, `an integer ${range}`);
  }
  return v;
}
/** Require a finite number in [min, max]. @throws TF_BAD_OPTION */
export function checkRange(fn: string, name: string, v: unknown, min: number, max: number): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v < min || v > max) fail(fn, name, v, `a number in [${min}, ${max}]`);
  return v;
}
/** Require one of the listed string values. @throws TF_BAD_OPTION */
export function checkOneOf<T extends string>(fn: string, name: string, v: unknown, allowed: readonly T[]): T {
  if (typeof v !== 'string' || !(allowed as readonly string[]).includes(v)) {
    fail(fn, name, v, `one of ${allowed.map((a) => `'${a}'`).join(', ')}`);
  }
  return v as T;
}
/** Require a boolean. @throws TF_BAD_OPTION */
export function checkBoolean(fn: string, name: string, v: unknown): boolean {
  if (typeof v !== 'boolean') fail(fn, name, v, 'true or false');
  return v;
}

import { readFileSync } from 'node:fs';
import { dirname, isAbsolute, resolve } from 'node:path';

/** Options of expectAllClose: numpy-style |actual − expected| ≤ atol + rtol·|expected|. */
export interface AllCloseOptions {
  /** Relative tolerance. @defaultValue 1e-12 */
  rtol?: number;
  /** Absolute tolerance. @defaultValue 0 */
  atol?: number;
  /** Where the expected values come from; printed on failure. */
  source?: unknown;
  /** Label printed on failure. */
  label?: string;
}

/**
 * Assert two numeric arrays are element-wise close (numpy `allclose` rule). NaN, ±Infinity and −0
 * must match exactly (`Object.is`, with +0/−0 considered equal only when atol > 0). On failure, the
 * error names the worst index, both values and the source of the expected values.
 */
export function expectAllClose(actual: ArrayLike<number> | number, expected: ArrayLike<number> | number, options: AllCloseOptions = {}): void {
  const rtol = options.rtol ?? 1e-12;
  const atol = options.atol ?? 0;
  const a = typeof actual === 'number' ? [actual] : actual;
  const e = typeof expected === 'number' ? [expected] : expected;
  const where = `${options.label ? `${options.label}: ` : ''}${options.source !== undefined ? ` (source: ${JSON.stringify(options.source)})` : ''}`;
  if (a.length !== e.length) throw new Error(`expectAllClose${where}: length ${a.length} ≠ expected ${e.length}`);
  let worst = -1;
  let worstExcess = 0;
  for (let i = 0; i < a.length; i++) {
    const x = a[i]!;
    const y = e[i]!;
    if (Object.is(x, y)) continue;
    if (!Number.isFinite(x) || !Number.isFinite(y)) {
      worst = i;
      worstExcess = Infinity;
      break;
    }
    const excess = Math.abs(x - y) - (atol + rtol * Math.abs(y));
    if (excess > 0 && excess > worstExcess) {
      worstExcess = excess;
      worst = i;
    }
  }
  if (worst >= 0) {
    throw new Error(
      `expectAllClose${where}: index ${worst}: actual ${a[worst]} vs expected ${e[worst]} ` +
        `(|diff| = ${Math.abs(a[worst]! - e[worst]!)}, allowed ${atol} + ${rtol}·|expected|)`,
    );
  }
}

/** A loaded JSON fixture: numeric arrays come back as Float64Array, `source` kept as is. */
export type Fixture = Record<string, any> & { source: unknown };

function revive(v: unknown, key: string): unknown {
  if (key === 'source') return v;
  if (Array.isArray(v)) {
    if (v.length > 0 && v.every((x) => typeof x === 'number' || x === null)) {
      return Float64Array.from(v as (number | null)[], (x) => (x === null ? NaN : x));
    }
    return v.map((x, i) => revive(x, String(i)));
  }
  if (v && typeof v === 'object') {
    return Object.fromEntries(Object.entries(v as Record<string, unknown>).map(([k, x]) => [k, revive(x, k)]));
  }
  return v;
}

/**
 * Load a JSON fixture. Relative paths resolve against `baseDir` (pass `import.meta.dirname` or
 * a test's fixtures folder). Numeric arrays become Float64Array (null → NaN); strings "NaN",
 * "Infinity" and "-Infinity" inside numeric arrays are not supported: write null for NaN.
 */
export function loadFixture(path: string, baseDir?: string): Fixture {
  const full = isAbsolute(path) || baseDir === undefined ? path : resolve(baseDir, path);
  const raw = JSON.parse(readFileSync(full, 'utf8')) as Record<string, unknown>;
  return revive(raw, '') as Fixture;
}

/** Directory of a module URL (for `loadFixture(…, here(import.meta.url))`). */
export function here(metaUrl: string): string {
  return dirname(new URL(metaUrl).pathname);
}

/** Pearson correlation of two equal-length arrays (NaN pairs skipped). Test helper only. */
export function correlation(x: ArrayLike<number>, y: ArrayLike<number>): number {
  let n = 0, mx = 0, my = 0;
  for (let i = 0; i < x.length; i++) {
    if (Number.isNaN(x[i]) || Number.isNaN(y[i])) continue;
    n++;
    mx += (x[i]! - mx) / n;
    my += (y[i]! - my) / n;
  }
  let sxx = 0, syy = 0, sxy = 0;
  for (let i = 0; i < x.length; i++) {
    if (Number.isNaN(x[i]) || Number.isNaN(y[i])) continue;
    const dx = x[i]! - mx, dy = y[i]! - my;
    sxx += dx * dx; syy += dy * dy; sxy += dx * dy;
  }
  return sxy / Math.sqrt(sxx * syy);
}

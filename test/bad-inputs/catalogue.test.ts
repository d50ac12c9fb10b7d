import { describe, expect, it } from 'vitest';
import { isTuningforkError } from '@tuningfork/core';
import { CATALOGUE } from './catalogue.js';

/** Warning codes anywhere in a result (result.warnings, nested results' warnings). */
function warningCodes(x: unknown, seen = new Set<unknown>()): string[] {
  if (!x || typeof x !== 'object' || seen.has(x) || ArrayBuffer.isView(x)) return [];
  seen.add(x);
  const out: string[] = [];
  const w = (x as { warnings?: unknown }).warnings;
  if (Array.isArray(w)) for (const y of w) if (y && typeof y === 'object' && typeof (y as { code?: unknown }).code === 'string') out.push((y as { code: string }).code);
  for (const v of Object.values(x)) if (v && typeof v === 'object' && !ArrayBuffer.isView(v)) out.push(...warningCodes(v, seen));
  return out;
}

describe('bad-input catalogue', () => {
  it('holds at least 40 cases with unique ids across every area', () => {
    expect(CATALOGUE.length).toBeGreaterThanOrEqual(40);
    expect(new Set(CATALOGUE.map((c) => c.id)).size).toBe(CATALOGUE.length);
    expect(new Set(CATALOGUE.map((c) => c.area))).toEqual(new Set(['ingest', 'manifest', 'events', 'alignment', 'statistics', 'models', 'reports', 'simulation']));
  });

  for (const c of CATALOGUE) {
    const e = c.expect;
    it(`${c.id}: ${c.what} → ${'code' in e ? e.code : `repair reported (${e.warning})`}`, async () => {
      let result: unknown;
      let error: unknown;
      try {
        result = await c.run();
      } catch (err) {
        error = err;
      }
      if ('code' in e) {
        expect(error, `expected ${e.code}, got ${error ? String(error) : 'no error'}`).toBeDefined();
        expect(isTuningforkError(error), `not a TuningforkError: ${String(error)}`).toBe(true);
        expect((error as { code: string }).code).toBe(e.code);
        expect((error as Error).message.length).toBeGreaterThan(20);
      } else {
        expect(error, `expected a repair, got ${String(error)}`).toBeUndefined();
        if (e.warning !== 'escaped') expect(warningCodes(result)).toContain(e.warning);
        e.check?.(result);
      }
    });
  }
});

import { rng } from '@tuningfork/core';

/**
 * Seed of one session of a batch, derived from the batch seed and the session id:
 * `rng(batchSeed).streamNamed('session/' + id).nextUint32()`, an integer in [0, 2^32).
 *
 * Keyed by id (not by position), so adding or removing sessions never changes the seed of the
 * others, and their finished outputs stay valid; and a session gets the same seed whether it
 * runs serially, in a child process or in any shard of a job array.
 */
export function sessionSeed(batchSeed: number, sessionId: string): number {
  return rng(batchSeed).streamNamed(`session/${sessionId}`).nextUint32();
}

/**
 * Merge analysis options: later sources override earlier ones; plain objects are merged key by
 * key (recursively), anything else (numbers, strings, arrays) is replaced.
 */
export function mergeOptions(...sources: readonly Readonly<Record<string, unknown>>[]): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const src of sources) {
    for (const [k, v] of Object.entries(src)) {
      const prev = out[k];
      const isObj = (x: unknown): x is Record<string, unknown> => x !== null && typeof x === 'object' && !Array.isArray(x);
      out[k] = isObj(prev) && isObj(v) ? mergeOptions(prev, v) : v;
    }
  }
  return out;
}

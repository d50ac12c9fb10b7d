import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseShard, selectShard, shardFromEnv } from '../src/index.js';

describe('parseShard', () => {
  it("reads 'i/n' (0-based), 'none' and 'auto'", () => {
    expect(parseShard('0/4', {})).toEqual({ index: 0, count: 4, source: 'argument' });
    expect(parseShard(' 3/4 ', {})).toEqual({ index: 3, count: 4, source: 'argument' });
    expect(parseShard('none', { SLURM_ARRAY_TASK_ID: '1', SLURM_ARRAY_TASK_COUNT: '2' })).toBeNull();
    expect(parseShard('auto', {})).toBeNull();
    expect(parseShard('auto', { SLURM_ARRAY_TASK_ID: '1', SLURM_ARRAY_TASK_COUNT: '2' })).toEqual({ index: 1, count: 2, source: 'slurm' });
  });

  it('rejects an index outside 0…n−1, n = 0 and other text with TF_BAD_OPTION', () => {
    for (const bad of ['4/4', '1/0', '-1/2', '1/2/3', 'a/b', '', '1', '1.5/3']) {
      expect(() => parseShard(bad, {}), bad).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    }
  });
});

describe('shardFromEnv', () => {
  // Slurm sets SLURM_ARRAY_TASK_ID, _COUNT, _MIN, _MAX and _STEP in each task of a job array
  // (Slurm documentation, "Job Array Support", slurm.schedmd.com/job_array.html; from memory):
  // `sbatch --array=1-7:2` runs tasks 1, 3, 5, 7 with MIN=1, MAX=7, STEP=2, COUNT=4.
  it('maps the tasks of a stepped array (--array=1-7:2) to shards 0…3 of 4', () => {
    const base = { SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_MAX: '7', SLURM_ARRAY_TASK_STEP: '2', SLURM_ARRAY_TASK_COUNT: '4' };
    expect([1, 3, 5, 7].map((id) => shardFromEnv({ ...base, SLURM_ARRAY_TASK_ID: String(id) })?.index)).toEqual([0, 1, 2, 3]);
  });

  it('maps --array=0-3 and --array=1-4, with or without SLURM_ARRAY_TASK_COUNT', () => {
    expect(shardFromEnv({ SLURM_ARRAY_TASK_ID: '2', SLURM_ARRAY_TASK_MIN: '0', SLURM_ARRAY_TASK_MAX: '3' })).toEqual({ index: 2, count: 4, source: 'slurm' });
    expect(shardFromEnv({ SLURM_ARRAY_TASK_ID: '4', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_MAX: '4', SLURM_ARRAY_TASK_COUNT: '4' })).toEqual({ index: 3, count: 4, source: 'slurm' });
  });

  it('is null outside an array job and rejects arrays that are not plain ranges', () => {
    expect(shardFromEnv({ SLURM_JOB_ID: '12' })).toBeNull();
    // --array=1,5,9: MIN 1, MAX 9, COUNT 3 — not a range with a step; cannot be mapped.
    expect(() => shardFromEnv({ SLURM_ARRAY_TASK_ID: '5', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_MAX: '9', SLURM_ARRAY_TASK_COUNT: '3' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => shardFromEnv({ SLURM_ARRAY_TASK_ID: '2' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => shardFromEnv({ SLURM_ARRAY_TASK_ID: 'x', SLURM_ARRAY_TASK_COUNT: '2' })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('selectShard', () => {
  it('deals items round-robin: shards are disjoint, cover the list in order, and differ in size by at most one', () => {
    fc.assert(fc.property(fc.integer({ min: 0, max: 60 }), fc.integer({ min: 1, max: 12 }), (n, count) => {
      const items = Array.from({ length: n }, (_, i) => `s${String(i).padStart(3, '0')}`);
      const shards = Array.from({ length: count }, (_, i) => selectShard(items, { index: i, count, source: 'argument' }));
      const all = shards.flat().sort();
      expect(all).toEqual(items);
      const sizes = shards.map((s) => s.length);
      expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
      for (const s of shards) expect([...s].sort()).toEqual(s); // each keeps the batch order
      expect(selectShard(items, null)).toEqual(items);
    }), { seed: 9, numRuns: 150 });
  });

  it('gives item k to shard k mod n', () => {
    expect(selectShard(['a', 'b', 'c', 'd', 'e'], { index: 1, count: 2, source: 'argument' })).toEqual(['b', 'd']);
  });
});

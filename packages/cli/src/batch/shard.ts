import { TuningforkError } from '@tuningfork/core';

/** One part of a batch split across the tasks of a job array: task `index` of `count` (0-based). */
export interface Shard {
  readonly index: number;
  readonly count: number;
  /** Where the split came from: the `--shard` argument or the scheduler's array variables. */
  readonly source: 'argument' | 'slurm';
}

/**
 * Parse a `--shard` value: `i/n` with 0 ≤ i < n (0-based, so Slurm's `--array=0-(n-1)` maps
 * directly), `auto` (the default: from the Slurm array variables when present, else no split) or
 * `none` (never split).
 *
 * @returns The shard, or null for no split.
 * @throws {TuningforkError} TF_BAD_OPTION for any other text.
 */
export function parseShard(text: string, env: Readonly<Record<string, string | undefined>> = process.env): Shard | null {
  const t = text.trim();
  if (t === 'none') return null;
  if (t === 'auto') return shardFromEnv(env);
  const m = /^(\d+)\/(\d+)$/.exec(t);
  if (m === null) {
    throw new TuningforkError('TF_BAD_OPTION', `--shard: expected 'i/n' (for example 0/4), 'auto' or 'none', got '${text}'.`, { option: 'shard', value: text });
  }
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (!(count >= 1) || !(index < count) || !Number.isSafeInteger(count)) {
    throw new TuningforkError('TF_BAD_OPTION', `--shard ${text}: need 0 ≤ i < n and n ≥ 1 (shards are numbered from 0), got i=${index}, n=${count}.`, { option: 'shard', value: text });
  }
  return { index, count, source: 'argument' };
}

function envInt(env: Readonly<Record<string, string | undefined>>, name: string): number | undefined {
  const v = env[name];
  if (v === undefined || v.trim() === '') return undefined;
  if (!/^\d+$/.test(v.trim())) {
    throw new TuningforkError('TF_BAD_OPTION', `environment variable ${name} must be a non-negative integer, got '${v}'.`, { variable: name, value: v });
  }
  return Number(v);
}

/**
 * The shard of this task of a Slurm job array, or null outside an array job.
 *
 * Reads SLURM_ARRAY_TASK_ID, and for the number of tasks SLURM_ARRAY_TASK_COUNT or else
 * SLURM_ARRAY_TASK_MAX − SLURM_ARRAY_TASK_MIN + 1, with SLURM_ARRAY_TASK_STEP (default 1) for
 * stepped arrays. The index is (ID − MIN) / STEP, so `--array=0-3`, `--array=1-4` and
 * `--array=0-6:2` each give shards 0…3 of 4. Arrays with an index list that is not a plain range
 * (`--array=1,5,9`) cannot be mapped and throw.
 *
 * @throws {TuningforkError} TF_BAD_OPTION for inconsistent or non-integer variables.
 */
export function shardFromEnv(env: Readonly<Record<string, string | undefined>> = process.env): Shard | null {
  const id = envInt(env, 'SLURM_ARRAY_TASK_ID');
  if (id === undefined) return null;
  const min = envInt(env, 'SLURM_ARRAY_TASK_MIN') ?? 0;
  const max = envInt(env, 'SLURM_ARRAY_TASK_MAX');
  const step = envInt(env, 'SLURM_ARRAY_TASK_STEP') ?? 1;
  const countVar = envInt(env, 'SLURM_ARRAY_TASK_COUNT');
  const rangeCount = max === undefined ? undefined : Math.floor((max - min) / Math.max(step, 1)) + 1;
  const count = countVar ?? rangeCount;
  if (count === undefined) {
    throw new TuningforkError('TF_BAD_OPTION', 'SLURM_ARRAY_TASK_ID is set but neither SLURM_ARRAY_TASK_COUNT nor SLURM_ARRAY_TASK_MAX is: cannot tell how many shards there are.', { variable: 'SLURM_ARRAY_TASK_COUNT' });
  }
  if (step < 1 || (id - min) % step !== 0 || id < min || (rangeCount !== undefined && countVar !== undefined && rangeCount !== countVar)) {
    throw new TuningforkError('TF_BAD_OPTION', `the Slurm array (task ${id}, min ${min}, max ${max ?? '?'}, step ${step}, count ${countVar ?? '?'}) is not a plain range; submit with --array=0-${count - 1} or pass --shard i/n.`, { variable: 'SLURM_ARRAY_TASK_ID' });
  }
  const index = (id - min) / step;
  if (index >= count) {
    throw new TuningforkError('TF_BAD_OPTION', `Slurm array task ${id} is outside the ${count} tasks of the array.`, { variable: 'SLURM_ARRAY_TASK_ID' });
  }
  return { index, count, source: 'slurm' };
}

/**
 * The items of shard `index` of `count`: items are dealt round-robin in the given (sorted)
 * order, item k going to shard k mod count, so every shard gets ⌊N/count⌋ or ⌈N/count⌉ items,
 * the shards are disjoint and together cover the batch, and the split depends only on the
 * sorted list. A null shard selects everything.
 */
export function selectShard<T>(items: readonly T[], shard: Shard | null): T[] {
  if (shard === null) return [...items];
  return items.filter((_x, k) => k % shard.count === shard.index);
}

import { availableParallelism } from 'node:os';

/**
 * Threads a computation may use when its caller says "auto": the per-process budget a parent
 * process set in the environment variable TUNINGFORK_THREADS (the cli gives each of its session
 * workers cores / jobs), else one per available core; never more than the available cores.
 */
export function threadBudget(): number {
  const cores = availableParallelism();
  const budget = Number(process.env['TUNINGFORK_THREADS']);
  return Number.isInteger(budget) && budget >= 1 ? Math.min(budget, cores) : cores;
}

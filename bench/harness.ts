/**
 * Benchmark case contract. Each file `bench/cases/<stage>.ts` exports `cases: BenchCase[]`.
 * `npm run bench` (bench/run.mjs) runs every case in a fresh Node process against the built
 * packages (dist/), so peak memory is the case's own, and prints one table.
 */
export interface BenchRow {
  operation: string;
  size: string;
  /** Median wall-clock seconds over the timed repetitions. */
  medianSec: number;
  /** Peak resident set size of the process, MB (setup included). */
  peakMB?: number;
  /** Free text: target, ratio to the peer, verdict. */
  note?: string;
}

export interface BenchCase {
  /** Operation, e.g. 'signal: condition 4 sites'. Unique across all cases. */
  name: string;
  /** Input size in words, e.g. '60 min × 1 kHz × 4 sites'. */
  size: string;
  /** Untimed preparation; its value is passed to `run`. */
  setup?: () => unknown;
  /** The timed work; return its result so the engine cannot drop it. */
  run?: (input: any) => unknown;
  /** Timed repetitions; the median is reported. @defaultValue 5 */
  reps?: number;
  /** Target median in seconds; the table shows PASS/FAIL against it. */
  targetSec?: number;
  /** Instead of setup/run: a case that measures itself (e.g. side by side with the peer) and returns rows. */
  custom?: () => Promise<BenchRow[]> | BenchRow[];
}

import { existsSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { parseShard, selectShard } from '../batch/shard.js';
import type { Shard } from '../batch/shard.js';
import { displayPath, jobsOf, planFromManifest } from '../batch/plan.js';
import type { Plan } from '../batch/plan.js';
import { EXIT_CODES } from '../exit-codes.js';
import { Logger } from '../log/logger.js';
import { mergeOutputs } from '../merge/merge-outputs.js';
import { checkOutputFolder } from '../output/paths.js';
import { removeEmptyStaging, removeStaleStaging } from '../output/staging.js';
import { loadPipeline, pipelineSpecifier } from '../pipeline.js';
import type { RunCliOptions } from '../program.js';
import { runJobs } from '../run/scheduler.js';
import type { SessionResult } from '../run/job-types.js';
import type { CommandContext } from './context.js';

/** What executeRun needs besides a plan. */
export interface ExecuteRunOptions {
  readonly out: string;
  readonly jobs: number;
  readonly shard: Shard | null;
  readonly pipeline: string;
  readonly force: boolean;
  readonly merge: boolean;
}

/** Outcome of executeRun. */
export interface RunOutcome {
  readonly exitCode: number;
  readonly results: readonly SessionResult[];
  readonly lines: readonly string[];
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

/**
 * Run a checked plan: analyse the selected sessions (skipping those up to date), then merge
 * when the run covered the whole batch. Shared by `run` and `demo`. The pipeline must already
 * be known to load (the caller checks it before anything is written).
 */
export async function executeRun(plan: Plan, o: ExecuteRunOptions, logger: Logger, ctx: CommandContext): Promise<RunOutcome> {
  const outRoot = checkOutputFolder(o.out, ctx.cwd);
  const all = jobsOf(plan, outRoot, o.pipeline, pipelineSpecifier(o.pipeline, ctx.cwd), o.force);
  const selected = selectShard(all, o.shard);
  if (existsSync(outRoot)) removeStaleStaging(outRoot);
  const t0 = performance.now();
  const shardText = o.shard === null ? '' : ` (shard ${o.shard.index}/${o.shard.count}${o.shard.source === 'slurm' ? ' from the Slurm array' : ''})`;
  const workers = Math.max(1, Math.min(o.jobs, selected.length));
  logger.startBatch(selected.length, `${plural(selected.length, 'session')} of ${all.length}${shardText}, ${workers === 1 ? 'one at a time' : `${workers} at a time`}`);
  // Every session is committed atomically, so stopping at once is safe: finished sessions are
  // kept and a staging folder left behind is removed by the next run.
  const onSignal = (sig: NodeJS.Signals) => {
    logger.stopBars();
    ctx.stderr.write(`interrupted (${sig}): finished sessions are kept; rerun the same command to resume.\n`);
    process.exit(EXIT_CODES.interrupted);
  };
  process.once('SIGINT', onSignal);
  process.once('SIGTERM', onSignal);
  let results: SessionResult[];
  try {
    results = await runJobs(selected, {
      jobs: o.jobs,
      onEvent: (ev) => {
        if (ev.kind === 'progress') logger.progress(ev.session, ev.step, ev.fraction);
        else logger.log(ev.level, ev.message, { session: ev.session });
      },
      onResult: (r) => {
        if (r.status === 'failed') {
          logger.sessionEnded(r.id, 'error', r.line ?? `${r.id} failed`);
          if (typeof r.stack === 'string') ctx.stderr.write(`${r.stack}\n`);
        }
        else logger.sessionEnded(r.id, 'info', r.status === 'skipped' ? 'up to date (skipped)' : `done in ${r.seconds.toFixed(1)} s: ${r.tables.length} tables${r.warnings > 0 ? `, ${plural(r.warnings, 'warning')}` : ''}`);
      },
    });
  } finally {
    process.removeListener('SIGINT', onSignal);
    process.removeListener('SIGTERM', onSignal);
  }
  const done = results.filter((r) => r.status === 'done').length;
  const skipped = results.filter((r) => r.status === 'skipped').length;
  const failed = results.filter((r) => r.status === 'failed');
  const lines: string[] = [];
  let exitCode: number = EXIT_CODES.ok;
  {
    let mergedText = '';
    const complete = o.shard === null || o.shard.count === 1;
    if (complete && o.merge && failed.length === 0 && all.length > 0) {
      logger.info('merging per-session outputs', { step: 'merge', fraction: 0 });
      const m = await mergeOutputs(all, outRoot);
      mergedText = `; merged ${plural(Object.keys(m.tables).length, 'table')} into ${displayPath(m.dir, ctx.cwd)}/`;
    } else if (!complete && failed.length === 0) {
      mergedText = `; after every shard has run: tuningfork merge ${displayPath(plan.manifestPath, ctx.cwd)} --out ${displayPath(outRoot, ctx.cwd)}`;
    }
    const secs = ((performance.now() - t0) / 1000).toFixed(1);
    const where = existsSync(outRoot) ? `→ ${displayPath(outRoot, ctx.cwd)}/` : '(nothing written)';
    lines.push(`${plural(selected.length, 'session')}${shardText}: ${done} analysed, ${skipped} up to date, ${failed.length} failed in ${secs} s ${where}${mergedText}`);
    if (failed.length > 0) {
      exitCode = failed.every((r) => r.phase === 'load') ? EXIT_CODES.badInput : EXIT_CODES.analysisFailed;
    }
  }
  if (existsSync(outRoot)) removeEmptyStaging(outRoot);
  return { exitCode, results, lines };
}

/**
 * `tuningfork run <manifest> --out <dir>`: analyse one session or a batch (see the help text).
 * Everything that can be checked before analysing — arguments, manifests, data files, output
 * folder, pipeline — is checked before anything is written.
 */
export async function runCommand(manifest: string, opts: RunCliOptions, ctx: CommandContext): Promise<number> {
  const logger = await Logger.create({ format: opts.logFormat, quiet: opts.quiet, err: ctx.stderr, out: ctx.stdout });
  const shard = parseShard(opts.shard, ctx.env);
  checkOutputFolder(opts.out, ctx.cwd);
  const plan = await planFromManifest(manifest, opts.seed, ctx.cwd);
  if (opts.dryRun) {
    const { dryRunLines } = await import('./dry-run.js');
    logger.result(await dryRunLines(plan, { out: opts.out, shard, pipeline: opts.pipeline, force: opts.force }, ctx));
    return EXIT_CODES.ok;
  }
  await loadPipeline(pipelineSpecifier(opts.pipeline, ctx.cwd));
  let outcome: RunOutcome;
  try {
    outcome = await executeRun(plan, { out: opts.out, jobs: opts.jobs, shard, pipeline: opts.pipeline, force: opts.force, merge: opts.merge }, logger, ctx);
  } catch (e) {
    logger.stopBars();
    throw e;
  }
  logger.result(outcome.lines);
  return outcome.exitCode;
}


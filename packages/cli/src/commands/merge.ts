import { existsSync } from 'node:fs';
import { TuningforkError } from '@tuningfork/core';
import { displayPath, jobsOf, planFromManifest } from '../batch/plan.js';
import { EXIT_CODES } from '../exit-codes.js';
import { Logger } from '../log/logger.js';
import { mergeOutputs } from '../merge/merge-outputs.js';
import { checkOutputFolder } from '../output/paths.js';
import { removeEmptyStaging, removeStaleStaging } from '../output/staging.js';
import { pipelineSpecifier } from '../pipeline.js';
import type { MergeCliOptions } from '../program.js';
import type { CommandContext } from './context.js';

/**
 * `tuningfork merge <manifest> --out <dir>`: combine the finished per-session outputs of every
 * session of the manifest into `<dir>/merged/`. The pipeline and seeds recorded in each session's
 * `.done.json` must match what the manifest asks for (default pipeline assumed).
 */
export async function mergeCommand(manifest: string, opts: MergeCliOptions, ctx: CommandContext): Promise<number> {
  const logger = await Logger.create({ format: opts.logFormat, quiet: opts.quiet, err: ctx.stderr, out: ctx.stdout });
  const outRoot = checkOutputFolder(opts.out, ctx.cwd);
  if (!existsSync(outRoot)) {
    throw new TuningforkError('TF_INCOMPLETE_BATCH', `merge: output folder '${opts.out}' does not exist; nothing has been run into it yet.`, { out: opts.out });
  }
  const plan = await planFromManifest(manifest, opts.seed, ctx.cwd);
  const pipeline = opts.pipeline;
  const jobs = jobsOf(plan, outRoot, pipeline, pipelineSpecifier(pipeline, ctx.cwd), false);
  removeStaleStaging(outRoot);
  if (logger.format === 'json') logger.info(`merging ${jobs.length} sessions`, { step: 'merge', fraction: 0 });
  const m = await mergeOutputs(jobs, outRoot);
  removeEmptyStaging(outRoot);
  logger.result([
    `merged ${m.sessions} sessions into ${displayPath(m.dir, ctx.cwd)}/: ${Object.entries(m.tables).map(([n, r]) => `${n} (${r} rows)`).join(', ') || 'no tables'}`,
  ]);
  return EXIT_CODES.ok;
}

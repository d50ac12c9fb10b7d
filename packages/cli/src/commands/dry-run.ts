import { VERSION } from '@tuningfork/core';
import { displayPath, jobsOf } from '../batch/plan.js';
import type { Plan } from '../batch/plan.js';
import { selectShard } from '../batch/shard.js';
import type { Shard } from '../batch/shard.js';
import { doneKey, isUpToDate } from '../output/done-record.js';
import { checkOutputFolder, resolveInside } from '../output/paths.js';
import { pipelineSpecifier } from '../pipeline.js';
import { hashSessionInputs } from '../run/process-session.js';
import type { CommandContext } from './context.js';

/**
 * The plan of `run --dry-run`: one line per selected session (id, labels, seed and where it
 * came from, output folder, and whether it would be analysed or is up to date). Reads inputs to
 * hash them; writes nothing.
 */
export async function dryRunLines(
  plan: Plan,
  o: { readonly out: string; readonly shard: Shard | null; readonly pipeline: string; readonly force: boolean },
  ctx: CommandContext,
): Promise<string[]> {
  const outRoot = checkOutputFolder(o.out, ctx.cwd);
  const all = jobsOf(plan, outRoot, o.pipeline, pipelineSpecifier(o.pipeline, ctx.cwd), o.force);
  const selected = selectShard(all, o.shard);
  const lines = [
    `dry run: ${selected.length} of ${all.length} sessions${o.shard === null ? '' : ` (shard ${o.shard.index}/${o.shard.count}${o.shard.source === 'slurm' ? ' from the Slurm array' : ''})`}, batch seed ${plan.batchSeed}, output ${displayPath(outRoot, ctx.cwd)}/`,
  ];
  for (const j of selected) {
    const inputs = await hashSessionInputs(j.manifestPath);
    const key = doneKey({ version: VERSION, pipeline: j.pipeline, options: j.options, seed: j.seed, inputs });
    const fresh = !j.force && (await isUpToDate(resolveInside(outRoot, j.outDir, 'session folder'), key));
    lines.push(`  [${j.index}] ${j.id}  animal=${j.animal || '-'}  group=${j.group || '-'}  seed=${j.seed} (${j.seedSource})  → ${j.outDir}/  ${fresh ? 'up to date' : 'to analyse'}`);
  }
  return lines;
}

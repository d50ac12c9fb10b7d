import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { isTuningforkError } from '@tuningfork/core';
import { loadSession, readArrow } from '@tuningfork/io';
import { displayPath, planFromManifest } from '../batch/plan.js';
import { DEMO_MANIFEST, writeDemoSession } from '../demo/write-demo-session.js';
import { EXIT_CODES } from '../exit-codes.js';
import { Logger } from '../log/logger.js';
import { checkOutputFolder } from '../output/paths.js';
import { DEFAULT_PIPELINE, loadPipeline, pipelineSpecifier } from '../pipeline.js';
import type { DemoCliOptions } from '../program.js';
import { qcLines } from './check.js';
import type { CommandContext } from './context.js';
import { executeRun } from './run.js';

/**
 * One line comparing the per-cell classes of the analysis (the `cell` and `class` columns of its
 * `cells` table) with the simulated truth; nothing when the table is absent.
 */
async function classLines(sessionDir: string, truth: ReadonlyMap<string, string>): Promise<string[]> {
  const file = join(sessionDir, 'cells.arrow');
  if (!existsSync(file)) return [];
  const t = await readArrow(file);
  const cell = t.strings.cell;
  const cls = t.strings.class;
  if (cell === undefined || cls === undefined) return [];
  let agree = 0;
  const parts = cell.map((c, i) => {
    const want = truth.get(c);
    if (want === cls[i]) agree++;
    return want === undefined || want === cls[i] ? `${c} ${cls[i]}` : `${c} ${cls[i]} (truth: ${want})`;
  });
  return [`  classes: ${agree} of ${cell.length} cells match the simulated truth — ${parts.join(', ')}`];
}

/** Sub-folder of the demo output that holds the simulated session. */
export const DEMO_INPUT_DIR = 'input';

/**
 * `tuningfork demo`: simulate a session of the demo task, write it with its truth and a session
 * manifest into `<out>/input/`, check it as `tuningfork check` does, then analyse it through the
 * same path as `tuningfork run <out>/input/session.json --out <out>`. When the default pipeline
 * (analyzeSession of the `tuningfork` package) is not available, the analysis is skipped with a
 * note and the exit code stays 0; a pipeline named with --pipeline must load.
 */
export async function demoCommand(opts: DemoCliOptions, ctx: CommandContext): Promise<number> {
  const logger = await Logger.create({ format: opts.logFormat, quiet: opts.quiet, err: ctx.stderr, out: ctx.stdout });
  const outRoot = checkOutputFolder(opts.out, ctx.cwd);
  const { simulateSession } = await import('@tuningfork/simulate');
  logger.info(`simulating ${opts.duration} s, ${opts.sites} sites, ${opts.units} units, seed ${opts.seed}`, { step: 'simulate', fraction: 0 });
  const sim = simulateSession({ durationSec: opts.duration, nSites: opts.sites, nUnits: opts.units, seed: opts.seed });
  const inputDir = join(outRoot, DEMO_INPUT_DIR);
  const files = await writeDemoSession(sim, inputDir);
  const manifestPath = join(inputDir, DEMO_MANIFEST);
  logger.info(`wrote ${files.length} files to ${displayPath(inputDir, ctx.cwd)}/`, { step: 'write', fraction: 1 });

  const plan = await planFromManifest(manifestPath, undefined, ctx.cwd);
  const planned = plan.sessions[0]!;
  const loaded = await loadSession(manifestPath, { hash: false });
  const qc = await qcLines(loaded.session, planned, loaded.warnings, ctx.cwd);

  const cells = sim.truth.cells;
  const truthLine = (kind: 'site' | 'unit') => cells.filter((c) => c.kind === kind).map((c) => `${c.name} ${c.class}`).join(', ');
  const lines = [
    `tuningfork demo: simulated session ${sim.session.id} (${opts.duration} s, ${opts.sites} photometry sites, ${opts.units} units, ${sim.session.trials?.trial.length ?? 0} trials, seed ${opts.seed})`,
    `  input:  ${displayPath(inputDir, ctx.cwd)}/ — ${files.filter((f) => f.endsWith('.csv')).map((f) => f.slice(0, -4)).join(', ')} (.csv + .arrow), truth.json, truth_traces.arrow, ${DEMO_MANIFEST} (manifest)`,
    ...(opts.sites > 0 ? [`  truth:  sites: ${truthLine('site')}`] : []),
    ...(opts.units > 0 ? [`          units: ${truthLine('unit')}`] : []),
    '',
    ...qc,
    '',
  ];

  let exitCode: number = EXIT_CODES.ok;
  if (!opts.analysis) {
    lines.push('analysis: skipped (--no-analysis)');
  } else {
    let available = true;
    try {
      await loadPipeline(pipelineSpecifier(opts.pipeline, ctx.cwd));
    } catch (e) {
      if (!isTuningforkError(e, 'TF_PIPELINE_UNAVAILABLE') || opts.pipeline !== DEFAULT_PIPELINE) throw e;
      available = false;
      lines.push(`analysis: skipped — ${e.message} The demo data and manifest are ready; once the pipeline is available, rerun \`tuningfork demo\` or run \`tuningfork run ${displayPath(manifestPath, ctx.cwd)} --out ${displayPath(outRoot, ctx.cwd)}\`.`);
    }
    if (available) {
      const outcome = await executeRun(plan, { out: outRoot, jobs: 1, shard: null, pipeline: opts.pipeline, force: opts.force, merge: true }, logger, ctx);
      exitCode = outcome.exitCode;
      lines.push(`analysis: ${outcome.lines.join(' ')}`);
      const r = outcome.results[0];
      if (r !== undefined && r.status !== 'failed') {
        const sessionDir = join(outRoot, planned.outDir);
        lines.push(`  outputs: ${displayPath(sessionDir, ctx.cwd)}/ (tables as .arrow + .csv, texts, provenance.json)`);
        lines.push(...(await classLines(sessionDir, new Map(cells.map((c) => [c.name, c.class])))));
      }
    }
  }
  lines.push(`next: tuningfork check ${displayPath(manifestPath, ctx.cwd)}  ·  tuningfork run ${displayPath(manifestPath, ctx.cwd)} --out <folder>`);
  logger.result(lines);
  return exitCode;
}

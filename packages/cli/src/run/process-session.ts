import { basename } from 'node:path';
import { performance } from 'node:perf_hooks';
import { sha256File, VERSION } from '@tuningfork/core';
import type { ProvenanceInput, ResultWarning } from '@tuningfork/core';
import { loadSession, readManifest } from '@tuningfork/io';
import { displayPath } from '../batch/plan.js';
import { asTuningforkError, errorLine } from '../errors.js';
import { doneKey, isUpToDate } from '../output/done-record.js';
import { resolveInside } from '../output/paths.js';
import { commitSession } from '../output/write-session.js';
import { loadPipeline } from '../pipeline.js';
import type { AnalyzeSession } from '../pipeline.js';
import type { JobEvent, SessionJob, SessionResult } from './job-types.js';

const pipelines = new Map<string, Promise<AnalyzeSession>>();

/** The pipeline of this thread for a specifier (imported once). */
function pipelineFor(specifier: string): Promise<AnalyzeSession> {
  let p = pipelines.get(specifier);
  if (p === undefined) {
    p = loadPipeline(specifier);
    pipelines.set(specifier, p);
  }
  return p;
}

/**
 * SHA-256 of a session's inputs by content: the manifest (named by its file name) and every data
 * file it lists (named as written in the manifest), in manifest order. Names never include the
 * machine's folders, so provenance and content keys do not depend on where the data live.
 */
export async function hashSessionInputs(manifestPath: string): Promise<ProvenanceInput[]> {
  const manifest = await readManifest(manifestPath);
  const inputs: ProvenanceInput[] = [{ ...(await sha256File(manifestPath)), name: basename(manifestPath) }];
  for (const f of manifest.files) inputs.push({ ...(await sha256File(f.resolvedPath)), name: f.path });
  return inputs;
}

/**
 * Analyse one session and write its outputs, or skip it when its folder is up to date.
 *
 * Steps: hash the inputs and compare the content key with the folder's `.done.json` (skip when
 * equal, unless `force`); load the session with io's loadSession; run the pipeline with the
 * job's options and seed; write every output through a staging folder (commitSession). Never
 * throws: a failure is returned as a 'failed' result with its one-line error, and nothing of the
 * session is written.
 *
 * @param emit - Receives progress (thinned to ≥ 1 % steps) and warnings.
 */
export async function processSession(job: SessionJob, emit: (event: JobEvent) => void): Promise<SessionResult> {
  const t0 = performance.now();
  let phase: 'load' | 'analyse' | 'write' = 'load';
  let last = { step: '', fraction: -1 };
  const progress = (step: string, fraction: number): void => {
    const f = Number.isFinite(fraction) ? Math.min(1, Math.max(0, fraction)) : 0;
    if (step === last.step && f < 1 && f - last.fraction < 0.01) return;
    if (step === last.step && f === last.fraction) return;
    last = { step, fraction: f };
    emit({ kind: 'progress', session: job.id, step, fraction: f });
  };
  const seconds = () => Math.round(performance.now() - t0) / 1000;
  try {
    progress('hash', 0);
    const inputs = await hashSessionInputs(job.manifestPath);
    const key = doneKey({ version: VERSION, pipeline: job.pipeline, options: job.options, seed: job.seed, inputs });
    const dir = resolveInside(job.outRoot, job.outDir, `output folder of session '${job.id}'`);
    if (!job.force && (await isUpToDate(dir, key))) {
      return { id: job.id, status: 'skipped', phase: null, code: null, line: null, warnings: 0, tables: [], seconds: seconds() };
    }
    progress('load', 0);
    const loaded = await loadSession(displayPath(job.manifestPath), { hash: false });
    progress('load', 1);
    phase = 'analyse';
    const analyze = await pipelineFor(job.pipelineSpecifier);
    const session = loaded.session.id === job.id ? loaded.session : { ...loaded.session, id: job.id };
    const outputs = await analyze(session, { ...job.options, seed: job.seed }, progress);
    phase = 'write';
    progress('write', 0);
    const warnings: ResultWarning[] = [...loaded.warnings, ...outputs.warnings];
    for (const w of warnings) emit({ kind: 'log', level: 'warn', session: job.id, message: `${w.code}: ${w.message}` });
    const provenance = {
      tool: 'tuningfork',
      version: VERSION,
      operation: 'tuningfork run',
      session: job.id,
      animal: job.animal,
      group: job.group,
      options: job.options,
      seed: job.seed,
      seedSource: job.seedSource,
      pipeline: job.pipeline,
      inputs,
      analysis: outputs.provenance,
      warnings,
    };
    await commitSession({
      outRoot: job.outRoot,
      outDir: job.outDir,
      id: job.id,
      outputs,
      provenance,
      done: { tool: 'tuningfork', version: VERSION, session: job.id, key, pipeline: job.pipeline, options: job.options, seed: job.seed, inputs },
    });
    progress('write', 1);
    return { id: job.id, status: 'done', phase: null, code: null, line: null, warnings: warnings.length, tables: Object.keys(outputs.tables).sort(), seconds: seconds() };
  } catch (e) {
    const err = asTuningforkError(e, phase === 'write');
    return {
      id: job.id,
      status: 'failed',
      phase: phase === 'load' ? 'load' : 'analyse',
      code: err.code,
      line: errorLine(err, `session '${job.id}'`),
      stack: process.env.TUNINGFORK_DEBUG === '1' && e instanceof Error ? (e.stack ?? null) : null,
      warnings: 0,
      tables: [],
      seconds: seconds(),
    };
  }
}

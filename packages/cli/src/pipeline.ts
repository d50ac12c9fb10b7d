import { isAbsolute, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { TuningforkError } from '@tuningfork/core';
import type { Provenance, ResultWarning, Session } from '@tuningfork/core';

/**
 * A tidy table as the pipeline returns it: equal-length columns by name, in output order.
 * (Same shape as `ColumnTable` of the `tuningfork` package's pipeline types.)
 */
export interface OutputTable {
  readonly columns: Readonly<Record<string, Float64Array | Int32Array | readonly string[]>>;
  readonly rows: number;
}

/**
 * What the analysis of one session returns and the cli writes: tables (each as `<name>.arrow`
 * and `<name>.csv`), text files (e.g. `report.html`, `figures/peth_site01.svg`) and the
 * pipeline's provenance. (Same shape as `SessionOutputs` of the `tuningfork` package.)
 */
export interface AnalysisOutputs {
  readonly sessionId: string;
  readonly tables: Readonly<Record<string, OutputTable>>;
  readonly texts: Readonly<Record<string, string>>;
  readonly provenance: Provenance;
  readonly warnings: readonly ResultWarning[];
}

/** Progress of a long computation: step name and completed fraction of that step in [0, 1]. */
export type ProgressReporter = (step: string, fraction: number) => void;

/**
 * The one analysis step the cli runs per session: a loaded session and its resolved options
 * (seed included) in, tables and texts out.
 */
export type AnalyzeSession = (
  session: Session,
  options: Readonly<Record<string, unknown>>,
  onProgress: ProgressReporter,
) => Promise<AnalysisOutputs>;

/** The module the cli takes `analyzeSession` from unless `--pipeline` names another. */
export const DEFAULT_PIPELINE = 'tuningfork';

type ModuleAnalyze = (session: Session, options: unknown, hooks: { onProgress: ProgressReporter }) => unknown;

/**
 * Module specifier to import for a `--pipeline` value: bare package names stay as they are;
 * paths (with a slash or starting with '.') resolve against `cwd` into a file URL.
 */
export function pipelineSpecifier(pipeline: string, cwd: string = process.cwd()): string {
  if (pipeline.startsWith('file:')) return pipeline;
  const looksLikePath = pipeline.startsWith('.') || isAbsolute(pipeline) || (/[\\/]/.test(pipeline) && !pipeline.startsWith('@'));
  return looksLikePath ? pathToFileURL(resolve(cwd, pipeline)).href : pipeline;
}

/**
 * Load the analysis step from a module exporting
 * `analyzeSession(session, options, { onProgress }) → Promise<{ outputs, … }>` (the contract of
 * the `tuningfork` package), adapted to {@link AnalyzeSession}.
 *
 * @param specifier - A package name or a file URL (see {@link pipelineSpecifier}).
 * @throws {TuningforkError} TF_PIPELINE_UNAVAILABLE when the module cannot be imported or has no
 *   `analyzeSession` function.
 */
export async function loadPipeline(specifier: string = DEFAULT_PIPELINE): Promise<AnalyzeSession> {
  let mod: Record<string, unknown>;
  try {
    mod = (await import(specifier)) as Record<string, unknown>;
  } catch (e) {
    const why = e instanceof Error ? e.message.split('\n')[0] : String(e);
    throw new TuningforkError('TF_PIPELINE_UNAVAILABLE', `cannot import the analysis pipeline '${specifier}': ${why}`, { pipeline: specifier });
  }
  const fn = mod.analyzeSession;
  if (typeof fn !== 'function') {
    throw new TuningforkError(
      'TF_PIPELINE_UNAVAILABLE',
      `the analysis pipeline '${specifier}' does not export an analyzeSession function${specifier === DEFAULT_PIPELINE ? ' (the session pipeline has not landed in this version of the tuningfork package)' : ''}.`,
      { pipeline: specifier },
    );
  }
  const analyze = fn as ModuleAnalyze;
  return async (session, options, onProgress) => {
    const result = (await analyze(session, options, { onProgress })) as { outputs?: unknown } | null;
    return checkOutputs(result?.outputs, specifier);
  };
}

const SAFE_NAME = /^[A-Za-z0-9][A-Za-z0-9._-]*$/;

/**
 * Check the shape of what a pipeline returned, so that a malformed result fails with a coded
 * error before anything is written.
 *
 * @throws {TuningforkError} TF_INTERNAL when the shape is wrong (tables missing, columns of
 *   unequal length, unsupported column types, a table name that is not a plain file name).
 */
export function checkOutputs(outputs: unknown, pipeline: string): AnalysisOutputs {
  const bad = (what: string): never => {
    throw new TuningforkError('TF_INTERNAL', `the analysis pipeline '${pipeline}' returned malformed outputs: ${what}.`, { pipeline });
  };
  if (outputs === null || typeof outputs !== 'object') bad('no outputs object');
  const o = outputs as Partial<AnalysisOutputs>;
  if (typeof o.sessionId !== 'string') bad('sessionId is not a string');
  if (o.tables === null || typeof o.tables !== 'object') bad('tables is not an object');
  if (o.texts === null || typeof o.texts !== 'object') bad('texts is not an object');
  if (o.provenance === null || typeof o.provenance !== 'object') bad('provenance is not an object');
  if (!Array.isArray(o.warnings)) bad('warnings is not an array');
  for (const [name, table] of Object.entries(o.tables!)) {
    if (!SAFE_NAME.test(name)) bad(`table name '${name}' is not a plain file name (letters, digits, '.', '_', '-')`);
    if (table === null || typeof table !== 'object' || !Number.isInteger(table.rows) || table.rows < 0) bad(`table '${name}' has no valid row count`);
    for (const [col, values] of Object.entries(table.columns ?? bad(`table '${name}' has no columns`))) {
      const ok = values instanceof Float64Array || values instanceof Int32Array || (Array.isArray(values) && values.every((v) => typeof v === 'string'));
      if (!ok) bad(`column '${col}' of table '${name}' is not a Float64Array, Int32Array or string array`);
      if (values.length !== table.rows) bad(`column '${col}' of table '${name}' has ${values.length} values for ${table.rows} rows`);
    }
  }
  for (const [name, text] of Object.entries(o.texts!)) {
    if (typeof text !== 'string') bad(`text '${name}' is not a string`);
  }
  return o as AnalysisOutputs;
}

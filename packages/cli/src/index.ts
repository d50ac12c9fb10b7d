/**
 * @tuningfork/cli — the `tuningfork` command (bin: dist/bin.js) and the pieces it is built from,
 * for scripts that drive batches themselves.
 */

// Entry point and command line
export { main } from './main.js';
export type { MainContext } from './main.js';
export { buildProgram } from './program.js';
export type { CliRequest, AnalysisCliOptions, RunCliOptions, DemoCliOptions, CheckCliOptions, MergeCliOptions } from './program.js';
export { EXIT_CODES, EXIT_CODE_HELP } from './exit-codes.js';
export type { ExitCodeName } from './exit-codes.js';
export { errorLine, asTuningforkError, fixFor } from './errors.js';

// The analysis step
export { loadPipeline, pipelineSpecifier, checkOutputs, DEFAULT_PIPELINE } from './pipeline.js';
export type { AnalyzeSession, AnalysisOutputs, OutputTable, ProgressReporter } from './pipeline.js';

// Batches, seeds and shards
export { parseBatchManifest, isBatchManifest } from './batch/batch-manifest.js';
export type { BatchManifest, BatchEntry } from './batch/batch-manifest.js';
export { planFromManifest, jobsOf, checkOutDir, MERGED_DIR } from './batch/plan.js';
export type { Plan, PlannedSession } from './batch/plan.js';
export { sessionSeed, mergeOptions } from './batch/session-seed.js';
export { parseShard, shardFromEnv, selectShard } from './batch/shard.js';
export type { Shard } from './batch/shard.js';

// Running sessions
export { runJobs } from './run/scheduler.js';
export type { RunJobsOptions } from './run/scheduler.js';
export { processSession, hashSessionInputs } from './run/process-session.js';
export type { SessionJob, SessionResult, JobEvent } from './run/job-types.js';

// Outputs
export { checkOutputFolder, resolveInside } from './output/paths.js';
export { commitSession, PROVENANCE_FILE } from './output/write-session.js';
export type { SessionWrite } from './output/write-session.js';
export { doneKey, isUpToDate, DONE_FILE } from './output/done-record.js';
export type { DoneRecord, OutputFileRecord } from './output/done-record.js';
export { mergeOutputs, LABEL_COLUMNS } from './merge/merge-outputs.js';
export type { MergeSummary } from './merge/merge-outputs.js';

// Demo data
export { writeDemoSession, DEMO_MANIFEST } from './demo/write-demo-session.js';
export type { WriteDemoSessionOptions } from './demo/write-demo-session.js';

// Logging
export { Logger } from './log/logger.js';
export type { LogEvent, LogLevel, LogFormat, LoggerOptions } from './log/logger.js';

import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { Command, InvalidArgumentError, Option } from 'commander';
import { EXIT_CODE_HELP } from './exit-codes.js';

/** Version of this package (read from its package.json, so that --help needs no other module). */
function packageVersion(): string {
  try {
    return (JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string }).version;
  } catch {
    return 'unknown';
  }
}

/** Options shared by the commands that analyse sessions (`run`, `demo`). */
export interface AnalysisCliOptions {
  readonly pipeline: string;
  readonly force: boolean;
  readonly quiet: boolean;
  readonly logFormat: 'text' | 'json';
}

/** Options of `tuningfork run`. */
export interface RunCliOptions extends AnalysisCliOptions {
  readonly out: string;
  readonly jobs: number;
  readonly shard: string;
  readonly seed: number | undefined;
  readonly merge: boolean;
  readonly dryRun: boolean;
}

/** Options of `tuningfork demo`. */
export interface DemoCliOptions extends AnalysisCliOptions {
  readonly out: string;
  readonly duration: number;
  readonly seed: number;
  readonly sites: number;
  readonly units: number;
  readonly analysis: boolean;
}

/** Options of `tuningfork check`. */
export interface CheckCliOptions {
  readonly quiet: boolean;
  readonly logFormat: 'text' | 'json';
}

/** Options of `tuningfork merge`. */
export interface MergeCliOptions {
  readonly out: string;
  readonly pipeline: string;
  readonly seed: number | undefined;
  readonly quiet: boolean;
  readonly logFormat: 'text' | 'json';
}

/** What the parsed command line asks for. */
export type CliRequest =
  | { readonly command: 'demo'; readonly options: DemoCliOptions }
  | { readonly command: 'check'; readonly manifest: string; readonly options: CheckCliOptions }
  | { readonly command: 'run'; readonly manifest: string; readonly options: RunCliOptions }
  | { readonly command: 'merge'; readonly manifest: string; readonly options: MergeCliOptions };

function intArg(name: string, min: number, max = Number.MAX_SAFE_INTEGER) {
  return (value: string): number => {
    const t = value.trim();
    if (!/^[+]?\d+$/.test(t) || Number(t) < min || Number(t) > max) {
      throw new InvalidArgumentError(`${name} must be an integer ${max === Number.MAX_SAFE_INTEGER ? `≥ ${min}` : `in [${min}, ${max}]`}, got '${value}'.`);
    }
    return Number(t);
  };
}

function positiveArg(name: string) {
  return (value: string): number => {
    const v = Number(value);
    if (value.trim() === '' || !Number.isFinite(v) || v <= 0) throw new InvalidArgumentError(`${name} must be a number > 0, got '${value}'.`);
    return v;
  };
}

const logFormatOption = () =>
  new Option('--log-format <format>', "'text': progress bars on a terminal, plain lines otherwise; 'json': one JSON event per line on stdout ({ts, level, session, step, fraction, message})")
    .choices(['text', 'json'])
    .default('text');
const quietOption = () => new Option('-q, --quiet', 'print nothing but errors');
/** Default of --jobs: the CPUs Slurm gave this task (SLURM_CPUS_PER_TASK), else the cores this process may use. */
function defaultJobs(): number {
  const slurm = process.env.SLURM_CPUS_PER_TASK;
  if (slurm !== undefined && /^\d+$/.test(slurm) && Number(slurm) >= 1) return Number(slurm);
  return availableParallelism();
}

const jobsOption = () =>
  new Option('-j, --jobs <n>', 'sessions analysed at once, each in its own child process (1 = one after another in this process)')
    .argParser(intArg('--jobs', 1, 1024))
    .default(defaultJobs(), 'number of cores, or SLURM_CPUS_PER_TASK');
const pipelineOption = () =>
  new Option('--pipeline <module>', 'module whose analyzeSession(session, options, { onProgress }) analyses each session (package name or file path)')
    .default('tuningfork');
const forceOption = () => new Option('--force', 'redo every session, even those whose inputs and options did not change');

const MANIFEST_HELP = `
Manifests:
  A session manifest (JSON) names one session's files, column mappings, channels, events and
  analysis options; a batch manifest lists session manifests with animal and group labels:
    { "seed": 7, "options": { … }, "sessions": [
        { "manifest": "rat01/day1.json", "animal": "rat01", "group": "control" }, … ] }
  Relative paths resolve against the folder of the manifest that contains them.
  The schemas are in the @tuningfork/cli README.`;

/**
 * Build the `tuningfork` command-line parser. Actions only record the request; `main` runs it,
 * so that the heavy modules are imported only for the command that needs them.
 *
 * @param onRequest - Receives the parsed request of the subcommand that was called.
 */
export function buildProgram(onRequest: (request: CliRequest) => void): Command {
  const program = new Command('tuningfork');
  program
    .description('Analyse fiber-photometry and sorted-unit recordings of behaving rodents, from session manifests to per-cell reward / movement / action-prediction classes, for one session or a batch.')
    .version(packageVersion(), '-V, --version', 'print the version')
    .helpOption('-h, --help', 'show help for a command')
    .exitOverride()
    .configureOutput({ outputError: () => {} })
    .showSuggestionAfterError(true)
    .allowExcessArguments(false)
    .helpCommand('help [command]', 'show help for a command')
    .addHelpText('after', `
Examples:
  $ tuningfork demo --out demo-output          simulate a session and analyse it end to end
  $ tuningfork check rat01/day1.json           validate a manifest and its files, print QC
  $ tuningfork run batch.json --out results    analyse every session of a batch, then merge
  $ tuningfork run batch.json --out results --shard 0/4   one of four cluster tasks
  $ tuningfork merge batch.json --out results  combine the shards' outputs

Run \`tuningfork <command> --help\` for the options of each command.

${EXIT_CODE_HELP}`);

  program
    .command('demo')
    .description('simulate a session of the demo task, write it (CSV, Arrow IPC, truth JSON, session manifest) and analyse it like `run`')
    .option('-o, --out <dir>', 'output folder (created if missing)', 'demo-output')
    .addOption(new Option('--duration <sec>', 'simulated session length, seconds').argParser(positiveArg('--duration')).default(600))
    .addOption(new Option('--seed <n>', 'seed of the simulation; also written into the session manifest as the analysis seed').argParser(intArg('--seed', 0)).default(1))
    .addOption(new Option('--sites <n>', 'photometry sites').argParser(intArg('--sites', 0, 64)).default(4))
    .addOption(new Option('--units <n>', 'sorted units').argParser(intArg('--units', 0, 1000)).default(10))
    .option('--no-analysis', 'only simulate, write and check the session; do not analyse it')
    .addOption(pipelineOption())
    .addOption(forceOption())
    .addOption(quietOption())
    .addOption(logFormatOption())
    .addHelpText('after', `
Writes into the output folder:
  input/           the simulated session: photometry, accelerometer, events, trials and spikes
                   as tidy CSV and Arrow IPC, truth.json (the ground truth), session.json (manifest)
  sessions/<id>/   the analysis outputs (as \`tuningfork run\`), once the session pipeline exists
  merged/          project-level tables and summary

Examples:
  $ tuningfork demo
  $ tuningfork demo --out /tmp/demo --duration 120 --seed 3
  $ tuningfork demo --no-analysis --log-format json

${EXIT_CODE_HELP}`)
    .action((opts: Record<string, unknown>) => {
      onRequest({ command: 'demo', options: opts as unknown as DemoCliOptions });
    });

  program
    .command('check')
    .description('validate a session or batch manifest and every file it names, and print a QC summary (nothing is analysed or written)')
    .argument('<manifest>', 'session or batch manifest (JSON)')
    .addOption(quietOption())
    .addOption(logFormatOption())
    .addHelpText('after', `${MANIFEST_HELP}

Examples:
  $ tuningfork check rat01/day1.json
  $ tuningfork check batch.json --log-format json

${EXIT_CODE_HELP}`)
    .action((manifest: string, opts: Record<string, unknown>) => {
      onRequest({ command: 'check', manifest, options: opts as unknown as CheckCliOptions });
    });

  program
    .command('run')
    .description('analyse one session or every session of a batch; write tables (Arrow + CSV), texts and provenance per session, then merge')
    .argument('<manifest>', 'session or batch manifest (JSON)')
    .requiredOption('-o, --out <dir>', 'output folder (created if missing); nothing is written outside it')
    .addOption(jobsOption())
    .addOption(new Option('--shard <i/n|auto|none>', "analyse only shard i of n (0-based; sessions sorted by id are dealt round-robin). 'auto' reads SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT (or _MIN/_MAX) inside a Slurm job array").default('auto'))
    .addOption(new Option('--seed <n>', 'batch seed when the manifest sets none; session seeds are derived from it and the session id').argParser(intArg('--seed', 0)))
    .addOption(pipelineOption())
    .addOption(forceOption())
    .option('--no-merge', 'do not merge the per-session outputs at the end of a complete (unsharded) run')
    .option('--dry-run', 'print which sessions would be analysed or skipped, with their seeds; write nothing')
    .addOption(quietOption())
    .addOption(logFormatOption())
    .addHelpText('after', `
Outputs (inside --out):
  sessions/<id>/<table>.arrow and .csv   each tidy table of the analysis
  sessions/<id>/<text files>             e.g. report.html, figures/*.svg
  sessions/<id>/provenance.json          version, options, seed, SHA-256 of every input
  sessions/<id>/.done.json               content hashes; a session whose inputs, options and
                                         version are unchanged is skipped on the next run
  merged/                                project-level tables (after a complete, unsharded run
                                         in which every session finished)
Each session is written into a staging folder and renamed into place, so a killed run leaves no
half-written output; rerun the same command to finish it.
${MANIFEST_HELP}

Examples:
  $ tuningfork run rat01/day1.json --out results
  $ tuningfork run batch.json --out results --jobs 4
  $ tuningfork run batch.json --out results --shard 2/8 --quiet
  $ sbatch --array=0-7 --wrap 'tuningfork run batch.json --out results'   # shard from Slurm
  $ tuningfork run batch.json --out results --dry-run

${EXIT_CODE_HELP}`)
    .action((manifest: string, opts: Record<string, unknown>) => {
      onRequest({ command: 'run', manifest, options: opts as unknown as RunCliOptions });
    });

  program
    .command('merge')
    .description('combine the per-session outputs of a batch (for example from several shards) into project-level tables and a summary')
    .argument('<manifest>', 'the batch (or session) manifest that was run')
    .requiredOption('-o, --out <dir>', 'the output folder the runs wrote to; merged tables go to <dir>/merged/')
    .addOption(new Option('--seed <n>', 'the --seed given to `run`, if any (to check that every session was run with its seed)').argParser(intArg('--seed', 0)))
    .addOption(new Option('--pipeline <module>', 'the --pipeline given to `run` (to check that every session was analysed by it)').default('tuningfork'))
    .addOption(quietOption())
    .addOption(logFormatOption())
    .addHelpText('after', `
Writes <out>/merged/<table>.arrow and .csv for every table name found in the sessions, with
session, animal and group columns first and sessions in id order, plus summary.json and
summary.txt. Every session of the manifest must be finished (exit code 3 otherwise).

Examples:
  $ tuningfork merge batch.json --out results
  $ tuningfork merge batch.json --out results --log-format json

${EXIT_CODE_HELP}`)
    .action((manifest: string, opts: Record<string, unknown>) => {
      onRequest({ command: 'merge', manifest, options: opts as unknown as MergeCliOptions });
    });

  return program;
}

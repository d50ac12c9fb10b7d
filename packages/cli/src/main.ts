import { CommanderError } from 'commander';
import type { ErrorCode, TuningforkError } from '@tuningfork/core';
import { EXIT_CODES } from './exit-codes.js';
import { buildProgram } from './program.js';
import type { CliRequest } from './program.js';

/** Streams and environment main uses (replaceable in tests). */
export interface MainContext {
  readonly stdout?: NodeJS.WriteStream;
  readonly stderr?: NodeJS.WriteStream;
  readonly cwd?: string;
  readonly env?: Readonly<Record<string, string | undefined>>;
}

async function commanderToTuningfork(e: CommanderError): Promise<TuningforkError> {
  const { TuningforkError: TfError } = await import('@tuningfork/core');
  const text = e.message.replace(/^error:\s*/i, '').replace(/\s*\n\s*/g, ' ').trim();
  const code: ErrorCode = e.code === 'commander.unknownOption' || e.code === 'commander.unknownCommand' ? 'TF_UNKNOWN_OPTION' : 'TF_BAD_OPTION';
  return new TfError(code, text, { fix: 'run `tuningfork --help` or `tuningfork <command> --help` for the usage' });
}

/**
 * Run the `tuningfork` command line and return its exit code (see EXIT_CODES). Errors are
 * printed as one line `CODE: message (fix)` on stderr, never with a stack trace (set
 * TUNINGFORK_DEBUG=1 to add it).
 *
 * @param argv - Arguments after the program name, e.g. `['run', 'batch.json', '--out', 'results']`.
 */
export async function main(argv: readonly string[], ctx: MainContext = {}): Promise<number> {
  const stdout = ctx.stdout ?? process.stdout;
  const stderr = ctx.stderr ?? process.stderr;
  const env = ctx.env ?? process.env;
  let request: CliRequest | null = null;
  const program = buildProgram((r) => { request = r; });
  program.configureOutput({
    writeOut: (s) => stdout.write(s),
    writeErr: (s) => stderr.write(s),
    outputError: () => {},
  });
  try {
    await program.parseAsync([...argv], { from: 'user' });
  } catch (e) {
    if (e instanceof CommanderError) {
      if (e.code === 'commander.helpDisplayed' || e.code === 'commander.version') return EXIT_CODES.ok;
      if (e.code === 'commander.help') return e.exitCode === 0 ? EXIT_CODES.ok : EXIT_CODES.badInput;
      const { errorLine } = await import('./errors.js');
      stderr.write(`${errorLine(await commanderToTuningfork(e))}\n`);
      return EXIT_CODES.badInput;
    }
    const { asTuningforkError, errorLine, exitCodeFor } = await import('./errors.js');
    const err = asTuningforkError(e);
    stderr.write(`${errorLine(err)}\n`);
    return exitCodeFor(err);
  }
  const req = request as CliRequest | null;
  if (req === null) return EXIT_CODES.ok;
  try {
    const cwd = ctx.cwd ?? process.cwd();
    switch (req.command) {
      case 'demo': {
        const { demoCommand } = await import('./commands/demo.js');
        return await demoCommand(req.options, { cwd, env, stdout, stderr });
      }
      case 'check': {
        const { checkCommand } = await import('./commands/check.js');
        return await checkCommand(req.manifest, req.options, { cwd, env, stdout, stderr });
      }
      case 'run': {
        const { runCommand } = await import('./commands/run.js');
        return await runCommand(req.manifest, req.options, { cwd, env, stdout, stderr });
      }
      case 'merge': {
        const { mergeCommand } = await import('./commands/merge.js');
        return await mergeCommand(req.manifest, req.options, { cwd, env, stdout, stderr });
      }
    }
  } catch (e) {
    const { asTuningforkError, errorLine, exitCodeFor } = await import('./errors.js');
    const err = asTuningforkError(e);
    stderr.write(`${errorLine(err)}\n`);
    if (env.TUNINGFORK_DEBUG === '1' && e instanceof Error && e.stack !== undefined) stderr.write(`${e.stack}\n`);
    return exitCodeFor(err);
  }
}

// The help texts are accurate: each subcommand's --help lists exactly the options it accepts,
// the README documents the same options and exit codes, and --help exits 0 quickly-enough to be
// usable (speed itself is measured in bench/cases/cli.ts, not here).
import { spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildProgram, EXIT_CODES } from '../src/index.js';
import type { CliRequest } from '../src/index.js';
import { BIN, REPO, ensureBuilt, runCli } from './helpers/cli.js';

const COMMANDS = ['demo', 'check', 'run', 'merge'] as const;

/** Long option names listed in the Options section of a help text. */
function helpOptions(help: string): string[] {
  const section = help.slice(help.indexOf('Options:'));
  const opts = section.split('\n').filter((l) => /^\s{2}-/.test(l)).map((l) => /--[a-z][a-z-]*/.exec(l)![0]);
  return opts.filter((o) => o !== '--help').sort();
}

/** Long option names in the README's table of a command (section `### \`tuningfork <cmd>`). */
function readmeOptions(readme: string, cmd: string): string[] {
  const start = readme.indexOf(`### \`tuningfork ${cmd}`);
  const end = readme.indexOf('\n### ', start + 1);
  const text = readme.slice(start, end === -1 ? undefined : end);
  const rows = text.split('\n').filter((l) => l.startsWith('| `-'));
  return rows.map((l) => /--[a-z][a-z-]*/.exec(l)![0]).sort();
}

/** A valid value for an option that takes one. */
const SAMPLE: Readonly<Record<string, string>> = {
  '--out': 'x', '--jobs': '3', '--shard': '1/2', '--seed': '5', '--pipeline': 'other', '--log-format': 'json',
  '--duration': '12', '--sites': '2', '--units': '3',
};

let helps: Record<string, string> = {};
const readme = readFileSync(join(REPO, 'packages/cli/README.md'), 'utf8');

beforeAll(async () => {
  ensureBuilt();
  const results = await Promise.all(['', ...COMMANDS].map((c) => runCli(c === '' ? ['--help'] : [c, '--help'], REPO)));
  helps = Object.fromEntries(['', ...COMMANDS].map((c, i) => {
    expect(results[i]!.code).toBe(0);
    expect(results[i]!.stderr).toBe('');
    return [c, results[i]!.stdout];
  }));
}, 60_000);

describe('tuningfork --help', () => {
  it('stops quietly with 141 (128 + SIGPIPE) when its reader closes the pipe early (as `| head` does)', async () => {
    const child = spawn(process.execPath, [BIN, 'run', '--help'], { stdio: ['ignore', 'pipe', 'pipe'] });
    child.stdout.destroy(); // the reader is gone before the help is written: the write meets EPIPE
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => { stderr += d; });
    const code = await new Promise<number | null>((r) => child.on('close', r));
    expect(stderr).toBe('');
    expect(code).toBe(141);
  });

  it('names every subcommand, shows examples and the exit-code table', () => {
    for (const c of COMMANDS) expect(helps['']).toMatch(new RegExp(`^  ${c} `, 'm'));
    expect(helps['']).toContain('Examples:');
    for (const [, code] of Object.entries(EXIT_CODES)) expect(helps['']).toMatch(new RegExp(`^  ${code}\\s+\\S`, 'm'));
  });

  it('prints the same exit codes as the README table', () => {
    const table = readme.slice(readme.indexOf('## Exit codes'));
    const readmeCodes = [...table.matchAll(/^\| (\d+) \| /gm)].map((m) => Number(m[1]));
    expect(readmeCodes).toEqual(Object.values(EXIT_CODES));
  });
});

describe.each(COMMANDS)('tuningfork %s --help', (cmd) => {
  it('lists exactly the options the README documents for it, and shows examples', () => {
    expect(helpOptions(helps[cmd]!)).toEqual(readmeOptions(readme, cmd));
    expect(helps[cmd]).toContain('Examples:');
    expect(helps[cmd]).toContain(`$ tuningfork ${cmd}`);
  });

  it('accepts every option it lists (the parser sees each value)', async () => {
    for (const opt of helpOptions(helps[cmd]!)) {
      const args: string[] = [cmd];
      if (cmd !== 'demo') args.push('m.json');
      if (opt !== '--out' && (cmd === 'run' || cmd === 'merge')) args.push('--out', 'o');
      args.push(opt);
      if (SAMPLE[opt] !== undefined) args.push(SAMPLE[opt]);
      let req: CliRequest | null = null;
      const program = buildProgram((r) => { req = r; });
      program.configureOutput({ writeOut: () => {}, writeErr: () => {}, outputError: () => {} });
      await program.parseAsync(args, { from: 'user' });
      expect(req).not.toBeNull();
      const options = (req as unknown as { options: Record<string, unknown> }).options;
      const key = opt.replace(/^--(no-)?/, '').replace(/-([a-z])/g, (_m, c: string) => c.toUpperCase());
      const expected = SAMPLE[opt] === undefined ? !opt.startsWith('--no-') : (/^\d+$/.test(SAMPLE[opt]) ? Number(SAMPLE[opt]) : SAMPLE[opt]);
      expect({ opt, value: options[key] }).toEqual({ opt, value: expected });
    }
  });
});

// Bad input at the command line: each case must exit non-zero with exactly one line
// `CODE: message (fix)` on stderr, no stack trace, and nothing written.
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DOUBLE, ensureBuilt, hasStackTrace, listFiles, makeBatch, removeTree, runCli, tempDir } from './helpers/cli.js';

let root = '';

beforeAll(async () => {
  ensureBuilt();
  root = tempDir('bad');
  await makeBatch(root, 1);
  const manifest = JSON.parse(readFileSync(join(root, 'data/s1/input/session.json'), 'utf8')) as Record<string, any>;
  const variant = (name: string, edit: (m: Record<string, any>) => void) => {
    const m = structuredClone(manifest);
    edit(m);
    writeFileSync(join(root, 'data/s1/input', name), JSON.stringify(m, null, 2));
  };
  variant('missing-file.json', (m) => { m.files[4].path = 'spikes-missing.arrow'; });
  variant('misspelled-column.json', (m) => { m.files[0].sites[0].signal = 'site01_signl'; });
  variant('misspelled-key.json', (m) => { m.file = m.files; delete m.files; });
  writeFileSync(join(root, 'malformed.json'), '{ "seed": 1, "sessions": [ { "manifest": "data/s1/input/session.json", } ] }');
  writeFileSync(join(root, 'escape.json'), JSON.stringify({ sessions: [{ manifest: 'data/s1/input/session.json', out: '../outside' }] }));
  writeFileSync(join(root, 'a-file'), 'not a folder\n');
  mkdirSync(join(root, 'existing'));
}, 60_000);

afterAll(() => removeTree(root));

/** Expect the failure shape and return the error line. */
async function expectOneLineError(args: string[], exit: number, code: string): Promise<string> {
  const before = listFiles(root);
  const r = await runCli(args, root);
  expect(r.code).toBe(exit);
  const lines = r.stderr.trim().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(new RegExp(`^${code}: .+ \\(.+\\)$`));
  expect(hasStackTrace(r.stderr + r.stdout)).toBe(false);
  expect(listFiles(root)).toEqual(before); // nothing written anywhere under the test folder
  return lines[0]!;
}

describe('tuningfork run with bad input', () => {
  it('a data file named in the manifest that does not exist → TF_BAD_FILE naming the field and file', async () => {
    const line = await expectOneLineError(['run', 'data/s1/input/missing-file.json', '--out', 'out', '--pipeline', DOUBLE], 2, 'TF_BAD_FILE');
    expect(line).toContain('files[4].path');
    expect(line).toContain('spikes-missing.arrow');
  });

  it('a manifest file that does not exist → TF_BAD_FILE', async () => {
    await expectOneLineError(['run', 'no-such-manifest.json', '--out', 'out', '--pipeline', DOUBLE], 2, 'TF_BAD_FILE');
  });

  it('a misspelled column → TF_MISSING_COLUMN with the closest column name', async () => {
    const line = await expectOneLineError(['run', 'data/s1/input/misspelled-column.json', '--out', 'out', '--pipeline', DOUBLE], 2, 'TF_MISSING_COLUMN');
    expect(line).toContain("Did you mean 'site01_signal'?");
  });

  it('a misspelled manifest key → TF_BAD_MANIFEST naming the key and the right one', async () => {
    const line = await expectOneLineError(['run', 'data/s1/input/misspelled-key.json', '--out', 'out', '--pipeline', DOUBLE], 2, 'TF_BAD_MANIFEST');
    expect(line).toContain("Did you mean 'files'?");
  });

  it('an unknown command-line option → TF_UNKNOWN_OPTION with a suggestion', async () => {
    const line = await expectOneLineError(['run', 'batch.json', '--out', 'out', '--jbos', '2'], 2, 'TF_UNKNOWN_OPTION');
    expect(line).toContain('--jobs');
  });

  it('an unknown subcommand → TF_UNKNOWN_OPTION', async () => {
    await expectOneLineError(['rnu', 'batch.json'], 2, 'TF_UNKNOWN_OPTION');
  });

  it('a bad option value → TF_BAD_OPTION', async () => {
    await expectOneLineError(['run', 'batch.json', '--out', 'out', '--jobs', '0'], 2, 'TF_BAD_OPTION');
    await expectOneLineError(['run', 'batch.json', '--out', 'out', '--shard', '4/4'], 2, 'TF_BAD_OPTION');
  });

  it('a malformed manifest (invalid JSON) → TF_BAD_MANIFEST with line and column', async () => {
    const line = await expectOneLineError(['run', 'malformed.json', '--out', 'out', '--pipeline', DOUBLE], 2, 'TF_BAD_MANIFEST');
    expect(line).toMatch(/line 1, column \d+/);
  });

  it('an output folder that is a file → TF_BAD_OUTPUT_PATH', async () => {
    await expectOneLineError(['run', 'batch.json', '--out', 'a-file', '--pipeline', DOUBLE], 2, 'TF_BAD_OUTPUT_PATH');
    await expectOneLineError(['run', 'batch.json', '--out', 'a-file/sub', '--pipeline', DOUBLE], 2, 'TF_BAD_OUTPUT_PATH');
    await expectOneLineError(['demo', '--out', 'a-file'], 2, 'TF_BAD_OUTPUT_PATH');
  });

  it('a session output path escaping the output folder → TF_BAD_OUTPUT_PATH', async () => {
    const line = await expectOneLineError(['run', 'escape.json', '--out', 'existing', '--pipeline', DOUBLE], 2, 'TF_BAD_OUTPUT_PATH');
    expect(line).toContain('sessions[0].out');
    expect(existsSync(join(root, 'outside'))).toBe(false);
  });

  it('a pipeline output named outside the session folder → TF_BAD_OUTPUT_PATH, exit 1, nothing written', async () => {
    writeFileSync(join(root, 'evil.json'), JSON.stringify({ options: { textName: '../../../evil.html' }, sessions: ['data/s1/input/session.json'] }));
    const before = listFiles(root);
    const r = await runCli(['run', 'evil.json', '--out', 'existing', '--pipeline', DOUBLE, '--quiet'], root);
    expect(r.code).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^TF_BAD_OUTPUT_PATH: session 'sim-seed1': output '..\/..\/..\/evil.html'/);
    expect(hasStackTrace(r.stderr)).toBe(false);
    expect(listFiles(root).filter((f) => !before.includes(f))).toEqual([]);
    expect(listFiles(join(root, 'existing'))).toEqual([]);
  });

  it('a pipeline that fails → its code on one line, exit 1, nothing written for that session', async () => {
    writeFileSync(join(root, 'fail.json'), JSON.stringify({ options: { failSession: 'sim-seed1' }, sessions: ['data/s1/input/session.json'] }));
    const r = await runCli(['run', 'fail.json', '--out', 'failed', '--pipeline', DOUBLE, '--quiet'], root);
    expect(r.code).toBe(1);
    expect(r.stderr.trim().split('\n')).toEqual([expect.stringMatching(/^TF_FIT_FAILED: session 'sim-seed1': pipeline double: told to fail/)]);
    expect(existsSync(join(root, 'failed'))).toBe(false);
  });

  it('a --pipeline module without analyzeSession → TF_PIPELINE_UNAVAILABLE before anything is written', async () => {
    writeFileSync(join(root, 'not-a-pipeline.mjs'), 'export const nothing = 1;\n');
    await expectOneLineError(['run', 'data/s1/input/session.json', '--out', 'out', '--pipeline', './not-a-pipeline.mjs'], 1, 'TF_PIPELINE_UNAVAILABLE');
  });
});

describe('tuningfork check with bad input', () => {
  it('reports a misspelled column as one coded line and exit 2', async () => {
    const r = await runCli(['check', 'data/s1/input/misspelled-column.json'], root);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toEqual([expect.stringMatching(/^TF_MISSING_COLUMN: session 'sim-seed1': .+site01_signl.+\(.+\)$/)]);
  });
});

// Removal of staging folders left by killed runs (packages/cli/src/output/staging.ts).
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync } from 'node:fs';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { STAGING_DIR, removeStaleStaging, stagingPath } from '../src/output/staging.js';
import { removeTree, tempDir } from './helpers/cli.js';

const root = tempDir('staging');
afterAll(() => removeTree(root));

/** A process that exited but is not reaped (a zombie): `sh` backgrounds `sleep 0`, then becomes `sleep 5`, which never waits. */
function zombie(): Promise<{ pid: number; stop: () => void }> {
  return new Promise((resolveZombie) => {
    const holder = spawn('sh', ['-c', 'sleep 0 & echo $!; exec sleep 5'], { stdio: ['ignore', 'pipe', 'ignore'] });
    holder.stdout.setEncoding('utf8').once('data', (d: string) => {
      const pid = Number(d.trim());
      setTimeout(() => resolveZombie({ pid, stop: () => holder.kill() }), 300); // let sleep 0 exit
    });
  });
}

describe('removeStaleStaging', () => {
  it('removes folders of gone or zombie owners and keeps those of live runs and of other hosts', async () => {
    const out = join(root, 'out');
    const z = await zombie();
    try {
      const host = hostname();
      const names = {
        own: `a~${host}~${process.pid}~1-0~0`,
        zombie: `b~${host}~${z.pid}~1-0~0`,
        gone: `c~${host}~999999999~1-0~0`,
        otherHost: `d~elsewhere.example~999999999~1-0~0`,
      };
      for (const n of Object.values(names)) mkdirSync(join(out, STAGING_DIR, n), { recursive: true });
      expect(removeStaleStaging(out)).toBe(2);
      expect(readdirSync(join(out, STAGING_DIR)).sort()).toEqual([names.own, names.otherHost].sort());
    } finally {
      z.stop();
    }
  });

  it('names staging folders after this process as owner when it is not a session child', () => {
    const p = stagingPath(join(root, 'x'), 'sess');
    const parts = p.split('/').pop()!.split('~');
    expect(parts[0]).toBe('sess');
    expect(parts[1]).toBe(hostname());
    expect(Number(parts[2])).toBe(process.pid);
    expect(existsSync(p)).toBe(false);
  });
});

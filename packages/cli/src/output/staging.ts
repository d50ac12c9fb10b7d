import { readFileSync, readdirSync, rmSync, rmdirSync } from 'node:fs';
import { rename, rm } from 'node:fs/promises';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { threadId } from 'node:worker_threads';

/** Name of the folder, inside the output folder, where sessions are assembled before renaming. */
export const STAGING_DIR = '.staging';

let sequence = 0;

/** Environment variable through which a run tells its session child processes its own pid. */
export const OWNER_PID_ENV = 'TUNINGFORK_OWNER_PID';

/** Pid of the run that owns this process's staging folders: the parent run for a session child, else this process. */
function ownerPid(): number {
  if (process.send === undefined) return process.pid; // not a child with an IPC channel: its own owner
  const v = Number(process.env[OWNER_PID_ENV]);
  return Number.isSafeInteger(v) && v > 0 ? v : process.pid;
}

/**
 * A fresh staging path for one session: `<out>/.staging/<id>~<host>~<owner pid>~<pid>-<thread>~<n>`.
 * The owning run's host and process id in the name let a later run remove what a killed run left,
 * including what its session child processes staged.
 */
export function stagingPath(outRoot: string, id: string): string {
  return join(outRoot, STAGING_DIR, `${id}~${hostname()}~${ownerPid()}~${process.pid}-${threadId}~${(sequence++).toString(36)}`);
}

/** Whether process pid runs: it exists (signal 0) and, where /proc tells, is not a zombie (exited, not yet reaped). */
function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
  try {
    // /proc/<pid>/stat: "pid (comm) state …"; comm may hold spaces or parentheses, so read after the last ')'.
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    return stat.slice(stat.lastIndexOf(')') + 2, stat.lastIndexOf(')') + 3) !== 'Z';
  } catch {
    return true; // no /proc (not Linux): trust the signal
  }
}

/**
 * Remove staging folders left by processes of this host that no longer run (a killed run).
 * Folders of live processes (another shard on the same machine) and of other hosts are kept.
 *
 * @returns Number of folders removed.
 */
export function removeStaleStaging(outRoot: string): number {
  const dir = join(outRoot, STAGING_DIR);
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return 0;
  }
  const host = hostname();
  let removed = 0;
  for (const name of names) {
    const parts = name.split('~');
    if (parts.length < 5) continue;
    const [h, pidText] = parts.slice(-4);
    const pid = Number(pidText);
    if (h !== host || !Number.isSafeInteger(pid) || pid === process.pid || alive(pid)) continue;
    rmSync(join(dir, name), { recursive: true, force: true });
    removed++;
  }
  return removed;
}

/** Remove the staging folder when it is empty (another process may still be using it). */
export function removeEmptyStaging(outRoot: string): void {
  try {
    rmdirSync(join(outRoot, STAGING_DIR));
  } catch {
    // not empty (another shard is working) or already gone
  }
}

let publishGuard: ((stage: string) => void) | null = null;

/**
 * Install a check that runs right before every publishStaged rename, with the staging folder, and
 * may throw or exit to stop it (a session child process uses it to remove the folder and stop once
 * its parent run was killed). null removes it.
 */
export function setPublishGuard(guard: ((stage: string) => void) | null): void {
  publishGuard = guard;
}

/**
 * Move a finished staging folder to `final`, replacing a previous `final` folder: the old one is
 * renamed aside first and removed after, so `final` is always either the old or the new folder.
 */
export async function publishStaged(stage: string, final: string): Promise<void> {
  publishGuard?.(stage);
  try {
    await rename(stage, final);
  } catch (e) {
    const errno = (e as NodeJS.ErrnoException).code;
    if (errno !== 'ENOTEMPTY' && errno !== 'EEXIST') throw e;
    const old = `${stage}.old`;
    await rename(final, old);
    await rename(stage, final);
    await rm(old, { recursive: true, force: true });
  }
}

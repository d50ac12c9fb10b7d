import { existsSync, realpathSync, statSync } from 'node:fs';
import { dirname, isAbsolute, relative, resolve, sep } from 'node:path';
import { TuningforkError } from '@tuningfork/core';

function isInside(root: string, p: string): boolean {
  const rel = relative(root, p);
  return rel === '' || (!rel.startsWith(`..${sep}`) && rel !== '..' && !isAbsolute(rel));
}

/** The real path of the deepest existing ancestor of `p` (p itself when it exists). */
function realAncestor(p: string): string {
  let cur = p;
  for (;;) {
    if (existsSync(cur)) return realpathSync(cur);
    const up = dirname(cur);
    if (up === cur) return cur;
    cur = up;
  }
}

/**
 * Check an output folder before anything is written: it may not exist yet, but if it (or one of
 * its parents) exists it must be a folder.
 *
 * @returns The absolute path.
 * @throws {TuningforkError} TF_BAD_OUTPUT_PATH when the path or a parent is a file.
 */
export function checkOutputFolder(out: string, cwd: string = process.cwd()): string {
  if (out.trim() === '') {
    throw new TuningforkError('TF_BAD_OUTPUT_PATH', '--out is empty; name the output folder.', { out });
  }
  const abs = resolve(cwd, out);
  let cur = abs;
  for (;;) {
    if (existsSync(cur)) {
      if (!statSync(cur).isDirectory()) {
        throw new TuningforkError(
          'TF_BAD_OUTPUT_PATH',
          cur === abs ? `output folder '${out}' is a file, not a folder.` : `output folder '${out}' cannot be created: '${relative(cwd, cur) || cur}' is a file.`,
          { out, file: cur },
        );
      }
      return abs;
    }
    const up = dirname(cur);
    if (up === cur) return abs;
    cur = up;
  }
}

/**
 * Resolve a path given relative to the output folder, refusing anything that would land outside
 * it: absolute paths, `..` segments that climb out, and existing symbolic links that point out.
 *
 * @param root - Absolute output folder.
 * @param rel - Relative path with '/' separators (e.g. 'sessions/rat01-d1', 'figures/peth.svg').
 * @param what - What the path is, for the message (e.g. "sessions[2].out").
 * @throws {TuningforkError} TF_BAD_OUTPUT_PATH.
 */
export function resolveInside(root: string, rel: string, what: string): string {
  const fail = (why: string): never => {
    throw new TuningforkError('TF_BAD_OUTPUT_PATH', `${what} '${rel}' ${why}; every output must stay inside the output folder.`, { path: rel, what });
  };
  if (typeof rel !== 'string' || rel.length === 0) fail('is empty');
  if (rel.includes('\0')) fail('contains a NUL character');
  if (isAbsolute(rel) || /^[A-Za-z]:/.test(rel) || rel.startsWith('\\')) fail('is an absolute path');
  const segments = rel.split(/[\\/]/);
  if (segments.some((s) => s === '..')) fail("climbs out with '..'");
  const abs = resolve(root, ...segments);
  if (!isInside(root, abs) || abs === root) fail('does not name a path inside the output folder');
  if (existsSync(root)) {
    const realRoot = realpathSync(root);
    if (!isInside(realRoot, realAncestor(abs))) fail('goes through a symbolic link that leaves the output folder');
  }
  return abs;
}

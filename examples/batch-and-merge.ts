/**
 * Run a batch of sessions and read the merged project-level table with arquero.
 *
 * Run:  npm run build && npx tsx examples/batch-and-merge.ts [out-dir]
 * (The same as the command line: `tuningfork run batch.json --out results`.)
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import * as aq from 'arquero';
import { main as tuningfork } from '@tuningfork/cli';

export async function main(outDir = 'example-output/batch', durationSec = 300, jobs?: number): Promise<{ cells: number; byGroup: Record<string, number> }> {
  mkdirSync(outDir, { recursive: true });
  // 1. Two sessions of the demo task, one per animal (your own sessions: one manifest each).
  for (const [name, seed] of [['rat1', 1], ['rat2', 2]] as const) {
    const code = await tuningfork(['demo', '--out', join(outDir, name), '--duration', String(durationSec), '--seed', String(seed), '--units', '2', '--no-analysis', '--quiet']);
    if (code !== 0) throw new Error(`demo for ${name} exited with ${code}`);
  }
  // 2. A batch manifest: sessions with animal and group labels, shared options and a batch seed.
  writeFileSync(join(outDir, 'batch.json'), JSON.stringify({
    seed: 7,
    options: { report: false, encode: { model: { null: { nShifts: 200 } } } },
    sessions: [
      { manifest: 'rat1/input/session.json', animal: 'rat1', group: 'A' },
      { manifest: 'rat2/input/session.json', animal: 'rat2', group: 'B' },
    ],
  }, null, 2));
  // 3. Analyse every session (in parallel on the machine's cores) and merge the tables.
  const code = await tuningfork(['run', join(outDir, 'batch.json'), '--out', join(outDir, 'results'), '--quiet', ...(jobs ? ['--jobs', String(jobs)] : [])]);
  if (code !== 0) throw new Error(`run exited with ${code}`);
  // 4. The merged table has session, animal and group columns first; read it with arquero.
  const cells = aq.fromArrow(readFileSync(join(outDir, 'results', 'merged', 'cells.arrow')));
  const counts = cells.groupby('group', 'class').count().orderby('group', 'class');
  counts.print();
  const byGroup: Record<string, number> = {};
  for (const row of cells.groupby('group').count().objects() as { group: string; count: number }[]) byGroup[row.group] = row.count;
  return { cells: cells.numRows(), byGroup };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await main(process.argv[2]);

/**
 * Classify every unit (and photometry site) of a session: reward, movement, mixed,
 * action-prediction or none, with circular-shift nulls and Benjamini–Hochberg control.
 *
 * Run:  npm run build && npx tsx examples/classify-units.ts
 */
import { pathToFileURL } from 'node:url';
import { simulateSession } from '@tuningfork/simulate';
import { analyzeSession } from 'tuningfork';

export async function main(durationSec = 1800, nUnits = 10): Promise<{ cell: string; found: string; truth: string }[]> {
  const sim = simulateSession({ durationSec, nSites: 0, nUnits, seed: 3 });
  // The whole pipeline; each step's options can be overridden, e.g. fewer shifts for a quick look.
  const analysis = await analyzeSession(sim.session, {
    seed: 1, report: false,
    encode: { model: { null: { nShifts: 500 } } },
  }, { onProgress: (step, f) => { if (f === 1) console.log(`done: ${step}`); } });
  const truth = new Map(sim.truth.cells.map((c) => [c.name, c.class]));
  const rows = analysis.encoding!.result.classes.cells.map((c) => ({ cell: c.name, found: c.class, truth: truth.get(c.name) ?? '?' }));
  console.table(rows);
  return rows;
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await main();

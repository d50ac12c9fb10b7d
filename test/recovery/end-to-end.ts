/**
 * End-to-end recovery on the simulator: the whole session pipeline (analyzeSession) on default-SNR
 * sessions of the demo task, scored against the simulator's truth (classes, per-trial RPE and APE).
 *
 *   npx tsx --conditions=@tuningfork/source test/recovery/end-to-end.ts [--seeds 5] [--minutes 60] [--units 10]
 *
 * Prints the confusion matrix (truth × called class) and the RPE/APE correlations per seed.
 */
import { pathToFileURL } from 'node:url';
import { simulateSession } from '@tuningfork/simulate';
import { correlation } from '@tuningfork/test-utils';
import { analyzeSession } from 'tuningfork';

export const TRUE_CLASSES = ['reward', 'movement', 'mixed', 'action-prediction', 'none'] as const;
export const CALLED_CLASSES = ['reward', 'movement', 'mixed', 'action-prediction', 'none', 'unattributed'] as const;

export interface EndToEndResult {
  /** confusion[truth][called] counts. */
  readonly confusion: Record<string, Record<string, number>>;
  readonly cells: number;
  readonly correct: number;
  readonly perSeed: { seed: number; rpeR: number; apeR: number; correct: number; cells: number }[];
  /** Untuned ('none') cells called tuned, and all 'none' cells. */
  readonly noneCalledTuned: number;
  readonly noneCells: number;
  /** Action-prediction cells called movement, and movement cells called action-prediction. */
  readonly apeAsMovement: number;
  readonly movementAsApe: number;
}

export async function endToEnd(seeds: readonly number[], minutes: number, nUnits: number): Promise<EndToEndResult> {
  const confusion: Record<string, Record<string, number>> = Object.fromEntries(TRUE_CLASSES.map((t) => [t, Object.fromEntries(CALLED_CLASSES.map((c) => [c, 0]))]));
  const perSeed: EndToEndResult['perSeed'] = [];
  let cells = 0, correct = 0, noneCalledTuned = 0, noneCells = 0, apeAsMovement = 0, movementAsApe = 0;
  for (const seed of seeds) {
    const sim = simulateSession({ durationSec: minutes * 60, nSites: 4, nUnits, seed });
    const a = await analyzeSession(sim.session, { seed, report: false, qc: false, intermediates: 'outputs' });
    const truth = new Map(sim.truth.cells.map((c) => [c.name, c.class]));
    let ok = 0;
    for (const c of a.encoding!.result.classes.cells) {
      const t = truth.get(c.name)!;
      confusion[t]![c.class] = (confusion[t]![c.class] ?? 0) + 1;
      if (t === c.class) ok++;
      if (t === 'none') { noneCells++; if (c.class !== 'none') noneCalledTuned++; }
      if (t === 'action-prediction' && c.class === 'movement') apeAsMovement++;
      if (t === 'movement' && c.class === 'action-prediction') movementAsApe++;
    }
    cells += a.encoding!.result.classes.cells.length;
    correct += ok;
    perSeed.push({ seed, rpeR: correlation(a.learning!.regressors.rpe, sim.truth.rpe), apeR: correlation(a.learning!.regressors.ape, sim.truth.ape), correct: ok, cells: a.encoding!.result.classes.cells.length });
  }
  return { confusion, cells, correct, perSeed, noneCalledTuned, noneCells, apeAsMovement, movementAsApe };
}

export function formatResult(r: EndToEndResult): string {
  const lines = [`| truth \\ called | ${CALLED_CLASSES.join(' | ')} |`, `|---|${CALLED_CLASSES.map(() => '---').join('|')}|`];
  for (const t of TRUE_CLASSES) lines.push(`| ${t} | ${CALLED_CLASSES.map((c) => r.confusion[t]![c]).join(' | ')} |`);
  lines.push('', `correct: ${r.correct}/${r.cells} (${((100 * r.correct) / r.cells).toFixed(1)} %); none called tuned: ${r.noneCalledTuned}/${r.noneCells}; APE→movement ${r.apeAsMovement}, movement→APE ${r.movementAsApe}`);
  for (const s of r.perSeed) lines.push(`seed ${s.seed}: ${s.correct}/${s.cells} correct, r(RPE) = ${s.rpeR.toFixed(4)}, r(APE) = ${s.apeR.toFixed(4)}`);
  return lines.join('\n');
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const arg = (name: string, d: number) => { const i = process.argv.indexOf(`--${name}`); return i >= 0 ? Number(process.argv[i + 1]) : d; };
  const seeds = Array.from({ length: arg('seeds', 5) }, (_, i) => i + 1);
  console.log(formatResult(await endToEnd(seeds, arg('minutes', 60), arg('units', 10))));
}

/**
 * Align a corrected trace to rewards, average with a bootstrap confidence band, find the
 * significant runs, and draw the PETH as an SVG figure.
 *
 * Run:  npm run build && npx tsx examples/peth-with-band.ts [out-dir]
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { eventTimes } from '@tuningfork/core';
import { periEventMatrix } from '@tuningfork/align';
import { periEventFigure } from '@tuningfork/report';
import { conditionSite } from '@tuningfork/signal';
import { simulateSession } from '@tuningfork/simulate';
import { bootstrapTimecourse, significantRunsFromInterval } from '@tuningfork/stats';

export function main(outDir = 'example-output', durationSec = 900): { trials: number; runs: number; file: string } {
  const { session } = simulateSession({ durationSec, nSites: 1, siteClasses: ['reward'], nUnits: 0, seed: 11 });
  const z = conditionSite(session.photometry[0]!).z.signal;

  const conditions = [];
  for (const [label, name] of [['rewarded', 'reward'], ['omitted', 'omission']] as const) {
    // Trials × time around each event, −2 to +5 s at 50 Hz, baseline [−2, −1) s subtracted per trial.
    const m = periEventMatrix(z, eventTimes(session.events, name), { preSec: 2, postSec: 5, sampleRate: 50, baseline: 'subtract', baselineSec: [-2, -1] });
    // 95 % percentile bootstrap band of the mean (seeded: the same seed gives the same band).
    const band = bootstrapTimecourse(m, { resamples: 2000, seed: 1 });
    // Runs of at least 0.1 s where the band excludes 0 (consecutive-threshold rule).
    const runs = significantRunsFromInterval(band, { minRunSec: 0.1 }).runs;
    conditions.push({ label, times: m.offsets, mean: band.estimate, low: band.low, high: band.high, n: m.rows, runs: runs.map((r) => ({ onset: r.onsetSec, offset: r.offsetSec, sign: r.sign })) });
    console.log(`${label}: ${m.rows} trials, ${runs.length} significant run(s)${runs[0] ? `, first from ${runs[0].onsetSec.toFixed(2)} s` : ''}`);
  }
  const svg = periEventFigure({ cell: session.photometry[0]!.name, event: 'outcome', valueLabel: 'z(ΔF/F) − baseline', level: 0.95, conditions });
  mkdirSync(outDir, { recursive: true });
  const file = join(outDir, 'peth-outcome.svg');
  writeFileSync(file, svg);
  console.log(`wrote ${file}`);
  return { trials: conditions.reduce((a, c) => a + c.n, 0), runs: conditions.reduce((a, c) => a + c.runs.length, 0), file };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) main(process.argv[2]);

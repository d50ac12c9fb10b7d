// Writes example figures of the report package to packages/report/docs/ (standalone .svg files)
// from a simulated session, and prints the size of the full example report.
// Run from the repository root:
//   npx tsx --conditions=@tuningfork/source packages/report/scripts/render-example-figures.ts
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { classCountsFigure, periEventFigure, sessionReport, toSvgFile, trialHeatmapFigure, tuningMapFigure } from '../src/index.js';
import { demoReportInput } from '../test/support/demo-data.js';

const out = join(dirname(fileURLToPath(import.meta.url)), '..', 'docs');
mkdirSync(out, { recursive: true });
const input = demoReportInput({ durationSec: 900, nUnits: 10 });
const site = 1; // site02 (site01 carries a hostile test name)
writeFileSync(join(out, 'example-peri-event.svg'), toSvgFile(periEventFigure({ ...input.responses![site]!, event: 'outcome' }, { id: 'example-peri-event' })));
writeFileSync(join(out, 'example-trial-heatmap.svg'), toSvgFile(trialHeatmapFigure(input.heatmaps![site]!, { id: 'example-trial-heatmap' })));
writeFileSync(join(out, 'example-tuning-map.svg'), toSvgFile(tuningMapFigure(input.tuning!.cells, { id: 'example-tuning-map' })));
writeFileSync(join(out, 'example-class-counts.svg'), toSvgFile(classCountsFigure(input.tuning!.counts!, { id: 'example-class-counts' })));
const html = sessionReport(input);
console.log(`example report: ${(Buffer.byteLength(html) / 1e6).toFixed(2)} MB (not written; write it yourself if needed)`);

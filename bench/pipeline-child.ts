// Runs tuningfork's session pipeline on a manifest, the way the side-by-side benchmark with the
// numpy/scipy peer needs it, and prints {steps, total, peakMB} as JSON on the last line.
import { loadSession } from '@tuningfork/io';
import { analyzeSession } from 'tuningfork';
import type { AnalyzeSessionOptions } from 'tuningfork';

const [manifest, optionsJson] = process.argv.slice(2);
const t0 = performance.now();
const loaded = await loadSession(manifest!);
const load = (performance.now() - t0) / 1000;
const options = JSON.parse(optionsJson ?? '{}') as AnalyzeSessionOptions;
const a = await analyzeSession(loaded.session, options);
const total = (performance.now() - t0) / 1000;
const classes = Object.fromEntries(a.encoding?.result.classes.cells.map((c) => [c.name, c.class]) ?? []);
console.log(JSON.stringify({ steps: { load, ...a.timings }, total, peakMB: process.resourceUsage().maxRSS / 1024, classes }));

// Runs one benchmark case in this process and prints a JSON array of rows on the last line.
import { pathToFileURL } from 'node:url';
import type { BenchCase, BenchRow } from './harness.js';

const [file, indexText] = process.argv.slice(2);
const mod = (await import(pathToFileURL(file!).href)) as { cases: BenchCase[] };
const c = mod.cases[Number(indexText)]!;
const peakMB = () => process.resourceUsage().maxRSS / 1024;
let rows: BenchRow[];
if (c.custom) {
  rows = await c.custom();
  for (const r of rows) r.peakMB ??= peakMB();
} else {
  const input = await c.setup?.();
  const reps = c.reps ?? 5;
  const times: number[] = [];
  let sink = 0;
  for (let i = 0; i < reps; i++) {
    const t = process.hrtime.bigint();
    const out = await c.run!(input);
    times.push(Number(process.hrtime.bigint() - t) / 1e9);
    sink += out === undefined ? 0 : 1;
  }
  times.sort((a, b) => a - b);
  const med = times.length % 2 ? times[(times.length - 1) / 2]! : (times[times.length / 2 - 1]! + times[times.length / 2]!) / 2;
  const verdict = c.targetSec === undefined ? '' : `${med <= c.targetSec ? 'PASS' : 'FAIL'} (target ≤ ${c.targetSec} s)`;
  rows = [{ operation: c.name, size: c.size, medianSec: med, peakMB: peakMB(), note: `${verdict}${sink < 0 ? '!' : ''}` }];
}
console.log(JSON.stringify(rows));

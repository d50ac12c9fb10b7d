#!/usr/bin/env node
// npm run bench [-- filter]: runs every case of bench/cases/*.ts, each in its own Node process
// (tsx transpiles the bench file; packages resolve to their built dist/), and prints one table:
// operation, input size, median time, peak memory, note. Results also go to bench-output/results.json.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = dirname(fileURLToPath(import.meta.url));
const filter = process.argv[2] ?? '';
const files = readdirSync(join(root, 'cases')).filter((f) => f.endsWith('.ts')).sort();
const all = [];
for (const f of files) {
  const file = join(root, 'cases', f);
  const list = spawnSync(process.execPath, ['--import', 'tsx', '-e',
    `const m = await import(${JSON.stringify('file://' + file)}); console.log(JSON.stringify(m.cases.map(c => c.name)));`,
  ], { encoding: 'utf8', input: '' });
  if (list.status !== 0) { console.error(`cannot load ${f}:\n${list.stderr}`); process.exitCode = 1; continue; }
  const names = JSON.parse(list.stdout.trim().split('\n').pop());
  names.forEach((name, i) => {
    if (filter && !name.includes(filter) && !f.includes(filter)) return;
    process.stderr.write(`bench: ${name} … `);
    const r = spawnSync(process.execPath, ['--expose-gc', '--max-old-space-size=16000', '--import', 'tsx', join(root, 'run-one.ts'), file, String(i)], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (r.status !== 0) {
      process.stderr.write('FAILED\n' + r.stderr + '\n');
      all.push({ operation: name, size: '', medianSec: NaN, note: 'FAILED' });
      process.exitCode = 1;
      return;
    }
    const rows = JSON.parse(r.stdout.trim().split('\n').pop());
    process.stderr.write(`${rows.map((x) => x.medianSec.toFixed(3) + ' s').join(', ')}\n`);
    all.push(...rows);
  });
}
const fmt = (x) => (Number.isFinite(x) ? (x < 0.01 ? x.toExponential(2) : x.toFixed(3)) : '—');
const header = ['operation', 'size', 'median s', 'peak MB', 'note'];
const body = all.map((r) => [r.operation, r.size, fmt(r.medianSec), r.peakMB ? r.peakMB.toFixed(0) : '—', r.note ?? '']);
const widths = header.map((h, j) => Math.max(h.length, ...body.map((row) => String(row[j]).length)));
const line = (row) => '| ' + row.map((c, j) => String(c).padEnd(widths[j])).join(' | ') + ' |';
console.log(line(header));
console.log('|' + widths.map((w) => '-'.repeat(w + 2)).join('|') + '|');
for (const row of body) console.log(line(row));
mkdirSync(join(root, '..', 'bench-output'), { recursive: true });
writeFileSync(join(root, '..', 'bench-output', 'results.json'), JSON.stringify(all, null, 2) + '\n');

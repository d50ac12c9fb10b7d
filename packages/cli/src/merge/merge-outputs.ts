import { mkdir, readFile, rm } from 'node:fs/promises';
import { join, relative, sep } from 'node:path';
import { canonicalJson, makeProvenance, TuningforkError, VERSION } from '@tuningfork/core';
import { batchReport } from '@tuningfork/report';
import type { TuningCell } from '@tuningfork/report';
import { formatCsvChunks, readArrow, writeFileAtomic } from '@tuningfork/io';
import type { ArrowTable } from '@tuningfork/io';
import { encodeMergedArrow } from '../internal/merged-arrow.js';
import type { MergedKind, MergedPart } from '../internal/merged-arrow.js';
import { DONE_FILE, stableJson } from '../output/done-record.js';
import type { DoneRecord } from '../output/done-record.js';
import { resolveInside } from '../output/paths.js';
import { publishStaged, stagingPath } from '../output/staging.js';
import { MERGED_DIR } from '../batch/plan.js';
import type { SessionJob } from '../run/job-types.js';

/** Columns the merge puts before every table's own columns. */
export const LABEL_COLUMNS = ['session', 'animal', 'group'] as const;

/** What mergeOutputs wrote. */
export interface MergeSummary {
  /** Rows of each merged table, by table name (sorted). */
  readonly tables: Readonly<Record<string, number>>;
  readonly sessions: number;
  /** Absolute path of the merged folder. */
  readonly dir: string;
  /** The lines of summary.txt. */
  readonly text: readonly string[];
}

interface SessionDone {
  readonly job: SessionJob;
  readonly dir: string;
  readonly record: DoneRecord;
}

function kindOf(type: string): MergedKind {
  if (type === 'Int32' || type === 'Int16' || type === 'Int8' || type === 'Uint16' || type === 'Uint8') return 'int';
  if (/utf8/i.test(type) || /^Dictionary/.test(type)) return 'string';
  return 'float';
}

async function readDone(job: SessionJob): Promise<SessionDone | string> {
  const dir = resolveInside(job.outRoot, job.outDir, `output folder of session '${job.id}'`);
  let record: DoneRecord;
  try {
    record = JSON.parse(await readFile(join(dir, DONE_FILE), 'utf8')) as DoneRecord;
  } catch {
    return `${job.id} (not finished)`;
  }
  const same = record.seed === job.seed && record.pipeline === job.pipeline && canonicalJson(record.options) === canonicalJson(job.options);
  if (!same) return `${job.id} (made with other options, seed or pipeline)`;
  return { job, dir, record };
}

/**
 * Combine the finished outputs of the sessions of a batch into project-level tables.
 *
 * For every table name found in any session (`<name>.arrow` at the top of its folder), reads
 * the sessions' Arrow files in the jobs' order (sorted by session id) and writes
 * `merged/<name>.arrow` and `merged/<name>.csv` with `session`, `animal` and `group` columns
 * first, then the union of the sessions' columns in order of first appearance. A column missing
 * from a session is NaN (numbers) or '' (text) there; integer columns stay Int32 when every
 * session has them as integers. Also writes `summary.json` and `summary.txt` (sessions, animals,
 * groups, rows per table, and the class counts per group from the `class` column of the `cells`
 * table, or of a `classes` table). The folder is assembled in staging and renamed into place,
 * like a session's. Only one table is in memory at a time (all sessions' parts of it).
 *
 * The result depends only on the sessions' files and the jobs' order, so outputs merged from the
 * shards of a job array equal those of a single-machine run byte for byte.
 *
 * @throws {TuningforkError} TF_INCOMPLETE_BATCH when a session has no finished outputs or
 *   outputs made with other options (naming up to five); TF_BAD_FILE when a column is text in
 *   one session and numeric in another.
 */
export async function mergeOutputs(jobs: readonly SessionJob[], outRoot: string): Promise<MergeSummary> {
  const found = await Promise.all(jobs.map(readDone));
  const missing = found.filter((x): x is string => typeof x === 'string');
  if (missing.length > 0) {
    throw new TuningforkError(
      'TF_INCOMPLETE_BATCH',
      `merge: ${missing.length} of ${jobs.length} sessions have no finished outputs to merge: ${missing.slice(0, 5).join(', ')}${missing.length > 5 ? ', …' : ''}.`,
      { missing: missing.length },
    );
  }
  const done = found as SessionDone[];
  const names = new Set<string>();
  for (const d of done) {
    for (const f of d.record.outputs) if (!f.name.includes('/') && f.name.endsWith('.arrow')) names.add(f.name.slice(0, -'.arrow'.length));
  }
  const tableNames = [...names].sort();
  const stage = stagingPath(outRoot, MERGED_DIR);
  const rows: Record<string, number> = {};
  const classes: ClassRow[] = [];
  try {
    await mkdir(stage, { recursive: true });
    for (const name of tableNames) {
      // One table at a time: every session's part of it is in memory (numeric columns are views
      // into the files' bytes), never the whole batch's tables.
      const parts: { d: SessionDone; t: ArrowTable }[] = [];
      for (const d of done) {
        if (d.record.outputs.some((f) => f.name === `${name}.arrow`)) parts.push({ d, t: await readArrow(join(d.dir, `${name}.arrow`)) });
      }
      const order: string[] = [];
      const kinds = new Map<string, MergedKind>();
      for (const { d, t } of parts) {
        for (const f of t.fields) {
          if ((LABEL_COLUMNS as readonly string[]).includes(f)) continue; // the label columns win
          const k = kindOf(t.types[f] ?? 'Float64');
          const prev = kinds.get(f);
          if (prev === undefined) {
            order.push(f);
            kinds.set(f, k);
          } else if ((prev === 'string') !== (k === 'string')) {
            throw new TuningforkError('TF_BAD_FILE', `merge: column '${f}' of table '${name}' is ${k === 'string' ? 'text' : 'numeric'} in session '${d.job.id}' but ${prev === 'string' ? 'text' : 'numeric'} in an earlier session.`, { table: name, column: f, session: d.job.id });
          } else if (prev !== k) {
            kinds.set(f, 'float');
          }
        }
      }
      for (const { t } of parts) for (const f of order) if (kinds.get(f) === 'int' && !t.fields.includes(f)) kinds.set(f, 'float');
      const merged: MergedPart[] = parts.map(({ d, t }) => ({
        rows: t.rows,
        labels: { session: d.job.id, animal: d.job.animal, group: d.job.group },
        numbers: t.columns,
        strings: t.strings,
      }));
      await writeFileAtomic(join(stage, `${name}.arrow`), encodeMergedArrow(LABEL_COLUMNS, order, kinds, merged));
      // CSV: one session at a time, formatted by io exactly as a whole table would be.
      const sessionCsv = function* (): Generator<string> {
        let first = true;
        for (const p of merged) {
          const data: Record<string, Float64Array | readonly string[]> = {};
          for (const l of LABEL_COLUMNS) data[l] = new Array<string>(p.rows).fill(p.labels[l] ?? '');
          for (const f of order) {
            data[f] = kinds.get(f) === 'string' ? (p.strings[f] ?? new Array<string>(p.rows).fill('')) : (p.numbers[f] ?? new Float64Array(p.rows).fill(NaN));
          }
          yield* formatCsvChunks(data, { header: first });
          first = false;
        }
      };
      await writeFileAtomic(join(stage, `${name}.csv`), sessionCsv());
      rows[name] = merged.reduce((a, p) => a + p.rows, 0);
      if (classes.length === 0 && (CLASS_TABLES as readonly string[]).includes(name) && order.includes('class') && kinds.get('class') === 'string') {
        for (const p of merged) for (const c of p.strings.class!) classes.push({ group: p.labels.group ?? '', cls: c });
      }
    }
    const text = summaryLines(done, rows, classes);
    const summary = {
      tool: 'tuningfork',
      version: VERSION,
      sessions: done.map((d) => ({ session: d.job.id, animal: d.job.animal, group: d.job.group, seed: d.job.seed, key: d.record.key })),
      tables: rows,
      classCounts: classCounts(classes),
    };
    await writeFileAtomic(join(stage, 'summary.json'), stableJson(summary));
    await writeFileAtomic(join(stage, 'summary.txt'), `${text.join('\n')}\n`);
    const final = join(outRoot, MERGED_DIR);
    await writeFileAtomic(join(stage, 'report.html'), await batchHtml(done, final, summary));
    await publishStaged(stage, final);
    return { tables: rows, sessions: done.length, dir: final, text };
  } catch (e) {
    await rm(stage, { recursive: true, force: true }).catch(() => undefined);
    throw e;
  }
}

/**
 * The batch report: every cell of every session on one tuning map, class counts, and links to the
 * sessions' own reports (relative paths, so the folder can be moved as a whole).
 */
async function batchHtml(done: readonly SessionDone[], mergedDir: string, summary: { classCounts: unknown }): Promise<string> {
  const cells: TuningCell[] = [];
  const counts = new Map<string, number>();
  for (const d of done) {
    const names = d.record.outputs.map((f) => f.name);
    if (!names.includes('cells.arrow')) continue;
    const ct = await readArrow(join(d.dir, 'cells.arrow'));
    const dr2 = new Map<string, number>();
    if (names.includes('groups.arrow')) {
      const gt = await readArrow(join(d.dir, 'groups.arrow'));
      const gc = gt.strings.cell ?? [];
      const gg = gt.strings.group ?? [];
      const gv = gt.columns.deltaR2;
      for (let i = 0; i < gt.rows; i++) dr2.set(`${gc[i]}\u0000${gg[i]}`, gv ? gv[i]! : NaN);
    }
    const cell = ct.strings.cell ?? [];
    const kind = ct.strings.kind ?? [];
    const cls = ct.strings.class ?? [];
    const sign = ct.columns.sign;
    for (let i = 0; i < ct.rows; i++) {
      const c = cell[i] ?? '';
      cells.push({
        cell: c, session: d.job.id, kind: kind[i] === 'counts' ? 'unit' : 'site', class: cls[i] ?? '', sign: sign ? sign[i]! : 0,
        rewardUnique: dr2.get(`${c}\u0000reward`) ?? NaN, movementUnique: dr2.get(`${c}\u0000movement`) ?? NaN,
      });
      counts.set(cls[i] ?? '', (counts.get(cls[i] ?? '') ?? 0) + 1);
    }
  }
  const sessions = done.map((d) => {
    const href = d.record.outputs.some((f) => f.name === 'report.html') ? relative(mergedDir, join(d.dir, 'report.html')).split(sep).join('/') : undefined;
    return { session: d.job.id, ...(href ? { href } : {}) };
  });
  return batchReport({
    sessions, cells, counts: [...counts].map(([c, count]) => ({ class: c, count })),
    provenance: makeProvenance('merge', { sessions: done.map((d) => ({ session: d.job.id, key: d.record.key })), classCounts: summary.classCounts }, null),
  });
}

/** Tables whose `class` column the summary counts, in order of preference. */
const CLASS_TABLES = ['cells', 'classes'] as const;

/** One row of the `class` column of a merged `cells` (or `classes`) table, with its group. */
interface ClassRow {
  readonly group: string;
  readonly cls: string;
}

/** Counts of class per group: group → class → count. */
function classCounts(rows: readonly ClassRow[]): Record<string, Record<string, number>> {
  const out: Record<string, Record<string, number>> = {};
  for (const r of rows) {
    const g = r.group || '(no group)';
    out[g] ??= {};
    out[g][r.cls] = (out[g][r.cls] ?? 0) + 1;
  }
  return out;
}

function summaryLines(done: readonly SessionDone[], rows: Readonly<Record<string, number>>, classRows: readonly ClassRow[]): string[] {
  const animals = new Set(done.map((d) => d.job.animal).filter((a) => a !== ''));
  const groups = new Map<string, { sessions: number; animals: Set<string> }>();
  for (const d of done) {
    const g = d.job.group || '(no group)';
    const e = groups.get(g) ?? { sessions: 0, animals: new Set<string>() };
    e.sessions++;
    if (d.job.animal !== '') e.animals.add(d.job.animal);
    groups.set(g, e);
  }
  const lines = [
    `tuningfork ${VERSION} — merged outputs of ${done.length} session${done.length === 1 ? '' : 's'}, ${animals.size} animal${animals.size === 1 ? '' : 's'}, ${groups.size} group${groups.size === 1 ? '' : 's'}`,
    '',
    'groups:',
    ...[...groups.keys()].sort().map((g) => `  ${g}: ${groups.get(g)!.sessions} sessions, ${groups.get(g)!.animals.size} animals`),
    '',
    'tables (rows):',
    ...Object.keys(rows).sort().map((n) => `  ${n}: ${rows[n]}`),
  ];
  const counts = classCounts(classRows);
  const gs = Object.keys(counts).sort();
  if (gs.length > 0) {
    lines.push('', 'classes per group:');
    for (const g of gs) {
      const c = counts[g]!;
      lines.push(`  ${g}: ${Object.keys(c).sort().map((k) => `${k} ${c[k]}`).join(', ')}`);
    }
  }
  lines.push('', 'sessions:', ...done.map((d) => `  ${d.job.id}${d.job.animal !== '' ? `  animal ${d.job.animal}` : ''}${d.job.group !== '' ? `  group ${d.job.group}` : ''}  seed ${d.job.seed}`));
  return lines;
}

import { TuningforkError } from '@tuningfork/core';
import type { Session } from '@tuningfork/core';
import { loadSession } from '@tuningfork/io';
import { displayPath, planFromManifest } from '../batch/plan.js';
import type { PlannedSession } from '../batch/plan.js';
import { asTuningforkError, errorLine } from '../errors.js';
import { EXIT_CODES } from '../exit-codes.js';
import { Logger } from '../log/logger.js';
import type { CheckCliOptions } from '../program.js';
import type { CommandContext } from './context.js';

const pct = (x: number) => (Number.isFinite(x) ? `${(100 * x).toFixed(1)} %` : 'n/a');
const plural = (n: number, w: string) => `${n} ${w}${n === 1 ? '' : 's'}`;
const num = (x: number, d = 2) => (Number.isFinite(x) ? x.toFixed(d) : 'n/a');

function countNaN(values: Float64Array): number {
  let n = 0;
  for (let i = 0; i < values.length; i++) if (values[i] !== values[i]) n++;
  return n;
}

/**
 * The QC summary of a loaded session: its span and contents, per photometry site the signal
 * package's siteQuality (SNR, bleaching, control–signal correlation, flags), per continuous
 * channel its rate and missing samples, units with the signal package's unitQuality (rates,
 * refractory violations, flags), event counts by name and trial counts.
 */
export async function qcLines(s: Session, p: PlannedSession, warnings: readonly { code: string; message: string }[], cwd: string): Promise<string[]> {
  const { siteQuality, unitQuality } = await import('@tuningfork/signal');
  const lines: string[] = [];
  const labels = [p.animal !== '' ? `animal ${p.animal}` : '', p.group !== '' ? `group ${p.group}` : ''].filter((x) => x !== '').join(', ');
  lines.push(`session ${p.id}${labels !== '' ? ` (${labels})` : ''} — ${displayPath(p.manifestPath, cwd)}`);
  const nCont = Object.keys(s.continuous).length;
  lines.push(`  span ${num(s.start, 3)}–${num(s.end, 3)} s (${num(s.end - s.start, 1)} s); ${plural(s.photometry.length, 'photometry site')}, ${plural(nCont, 'continuous channel')}, ${plural(s.units.length, 'unit')}, ${plural(s.events.time.length, 'event')}, ${plural(s.trials?.trial.length ?? 0, 'trial')}`);
  for (const site of s.photometry) {
    const q = siteQuality(site);
    lines.push(`  site ${site.name}: ${num(site.signal.sampleRate, 1)} Hz × ${site.signal.values.length} samples; missing ${q.signal.nonFinite}/${q.control.nonFinite}; SNR ${num(q.snr?.snr ?? NaN)}; bleached ${pct(q.signal.bleachingFraction)} (signal) ${pct(q.control.bleachingFraction)} (control); r(signal, control) ${num(q.controlSignalR)}; flags: ${q.flags.length > 0 ? q.flags.join(', ') : 'none'}`);
  }
  for (const [name, sig] of Object.entries(s.continuous)) {
    lines.push(`  channel ${name}: ${num(sig.sampleRate, 1)} Hz × ${sig.values.length} samples; missing ${countNaN(sig.values)}`);
  }
  if (s.units.length > 0) {
    const qs = s.units.map((u) => ({ u, q: unitQuality(u.times, { startSec: s.start, endSec: s.end }) }));
    const rates = qs.map((x) => x.q.rateHz);
    const flagged = qs.filter((x) => x.q.flags.length > 0);
    lines.push(`  units: ${s.units.length}, ${qs.reduce((a, x) => a + x.q.nSpikes, 0)} spikes, rates ${num(Math.min(...rates), 1)}–${num(Math.max(...rates), 1)} Hz, refractory violations up to ${pct(Math.max(...qs.map((x) => x.q.violationFraction)))}; flagged: ${flagged.length === 0 ? 'none' : flagged.map((x) => `${x.u.name} (${x.q.flags.join(', ')})`).join('; ')}`);
  }
  const counts = new Map<string, number>();
  for (const n of s.events.name) counts.set(n, (counts.get(n) ?? 0) + 1);
  lines.push(`  events: ${counts.size === 0 ? 'none' : [...counts.keys()].sort().map((k) => `${k} ${counts.get(k)}`).join(', ')}`);
  if (s.trials !== undefined) {
    const t = s.trials;
    let chose = 0;
    let rewarded = 0;
    for (let i = 0; i < t.trial.length; i++) {
      if (t.choice[i]! >= 0) chose++;
      if (t.reward[i] === 1) rewarded++;
    }
    lines.push(`  trials: ${t.trial.length} (${chose} with a choice, ${rewarded} rewarded), ${t.nOptions} options`);
  }
  lines.push(`  warnings: ${warnings.length === 0 ? 'none' : warnings.map((w) => `${w.code}: ${w.message}`).join(' | ')}`);
  return lines;
}

/**
 * `tuningfork check <manifest>`: validate a session or batch manifest, load every session (every
 * file, column and cell is read and checked) and print a QC summary per session. Nothing is
 * analysed or written. Exit code 2 when any session fails to load.
 */
export async function checkCommand(manifest: string, opts: CheckCliOptions, ctx: CommandContext): Promise<number> {
  const logger = await Logger.create({ format: opts.logFormat, quiet: opts.quiet, err: ctx.stderr, out: ctx.stdout });
  const plan = await planFromManifest(manifest, undefined, ctx.cwd);
  let failed = 0;
  const all: string[] = [];
  for (const p of plan.sessions) {
    logger.progress(p.id, 'load', 0);
    try {
      const loaded = await loadSession(displayPath(p.manifestPath, ctx.cwd), { hash: false });
      const lines = await qcLines(loaded.session, p, loaded.warnings, ctx.cwd);
      if (logger.format === 'json') logger.info(lines.join('\n'), { session: p.id, step: 'check', fraction: 1 });
      else all.push(...lines);
    } catch (e) {
      failed++;
      const err = e instanceof TuningforkError ? e : asTuningforkError(e);
      logger.error(errorLine(err, `session '${p.id}'`), { session: p.id, step: 'check' });
    }
  }
  all.push(`${plan.sessions.length - failed} of ${plan.sessions.length} sessions passed the checks.`);
  logger.result(all);
  return failed === 0 ? EXIT_CODES.ok : EXIT_CODES.badInput;
}

import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { makeEventTable } from '@tuningfork/core';
import type { DeviceClockSpec, EventTable, Session, UniformSignal } from '@tuningfork/core';
import { loadSession, writeArrow, writeJson } from '@tuningfork/io';
import { simulateSession } from '@tuningfork/simulate';
import type { SimulatedSession } from '@tuningfork/simulate';
import { analyzeSession, syncDeviceEvents } from 'tuningfork';
import { barcodeLine } from '../packages/align/test/helpers/barcode-line.js';

// Truth: the simulator logs the behaviour device's events on its own clock (offset 3.25 s, drift
// from its options) next to the same events on the session clock, and records the sync pulses on
// both sides (2 % dropped per side) plus the session's digital sync line at 1 kHz.

/** Events of `t` whose name is in / not in `names`. */
function subset(t: EventTable, keep: (name: string) => boolean): EventTable {
  const idx = t.name.map((_, i) => i).filter((i) => keep(t.name[i]!));
  return makeEventTable(idx.map((i) => t.time[i]!), idx.map((i) => t.name[i]!), idx.map((i) => t.value[i]!));
}

/** The session as a lab would load it: device events on the device clock (with its sync copy), the rest on the session clock. */
function withDevice(sim: SimulatedSession, clock: DeviceClockSpec, extra: { events?: EventTable; continuous?: Record<string, UniformSignal>; deviceSync?: { time: Float64Array; value: Float64Array } } = {}): Session {
  const devNames = new Set(sim.device.events.name);
  const dev = sim.device.events;
  const sync = extra.deviceSync ?? { time: sim.device.syncPulses, value: new Float64Array(sim.device.syncPulses.length) };
  const own = subset(sim.session.events, (n) => !devNames.has(n));
  const events = extra.events ? makeEventTable([...own.time, ...extra.events.time], [...own.name, ...extra.events.name], [...own.value, ...extra.events.value]) : own;
  return {
    ...sim.session,
    events,
    continuous: { ...sim.session.continuous, ...(extra.continuous ?? {}) },
    deviceEvents: [{
      source: 'box',
      events: makeEventTable([...dev.time, ...sync.time], [...dev.name, ...Array.from(sync.time, () => 'sync_out')], [...dev.value, ...sync.value]),
      clock,
    }],
  };
}

/** Largest |mapped − true| over the device's events, matched by name and order; and the counts. */
function worstError(sim: SimulatedSession, got: EventTable): { worst: number; compared: number } {
  let worst = 0;
  let compared = 0;
  for (const name of new Set(sim.device.events.name)) {
    const truth = Array.from(sim.session.events.time).filter((_, i) => sim.session.events.name[i] === name);
    const mine = Array.from(got.time).filter((_, i) => got.name[i] === name);
    expect(mine.length, name).toBe(truth.length);
    truth.forEach((t, k) => { worst = Math.max(worst, Math.abs(mine[k]! - t)); compared++; });
  }
  return { worst, compared };
}

describe('syncDeviceEvents', () => {
  const sim = simulateSession({ durationSec: 600, nSites: 1, nUnits: 0, seed: 3 });
  const ppm = sim.truth.clock.driftPpm;

  it('maps the device events from the session sync line onto the session clock within 0.5 ms of the truth', () => {
    const r = syncDeviceEvents(withDevice(sim, { syncEvent: 'sync_out', reference: { line: 'sync' }, barcodes: null }, { continuous: { sync: sim.sync.line } }));
    const { worst, compared } = worstError(sim, r.session.events);
    expect(compared).toBe(sim.device.events.time.length);
    expect(worst).toBeLessThanOrEqual(0.5e-3);
    expect(r.session.deviceEvents).toBeUndefined();
    expect(r.session.events.name).not.toContain('sync_out');
    expect(r.clocks).toHaveLength(1);
    // Device clock runs (1 + ppm·1e−6) per session second, so the map's slope is its inverse.
    expect(r.clocks[0]!.map.pieces[0]!.driftPpm).toBeCloseTo((1 / (1 + ppm * 1e-6) - 1) * 1e6, 1);
    expect(r.clocks[0]!.mapped).toBe(compared);
    expect(r.warnings).toEqual([]);
  });

  it('maps them from session-clock sync events just as well', () => {
    const ref = makeEventTable(sim.sync.pulses, Array.from(sim.sync.pulses, () => 'sync_in'));
    const r = syncDeviceEvents(withDevice(sim, { syncEvent: 'sync_out', reference: { events: 'sync_in' }, barcodes: null }, { events: ref }));
    expect(worstError(sim, r.session.events).worst).toBeLessThanOrEqual(0.5e-3);
  });

  it('maps them from periodic barcodes on a 1 kHz line, the device logging each barcode value', () => {
    // Barcodes every 2 s (16-bit counter, 10 ms cells); the device logs the start and value of each.
    const fmt = { bitSec: 0.01, nBits: 16, headerSec: 0.02, headerGapSec: 0.01, bitOrder: 'lsb-first' as const };
    const starts = Float64Array.from({ length: 299 }, (_, k) => 1.0005 + 2 * k);
    const values = Float64Array.from(starts, (_, k) => 1000 + k);
    const line = barcodeLine(starts, values, fmt, 1000, 0, 600);
    const toDevice = (s: number) => sim.truth.clock.offsetSec + (1 + ppm * 1e-6) * s;
    const r = syncDeviceEvents(withDevice(sim, { syncEvent: 'sync_out', reference: { line: 'bc' }, barcodes: { bitSec: 0.01, nBits: 16 } }, {
      continuous: { bc: line },
      deviceSync: { time: starts.map(toDevice), value: values },
    }));
    expect(r.clocks[0]!.map.pairs.reference.length).toBe(299);
    expect(worstError(sim, r.session.events).worst).toBeLessThanOrEqual(0.5e-3);
  });

  it('leaves out, counts and reports events outside the synchronised range instead of extrapolating', () => {
    const s = withDevice(sim, { syncEvent: 'sync_out', reference: { line: 'sync' }, barcodes: null }, { continuous: { sync: sim.sync.line } });
    const d = s.deviceEvents![0]!;
    const late = makeEventTable([...d.events.time, 5000, 5001], [...d.events.name, 'cue', 'reward'], [...d.events.value, 0, 0]);
    const r = syncDeviceEvents({ ...s, deviceEvents: [{ ...d, events: late }] });
    expect(r.clocks[0]!.outside).toBe(2);
    expect(r.warnings.map((w) => w.code)).toContain('device-events-outside-sync');
    expect(Math.max(...r.session.events.time)).toBeLessThan(sim.session.end + 1);
  });

  it('throws TF_SYNC_FAILED naming the source for missing sync events, a missing line, or a device clock reset', () => {
    const base = withDevice(sim, { syncEvent: 'sync_out', reference: { line: 'sync' }, barcodes: null }, { continuous: { sync: sim.sync.line } });
    const d = base.deviceEvents![0]!;
    const code = (s: Session) => { try { syncDeviceEvents(s); return 'no error'; } catch (e) { return `${(e as { code?: string }).code} ${(e as Error).message.includes('box') ? 'names source' : ''}`; } };
    expect(code({ ...base, deviceEvents: [{ ...d, clock: { ...d.clock, syncEvent: 'sync_typo' } }] })).toBe('TF_SYNC_FAILED names source');
    expect(code({ ...base, deviceEvents: [{ ...d, clock: { ...d.clock, reference: { line: 'nope' } } }] })).toBe('TF_SYNC_FAILED names source');
    // A reset at 300 s: the second half's device times start again near 0.
    const t = Float64Array.from(d.events.time, (x) => (x > 303.25 ? x - 300 : x));
    expect(code({ ...base, deviceEvents: [{ ...d, events: makeEventTable(t, d.events.name, d.events.value) }] })).toBe('TF_SYNC_FAILED names source');
  });
});

describe('analyzeSession with device events', () => {
  it('runs the sync step first and writes the clock_sync table and its report section', async () => {
    const sim = simulateSession({ durationSec: 300, nSites: 1, nUnits: 0, seed: 5 });
    const s = withDevice(sim, { syncEvent: 'sync_out', reference: { line: 'sync' }, barcodes: null }, { continuous: { sync: sim.sync.line } });
    const steps: string[] = [];
    const a = await analyzeSession(s, { seed: 1, encode: false, qc: false }, { onProgress: (st, f) => { if (f === 1 && !steps.includes(st)) steps.push(st); } });
    expect(steps[0]).toBe('sync');
    expect(a.clocks).toHaveLength(1);
    const t = a.outputs.tables.clock_sync!;
    expect(t.columns.source).toEqual(['box']);
    expect(Array.from(t.columns.events_mapped as Float64Array)).toEqual([sim.device.events.time.length]);
    expect(a.outputs.texts['report.html']).toContain('Other devices on the session clock');
    expect(worstError(sim, subset(a.events, (n) => n !== 'move_onset')).worst).toBeLessThanOrEqual(0.5e-3);
  });
});

describe('from a manifest: an events file on the device clock', () => {
  const dir = mkdtempSync(join(tmpdir(), 'tf-sync-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('loadSession then analyzeSession put the box events on the session clock within 0.5 ms', async () => {
    const sim = simulateSession({ durationSec: 300, nSites: 1, nUnits: 0, seed: 6 });
    const s = withDevice(sim, { syncEvent: 'sync_out', reference: { line: 'sync' }, barcodes: null });
    const site = sim.session.photometry[0]!;
    const time = Float64Array.from(site.signal.values, (_, i) => site.signal.t0 + i / site.signal.sampleRate);
    await writeArrow(join(dir, 'photometry.arrow'), { time, s_signal: site.signal.values, s_control: site.control.values });
    const line = sim.sync.line;
    await writeArrow(join(dir, 'ttl.arrow'), { time: Float64Array.from(line.values, (_, i) => line.t0 + i / line.sampleRate), ttl: line.values });
    await writeArrow(join(dir, 'events.arrow'), { time: s.events.time, name: [...s.events.name], value: s.events.value });
    const box = s.deviceEvents![0]!.events;
    await writeArrow(join(dir, 'box.arrow'), { time: box.time, name: [...box.name], value: box.value });
    await writeJson(join(dir, 'session.json'), {
      schemaVersion: 1, session: 'sync-demo',
      files: [
        { kind: 'photometry', path: 'photometry.arrow', sites: [{ name: 's', signal: 's_signal', control: 's_control' }] },
        { kind: 'continuous', path: 'ttl.arrow', channels: [{ name: 'sync', column: 'ttl' }] },
        { kind: 'events', path: 'events.arrow' },
        { kind: 'events', path: 'box.arrow', clock: { syncEvent: 'sync_out', reference: { line: 'sync' } } },
      ],
    });
    const loaded = await loadSession(join(dir, 'session.json'), { hash: false });
    expect(loaded.session.deviceEvents?.[0]?.source).toBe('files[3] (box.arrow)');
    const a = await analyzeSession(loaded.session, { seed: 2, encode: false, qc: false, report: false });
    expect(a.clocks[0]!.mapped).toBe(sim.device.events.time.length);
    expect(worstError(sim, subset(a.events, (n) => n !== 'move_onset')).worst).toBeLessThanOrEqual(0.5e-3);
    expect(a.outputs.tables.clock_sync).toBeDefined();
  });
});

import { TuningforkError, makeEventTable, resolveOptions } from '@tuningfork/core';
import type { DeviceEvents, EventTable, ResultWarning, Session } from '@tuningfork/core';
import { decodeBarcodes, digitalEdges, fitClockMap, mapDeviceTimes } from '@tuningfork/align';
import type { ClockMap, FitClockMapOptions } from '@tuningfork/align';

/** One device's clock map and what became of its events. */
export interface DeviceClockResult {
  /** Where the events came from (DeviceEvents.source). */
  readonly source: string;
  /** The fitted device → session clock map (pieces with drift, residuals, pairs, unmatched pulses). */
  readonly map: ClockMap;
  /** Events mapped onto the session clock (the device's sync events are not among them). */
  readonly mapped: number;
  /** Events left out because their device time lies outside every synchronised range. */
  readonly outside: number;
}

/** Result of {@link syncDeviceEvents}. */
export interface SyncDeviceEventsResult {
  /** The session with every device's events mapped into `events` (merged, sorted) and no `deviceEvents` left. */
  readonly session: Session;
  readonly clocks: readonly DeviceClockResult[];
  /** The clock maps' warnings (named by source) and `device-events-outside-sync`. */
  readonly warnings: readonly ResultWarning[];
}

/** Options of {@link syncDeviceEvents}. */
export interface SyncDeviceEventsOptions {
  /** Options for align.fitClockMap (codes are filled in from the barcodes). @defaultValue {} */
  fit?: Omit<FitClockMapOptions, 'referenceCodes' | 'deviceCodes'>;
}

/**
 * Put the events other devices logged on their own clocks onto the session clock: for each entry
 * of `session.deviceEvents`, take the session clock's copy of the sync pulses (the events named
 * `clock.reference.events`, or the pulse starts of the continuous channel `clock.reference.line`
 * by align.digitalEdges, moved half a sample earlier: an edge first seen at sample i happened
 * between samples i − 1 and i, on average at i − ½), the device's copy (its events named `clock.syncEvent`), fit the map
 * with align.fitClockMap (by barcode values when `clock.barcodes` is set: reference codes decoded
 * from the line with align.decodeBarcodes, or the reference events' values; device codes are its
 * sync events' values), and map every other event with align.mapDeviceTimes. Events outside every
 * synchronised range are left out and counted (warning `device-events-outside-sync`): a time
 * there would be an extrapolation. The device's sync events are not copied into the session.
 * A forward clock jump gives pieces over separate device times and is mapped piece by piece; a
 * reset (device time going back) cannot be, because event tables are sorted by time: split such
 * a file at the reset.
 *
 * @returns `{ session, clocks, warnings }`; a session without deviceEvents comes back unchanged.
 * @throws {TuningforkError} TF_SYNC_FAILED (naming the source) when the device has no sync events,
 *   the reference pulses are missing, a map cannot be fitted, or the device clock was reset;
 *   align's codes for malformed pulses.
 *
 * @example
 * ```ts
 * const { session: onOneClock, clocks } = syncDeviceEvents(loaded.session);
 * clocks[0].map.pieces[0].driftPpm;   // e.g. 41.8
 * ```
 */
export function syncDeviceEvents(session: Session, options: SyncDeviceEventsOptions = {}): SyncDeviceEventsResult {
  const o = resolveOptions('syncDeviceEvents', { fit: {} as NonNullable<SyncDeviceEventsOptions['fit']> }, options);
  const list = session.deviceEvents ?? [];
  if (list.length === 0) return { session, clocks: [], warnings: [] };
  const clocks: DeviceClockResult[] = [];
  const warnings: ResultWarning[] = [];
  const time: number[] = Array.from(session.events.time);
  const name: string[] = [...session.events.name];
  const value: number[] = Array.from(session.events.value);
  for (const d of list) {
    const { map, deviceSync } = fitDevice(session, d, o.fit);
    warnings.push(...map.warnings.map((w) => ({ ...w, details: { ...w.details, source: d.source } })));
    const first = map.pieces[0]!.deviceStart;
    const keep: number[] = [];
    const pieces: number[] = [];
    let outside = 0;
    for (let i = 0; i < d.events.time.length; i++) {
      if (deviceSync.has(i)) continue;
      const piece = pieceFor(map, d.events.time[i]!);
      if (piece < 0) outside++;
      else {
        keep.push(i);
        pieces.push(piece);
      }
    }
    const onSession = mapDeviceTimes(map, keep.map((i) => d.events.time[i]!), { piece: pieces });
    keep.forEach((i, k) => {
      time.push(onSession[k]!);
      name.push(d.events.name[i]!);
      value.push(d.events.value[i]!);
    });
    const mapped = keep.length;
    if (outside > 0) {
      warnings.push({
        code: 'device-events-outside-sync',
        message: `syncDeviceEvents: ${outside} event(s) of ${d.source} lie outside the synchronised range (device clock ${first.toFixed(3)}–${map.pieces[map.pieces.length - 1]!.deviceEnd.toFixed(3)} s) and were left out rather than extrapolated.`,
        details: { source: d.source, outside },
      });
    }
    clocks.push({ source: d.source, map, mapped, outside });
  }
  const events: EventTable = makeEventTable(time, name, value);
  const { deviceEvents: _done, ...rest } = session;
  let start = session.start;
  let end = session.end;
  if (events.time.length > 0) {
    start = Math.min(start, events.time[0]!);
    end = Math.max(end, events.time[events.time.length - 1]!);
  }
  return { session: { ...rest, events, start, end }, clocks, warnings };
}

/** The piece whose synchronised device range holds t (ranges do not overlap: checked in fitDevice), or −1. */
function pieceFor(map: ClockMap, t: number): number {
  for (let p = 0; p < map.pieces.length; p++) {
    const q = map.pieces[p]!;
    if (t >= q.deviceStart && t <= q.deviceEnd) return p;
  }
  return -1;
}

function fitDevice(session: Session, d: DeviceEvents, fit: SyncDeviceEventsOptions['fit'] & object): { map: ClockMap; deviceSync: Set<number> } {
  const c = d.clock;
  const deviceSync = new Set<number>();
  const devT: number[] = [];
  const devV: number[] = [];
  for (let i = 0; i < d.events.time.length; i++) {
    if (d.events.name[i] !== c.syncEvent) continue;
    deviceSync.add(i);
    devT.push(d.events.time[i]!);
    devV.push(d.events.value[i]!);
  }
  if (devT.length === 0) {
    throw new TuningforkError('TF_SYNC_FAILED', `syncDeviceEvents: ${d.source} has no '${c.syncEvent}' events (its copy of the sync pulses); check clock.syncEvent against the file's event names.`, { source: d.source, syncEvent: c.syncEvent });
  }
  let refT: Float64Array;
  let refV: Float64Array | null = null;
  if ('events' in c.reference) {
    const want = c.reference.events;
    const t: number[] = [];
    const v: number[] = [];
    for (let i = 0; i < session.events.time.length; i++) {
      if (session.events.name[i] === want) {
        t.push(session.events.time[i]!);
        v.push(session.events.value[i]!);
      }
    }
    if (t.length === 0) throw new TuningforkError('TF_SYNC_FAILED', `syncDeviceEvents: the session has no '${want}' events, the session clock's copy of the sync pulses of ${d.source}.`, { source: d.source, reference: want });
    refT = Float64Array.from(t);
    refV = Float64Array.from(v);
  } else {
    const line = session.continuous[c.reference.line];
    if (!line) throw new TuningforkError('TF_SYNC_FAILED', `syncDeviceEvents: the session has no continuous channel '${c.reference.line}', the sync line of ${d.source}.`, { source: d.source, line: c.reference.line });
    const edges = digitalEdges(line, c.reference.threshold === undefined ? {} : { threshold: c.reference.threshold });
    if (c.barcodes) {
      const bc = decodeBarcodes(edges, { ...c.barcodes, recordingStartSec: line.t0, recordingEndSec: line.t0 + line.values.length / line.sampleRate });
      refT = bc.times;
      refV = bc.values;
    } else {
      refT = edges.starts;
    }
    // An edge seen at the first high sample happened in the interval before it: on average half a
    // sample earlier (uniform phase). Without this, every mapped event is late by 0.5/fs.
    const half = 0.5 / line.sampleRate;
    refT = refT.map((t) => t - half);
  }
  const codes = c.barcodes ? { referenceCodes: refV!, deviceCodes: Float64Array.from(devV) } : {};
  let map: ClockMap;
  try {
    map = fitClockMap(refT, Float64Array.from(devT), { ...fit, ...codes });
  } catch (e) {
    if (e instanceof TuningforkError) throw new TuningforkError(e.code, `syncDeviceEvents: ${d.source}: ${e.message}`, { ...e.details, source: d.source });
    throw e;
  }
  // Event tables are sorted by time, so after a device-clock reset an event's stretch is unknown.
  for (let p = 1; p < map.pieces.length; p++) {
    if (map.pieces[p]!.deviceStart <= map.pieces[p - 1]!.deviceEnd) {
      throw new TuningforkError('TF_SYNC_FAILED', `syncDeviceEvents: ${d.source}: the device clock was reset during the recording (clock pieces ${p - 1} and ${p} cover the same device times), so an event's time alone cannot say which stretch it belongs to. Split the file at the reset into one events file per stretch.`, { source: d.source, piece: p });
    }
  }
  return { map, deviceSync };
}

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { rng } from '@tuningfork/core';
import { decodeBarcodes, digitalEdges, fitClockMap, mapDeviceTimes } from '../src/index.js';
import type { ClockMap } from '../src/index.js';
import { barcodeIntervals, barcodeLine } from './helpers/barcode-line.js';
import type { BarcodeFormat } from './helpers/barcode-line.js';
import { findCodeAnchors } from '../src/internal/code-anchors.js';
import { HARSH, makeScenario } from './helpers/sync-scenario.js';
import type { Scenario } from './helpers/sync-scenario.js';

const F8: BarcodeFormat = { bitSec: 0.01, nBits: 8, headerSec: 0.02, headerGapSec: 0.01, bitOrder: 'lsb-first' };
const codeOf = (ids: Int32Array, nBits: number) => Float64Array.from(ids, (id) => id % 2 ** nBits);

function wrongPairs(sc: Scenario, map: ClockMap): number {
  let wrong = 0;
  for (let k = 0; k < map.pairs.reference.length; k++) {
    if (sc.referenceId[map.pairs.reference[k]!] !== sc.deviceId[map.pairs.device[k]!]) wrong++;
  }
  return wrong;
}

/** Fit with `bits`-bit counter codes and check the issue-4 requirements: pieces, no wrong pair, recall, ≤ 0.5 ms at events. */
function expectCodedSync(sc: Scenario, bits: number, pieces: number, recall: number, eventSeed: number): ClockMap {
  const map = fitClockMap(sc.reference, sc.device, { referenceCodes: codeOf(sc.referenceId, bits), deviceCodes: codeOf(sc.deviceId, bits) });
  expect(map.pieces).toHaveLength(pieces);
  expect(wrongPairs(sc, map)).toBe(0);
  expect(map.pairs.reference.length).toBeGreaterThanOrEqual(Math.floor(recall * sc.nShared));
  const r = worstEventError(sc, map, eventSeed, 60, 3600);
  expect(r.inside).toBeGreaterThan(1900);
  expect(r.worst).toBeLessThanOrEqual(0.5e-3);
  return map;
}

/** Largest |mapped − true| session time over events inside their piece's synchronised range. */
function worstEventError(sc: Scenario, map: ClockMap, seed: number, fromSec: number, toSec: number): { worst: number; inside: number } {
  const r = rng(seed);
  let worst = 0;
  let inside = 0;
  for (let k = 0; k < 2000; k++) {
    const s = r.uniformIn(fromSec, toSec);
    const piece = sc.pieceOf(s);
    const p = map.pieces[piece]!;
    const d = sc.toDevice(s);
    if (d < p.deviceStart || d > p.deviceEnd) continue;
    const [m] = mapDeviceTimes(map, [d], { piece: [piece] });
    worst = Math.max(worst, Math.abs(m! - s));
    inside++;
  }
  return { worst, inside };
}

describe('decodeBarcodes', () => {
  // Worked by hand from the format in decodeBarcodes' documentation: 178 = 0b10110010, LSB first →
  // cells 0 1 0 0 1 1 0 1; header [1.000, 1.020), data from 1.030 in 10 ms cells → pulses
  // [1.040, 1.050), [1.070, 1.090), [1.100, 1.110). Read MSB first, the same cells are 0b01001101 = 77.
  const pulses = { starts: [1.0, 1.04, 1.07, 1.1], ends: [1.02, 1.05, 1.09, 1.11] };

  it('decodes the hand-worked barcode 178 (LSB first) and 77 (MSB first) at its header edge', () => {
    const lsb = decodeBarcodes(pulses, { bitSec: 0.01, nBits: 8 });
    expect(Array.from(lsb.values)).toEqual([178]);
    expect(Array.from(lsb.times)).toEqual([1.0]);
    expect(lsb.warnings).toEqual([]);
    const msb = decodeBarcodes(pulses, { bitSec: 0.01, nBits: 8, bitOrder: 'msb-first' });
    expect(Array.from(msb.values)).toEqual([77]);
    // The test helper writes the same pulses from the format (a cross-check of the helper itself).
    expect(barcodeIntervals(1.0, 178, F8).map(([s, e]) => [s, +e.toFixed(12)])).toEqual([[1.0, 1.02], [1.04, 1.05], [1.07, 1.09], [1.1, 1.11]]);
  });

  it('round-trips random values through a sampled line and digitalEdges (property, 1–30 kHz lines)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 4, max: 32 }),
        fc.constantFrom(1000, 2000, 30000),
        fc.constantFrom(0.005, 0.01, 0.03),
        fc.constantFrom<'lsb-first' | 'msb-first'>('lsb-first', 'msb-first'),
        fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 6 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (nBits, rate, bitSec, bitOrder, fractions, phase) => {
          if (bitSec * rate < 5) return; // a cell must span several samples
          const f: BarcodeFormat = { bitSec, nBits, headerSec: 2 * bitSec, headerGapSec: bitSec, bitOrder };
          const values = fractions.map((u) => Math.floor(u * (2 ** nBits - 1)));
          const length = (nBits + 3) * bitSec;
          const starts = values.map((_, b) => 0.2 + phase / rate + b * (length + 0.3));
          const duration = starts[starts.length - 1]! + length + 0.2;
          const line = barcodeLine(starts, values, f, rate, 0, duration);
          const got = decodeBarcodes(digitalEdges(line), { bitSec, nBits, bitOrder, recordingEndSec: duration });
          expect(Array.from(got.values)).toEqual(values);
          // The header edge is the first sample at or after the true start.
          for (let b = 0; b < starts.length; b++) {
            expect(got.times[b]! - starts[b]!).toBeGreaterThanOrEqual(-1e-9);
            expect(got.times[b]! - starts[b]!).toBeLessThan(1 / rate + 1e-9);
          }
        },
      ),
      { numRuns: 60, seed: 4 },
    );
  });

  it('rejects malformed candidates with their reason and a warning, never a value', () => {
    // header 35 ms instead of 20 ms; an edge 4 ms off a cell boundary; a pulse running 30 ms past
    // the barcode's end; a barcode cut by the recording's end.
    const p = {
      starts: [0, 0.04, /* */ 1.0, 1.044, /* */ 2.0, 2.1, /* */ 3.0, 3.04, /* */ 4.0],
      ends: [0.035, 0.05, /* */ 1.02, 1.05, /* */ 2.02, 2.14, /* */ 3.02, 3.05, /* */ 4.02],
    };
    const r = decodeBarcodes(p, { bitSec: 0.01, nBits: 8, quietSec: 0.5, recordingEndSec: 4.05 });
    expect(Array.from(r.rejected.times)).toEqual([0, 1.0, 2.0, 4.0]);
    expect(r.rejected.reasons).toEqual(['header-width', 'misaligned-edge', 'overrun', 'truncated']);
    expect(Array.from(r.times)).toEqual([3.0]);
    expect(Array.from(r.values)).toEqual([2]);
    expect(r.warnings.map((w) => w.code)).toEqual(['barcodes-rejected']);
    // A pulse still active at the recording's last sample (open bit 2) is truncated too.
    const cut = decodeBarcodes({ starts: [0, 0.04], ends: [0.02, 0.05], open: [0, 2] }, { bitSec: 0.01, nBits: 8 });
    expect(cut.rejected.reasons).toEqual(['truncated']);
    expect(cut.warnings.map((w) => w.code)).toEqual(['barcodes-rejected', 'barcodes-none']);
  });

  it('rejects a first barcode that may have been cut by the recording start instead of reading its tail as a header', () => {
    // Recording starts at 0.95 s inside a barcode that began at 0.93 s: what is left is a
    // 20 ms pulse of two 1-cells (exactly a header's width), then data pulses — barcode 178
    // follows at 2.0 s. Without the recording start the tail would decode as a barcode.
    const f = { bitSec: 0.01, nBits: 8 };
    const tail = { starts: [0.96, 1.01, 2.0, 2.04, 2.07, 2.1], ends: [0.98, 1.02, 2.02, 2.05, 2.09, 2.11] };
    expect(decodeBarcodes(tail, f).values.length).toBe(2); // the risk being guarded
    const r = decodeBarcodes(tail, { ...f, recordingStartSec: 0.95 });
    expect(Array.from(r.values)).toEqual([178]);
    expect(r.rejected.reasons).toEqual(['truncated']);
    // A pulse already active at the first sample (open bit 1) is cut too.
    const open = decodeBarcodes({ ...tail, open: [1, 0, 0, 0, 0, 0] }, f);
    expect(Array.from(open.values)).toEqual([178]);
    expect(open.rejected.reasons).toEqual(['truncated']);
  });

  it('throws coded errors for missing or impossible formats and malformed pulses', () => {
    const code = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        return (e as { code?: string }).code;
      }
      return 'no error';
    };
    expect(code(() => decodeBarcodes(pulses, { nBits: 8 } as never))).toBe('TF_BAD_OPTION');
    expect(code(() => decodeBarcodes(pulses, { bitSec: 0.01 } as never))).toBe('TF_BAD_OPTION');
    expect(code(() => decodeBarcodes(pulses, { bitSec: 0.01, nBits: 53 }))).toBe('TF_BAD_OPTION');
    expect(code(() => decodeBarcodes(pulses, { bitSec: 0.01, nBits: 8, toleranceSec: 0.006 }))).toBe('TF_BAD_OPTION');
    expect(code(() => decodeBarcodes(pulses, { bitSec: 0.01, nBits: 8, bitsPerCode: 3 } as never))).toBe('TF_UNKNOWN_OPTION');
    expect(code(() => decodeBarcodes({ starts: [0, 1], ends: [0.5] }, { bitSec: 0.01, nBits: 8 }))).toBe('TF_SHAPE_MISMATCH');
    expect(code(() => decodeBarcodes({ starts: [1, 0], ends: [1.5, 0.5] }, { bitSec: 0.01, nBits: 8 }))).toBe('TF_BAD_EVENTS');
    expect(code(() => decodeBarcodes({ starts: [0, NaN], ends: [0.5, 1] }, { bitSec: 0.01, nBits: 8 }))).toBe('TF_BAD_EVENTS');
  });
});

describe('fitClockMap with barcode codes', () => {
  // Harsh cases of issue 4 with barcodes sent at a fixed 5 s period (truth: test/helpers/sync-scenario.ts):
  // 1 h, 100 ppm drift, 0.5 ms jitter per side, 10 % of barcodes dropped on each side, a late device
  // start. Periodic pulses alone cannot be matched after drops; the codes can.
  const PERIODIC = { ...HARSH, periodSec: 5 };

  it('periodic pulses without codes are ambiguous; with 16-bit codes every pair is right and events map within 0.5 ms', () => {
    const sc = makeScenario({ ...PERIODIC, seed: 11 });
    expect(() => fitClockMap(sc.reference, sc.device)).toThrow(expect.objectContaining({ code: 'TF_SYNC_FAILED' }));
    expectCodedSync(sc, 16, 1, 0.995, 5);
  });

  it('places the repeated values of a 9-bit counter that wraps within the hour by the dominant clock offset', () => {
    // 719 barcodes, 512 values: ids 0–206 and 512–718 share values. A wrong occurrence sits 2,560 s away.
    expectCodedSync(makeScenario({ ...PERIODIC, seed: 12 }), 9, 1, 0.995, 6);
  });

  it('splits at a device restart when the codes do not wrap (12 bits), mapping each stretch within 0.5 ms', () => {
    const map = expectCodedSync(makeScenario({ ...PERIODIC, seed: 14, jump: 'reset' }), 12, 2, 0.99, 7);
    expect(map.warnings.map((w) => w.code)).toContain('sync-clock-jump');
  });

  it('refuses, rather than guesses, when a wrapped counter leaves a clock stretch placeable at several offsets', () => {
    // After a restart each stretch is half the hour; with 8 bits (wrap 1,280 s) or 9 bits (2,560 s)
    // a shifted placement overlaps the reference nearly as well as the true one.
    for (const bits of [8, 9]) {
      const sc = makeScenario({ ...PERIODIC, seed: 12, jump: 'reset' });
      expect(() => fitClockMap(sc.reference, sc.device, { referenceCodes: codeOf(sc.referenceId, bits), deviceCodes: codeOf(sc.deviceId, bits) }))
        .toThrow(expect.objectContaining({ code: 'TF_SYNC_FAILED', details: expect.objectContaining({ reason: 'ambiguous' }) }));
    }
  });

  it('never pairs wrong pulses when 5 % of the device codes are misread (property over 6 sessions)', () => {
    for (let seed = 1; seed <= 6; seed++) {
      const sc = makeScenario({ ...PERIODIC, seed: 500 + seed, durationSec: 1800, jump: seed % 2 ? 'forward' : 'none', jumpAtSec: 900 });
      const dc = codeOf(sc.deviceId, 12);
      const r = rng(seed);
      for (let j = 0; j < dc.length; j++) if (r.bernoulli(0.05)) dc[j] = Math.floor(r.uniform() * 4096);
      const map = fitClockMap(sc.reference, sc.device, { referenceCodes: codeOf(sc.referenceId, 12), deviceCodes: dc });
      expect(wrongPairs(sc, map)).toBe(0);
      expect(map.pieces).toHaveLength(seed % 2 ? 2 : 1);
      expect(map.pairs.reference.length).toBeGreaterThanOrEqual(Math.floor(0.98 * sc.nShared));
    }
  });

  it('from sampled lines to mapped events: 5 kHz and 10 kHz lines, digitalEdges → decodeBarcodes → fitClockMap, within 0.5 ms', () => {
    const r = rng(77);
    const beta = 1 + 100e-6;
    const toDevice = (s: number) => 4.75 + beta * s;
    const duration = 300;
    const starts: number[] = [];
    const ids: number[] = [];
    for (let id = 0, t = 1; t < duration - 1; t += 2, id++) {
      starts.push(t);
      ids.push(id);
    }
    const f: BarcodeFormat = { ...F8, nBits: 16 };
    const keep = (p: number) => starts.map(() => !r.bernoulli(p));
    const inRef = keep(0.1);
    const inDev = keep(0.1);
    const refStarts = starts.filter((_, b) => inRef[b]);
    const devStarts = starts.filter((_, b) => inDev[b]).map(toDevice);
    const refLine = barcodeLine(refStarts, ids.filter((_, b) => inRef[b]), f, 5000, 0, duration);
    const devLine = barcodeLine(devStarts, ids.filter((_, b) => inDev[b]), f, 10000, 4.75, duration);
    const a = decodeBarcodes(digitalEdges(refLine), { bitSec: 0.01, nBits: 16, recordingEndSec: duration });
    const b = decodeBarcodes(digitalEdges(devLine), { bitSec: 0.01, nBits: 16, recordingEndSec: 4.75 + duration });
    expect(a.values.length).toBe(refStarts.length);
    expect(b.values.length).toBe(devStarts.length);
    const map = fitClockMap(a.times, b.times, { referenceCodes: a.values, deviceCodes: b.values });
    expect(map.pieces).toHaveLength(1);
    for (let k = 0; k < map.pairs.reference.length; k++) expect(a.values[map.pairs.reference[k]!]).toBe(b.values[map.pairs.device[k]!]);
    expect(Math.abs(map.pieces[0]!.driftPpm - (1 / beta - 1) * 1e6)).toBeLessThan(1);
    let worst = 0;
    for (let s = 5; s < duration - 5; s += 0.37) worst = Math.max(worst, Math.abs(mapDeviceTimes(map, [toDevice(s)])[0]! - s));
    expect(worst).toBeLessThanOrEqual(0.5e-3);
  });

  it('seeds leave out a value misread into a duplicate instead of pairing either copy', () => {
    // 40 pulses 1 s apart, codes = index; reference pulse 5 misread as 10, so 10 occurs twice there
    // and the first copy is the wrong one.
    const A = Float64Array.from({ length: 40 }, (_, i) => i + 0.5);
    const B = Float64Array.from(A, (t) => t + 3);
    const codesA = Float64Array.from(A, (_, i) => i);
    const codesB = Float64Array.from(codesA);
    codesA[5] = 10;
    const anc = findCodeAnchors(A, B, codesA, codesB, new Int32Array(40));
    expect(anc.ai.length).toBe(38);
    expect(Array.from(anc.bj)).not.toContain(5);
    expect(Array.from(anc.bj)).not.toContain(10);
    for (let k = 0; k < anc.ai.length; k++) expect(anc.ai[k]).toBe(anc.bj[k]);
    expect(anc.nAmbiguous).toBe(1);
  });

  it('rejects codes given for one side only, not one per pulse, or not integers', () => {
    const sc = makeScenario({ ...PERIODIC, seed: 13, durationSec: 600 });
    const rc = codeOf(sc.referenceId, 16);
    const dc = codeOf(sc.deviceId, 16);
    const code = (o: object) => {
      try {
        fitClockMap(sc.reference, sc.device, o);
      } catch (e) {
        return (e as { code?: string }).code;
      }
      return 'no error';
    };
    expect(code({ referenceCodes: rc })).toBe('TF_SHAPE_MISMATCH');
    expect(code({ referenceCodes: rc.subarray(1), deviceCodes: dc })).toBe('TF_SHAPE_MISMATCH');
    const bad = Float64Array.from(dc);
    bad[3] = 2.5;
    expect(code({ referenceCodes: rc, deviceCodes: bad })).toBe('TF_BAD_VALUE');
    // Codes from a different format (no value in common) cannot be matched.
    expect(code({ referenceCodes: rc, deviceCodes: dc.map((c) => c + 1e6) })).toBe('TF_SYNC_FAILED');
  });
});

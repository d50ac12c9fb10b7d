// Benchmarks of @tuningfork/align (issue 4). Targets: peri-event matrices for 600 events × 7 s
// from all 4 sites of a 60-minute 1 kHz session ≤ 0.1 s; synchronising 3,600 sync pulses ≤ 50 ms.
import { rng } from '@tuningfork/core';
import { decodeBarcodes, digitalEdges, fitClockMap, periEventMatrix } from '@tuningfork/align';
import { simulateSession } from '@tuningfork/simulate';
import type { BenchCase } from '../harness.js';

type Sim = ReturnType<typeof simulateSession>;
let cached: Sim | null = null;
/** The 60-minute, 1 kHz, 4-site simulated session (units off: they do not enter these steps). */
function session(): Sim {
  cached ??= simulateSession({ durationSec: 3600, photometryRate: 1000, nSites: 4, nUnits: 0, seed: 1 });
  return cached;
}

/** 600 task events (cue, choice, outcome) whose −2 … +5 s window lies inside the session. */
function taskEvents(sim: Sim): Float64Array {
  const ev = sim.session.events;
  const out: number[] = [];
  for (let i = 0; i < ev.time.length && out.length < 600; i++) {
    const n = ev.name[i]!;
    const t = ev.time[i]!;
    if (n !== 'lick' && t > 2 && t < sim.session.end - 5) out.push(t);
  }
  return Float64Array.from(out);
}

/**
 * 1 h of sync pulses with 100 ppm drift, 0.5 ms jitter and 10 % dropped per side, each with its
 * true index as code: 4,000 pulses at U(0.5, 1.5) s (≈3,600 per side), or 3,600 periodic barcodes
 * 1 s apart (≈3,240 per side).
 */
function harshPulses(kind: 'random' | 'periodic' = 'random'): { reference: Float64Array; device: Float64Array; referenceCodes: Float64Array; deviceCodes: Float64Array } {
  const r = rng(kind === 'random' ? 2024 : 2025);
  const ref: number[] = [];
  const dev: number[] = [];
  const rc: number[] = [];
  const dc: number[] = [];
  const total = kind === 'random' ? 4000 : 3600;
  for (let t = 1, k = 0; k < total; k++, t += kind === 'random' ? 0.5 + r.uniform() : 1) {
    if (!r.bernoulli(0.1)) {
      ref.push(t + 0.5e-3 * r.normal());
      rc.push(k);
    }
    if (!r.bernoulli(0.1)) {
      dev.push(7.25 + (1 + 100e-6) * t + 0.5e-3 * r.normal());
      dc.push(k);
    }
  }
  return { reference: Float64Array.from(ref), device: Float64Array.from(dev), referenceCodes: Float64Array.from(rc), deviceCodes: Float64Array.from(dc) };
}

/** A 1 h, 1 kHz sync line carrying 3,600 barcodes (16 bits, 10 ms cells; values 0 … 3,599). */
function barcodeLine(): { values: Float64Array; sampleRate: number; t0: number } {
  const rate = 1000;
  const x = new Float64Array(3601 * rate);
  for (let k = 0; k < 3600; k++) {
    const s = (1 + k) * rate;
    x.fill(1, s, s + 20); // header 20 ms, gap 10 ms, then 16 cells of 10 ms
    for (let b = 0; b < 16; b++) if (Math.floor(k / 2 ** b) % 2 === 1) x.fill(1, s + 30 + 10 * b, s + 40 + 10 * b);
  }
  return { values: x, sampleRate: rate, t0: 0 };
}

export const cases: BenchCase[] = [
  {
    name: 'align: peri-event matrices, 4 sites',
    size: '600 events × 7 s × 4 sites, 60 min @ 1 kHz',
    setup: () => {
      const sim = session();
      const events = taskEvents(sim);
      if (events.length !== 600) throw new Error(`expected 600 events, got ${events.length}`);
      return { sites: sim.session.photometry.map((p) => p.signal), events };
    },
    run: ({ sites, events }: { sites: { values: Float64Array; sampleRate: number; t0: number }[]; events: Float64Array }) => {
      let sink = 0;
      for (const s of sites) {
        const m = periEventMatrix(s, events, { preSec: 2, postSec: 5 });
        sink += m.rows * m.cols + m.data[m.data.length >> 1]!;
      }
      return sink;
    },
    reps: 15,
    targetSec: 0.1,
  },
  {
    name: 'align: peri-event matrices, 4 sites, reused out buffers',
    size: '600 events × 7 s × 4 sites, 60 min @ 1 kHz',
    setup: () => {
      const sim = session();
      const events = taskEvents(sim);
      return { sites: sim.session.photometry.map((p) => p.signal), events, outs: sim.session.photometry.map(() => new Float64Array(600 * 7000)) };
    },
    run: ({ sites, events, outs }: { sites: { values: Float64Array; sampleRate: number; t0: number }[]; events: Float64Array; outs: Float64Array[] }) => {
      let sink = 0;
      sites.forEach((s, k) => {
        const m = periEventMatrix(s, events, { preSec: 2, postSec: 5, out: outs[k]! });
        sink += m.rows * m.cols + m.data[m.data.length >> 1]!;
      });
      return sink;
    },
    reps: 15,
    targetSec: 0.1,
  },
  {
    name: 'align: clock sync, harsh 1 h pulses',
    size: '≈3,600 pulses per side (100 ppm, 0.5 ms jitter, 10 % drops)',
    setup: () => harshPulses('random'),
    run: ({ reference, device }: { reference: Float64Array; device: Float64Array }) => fitClockMap(reference, device).pairs.reference.length,
    reps: 21,
    targetSec: 0.05,
  },
  {
    name: 'align: clock sync, simulated 60 min session',
    size: 'simulator sync pulses, 60 min (≈3,500 per side)',
    setup: () => {
      const sim = session();
      return { reference: sim.sync.pulses, device: sim.device.syncPulses };
    },
    run: ({ reference, device }: { reference: Float64Array; device: Float64Array }) => fitClockMap(reference, device).pairs.reference.length,
    reps: 21,
    targetSec: 0.05,
  },
  {
    name: 'align: clock sync by barcode values, harsh 1 h',
    size: '≈3,240 periodic barcodes per side (100 ppm, 0.5 ms jitter, 10 % drops)',
    setup: () => harshPulses('periodic'),
    run: (b: ReturnType<typeof harshPulses>) => fitClockMap(b.reference, b.device, { referenceCodes: b.referenceCodes, deviceCodes: b.deviceCodes }).pairs.reference.length,
    reps: 21,
    targetSec: 0.05,
  },
  {
    name: 'align: barcodes from a 1 h 1 kHz line (edges + decode)',
    size: '3.6 M samples, 3,600 barcodes of 16 bits',
    setup: barcodeLine,
    run: (line: ReturnType<typeof barcodeLine>) => {
      const n = decodeBarcodes(digitalEdges(line), { bitSec: 0.01, nBits: 16 }).values.length;
      if (n !== 3600) throw new Error(`decoded ${n} barcodes, expected 3600`);
      return n;
    },
    reps: 11,
  },
];

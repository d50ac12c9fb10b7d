import { describe, expect, it } from 'vitest';
import { simulateSession } from '@tuningfork/simulate';
import { digitalEdges, fitClockMap, mapDeviceTimes, movementOnsets } from '../src/index.js';

// Ground truth from @tuningfork/simulate (default noise; photometry sites and units are switched
// off because the accelerometer, sync pulses and events come from their own random streams).
const sims = [1, 2].map((seed) => simulateSession({ seed, nSites: 0, nUnits: 0 }));

describe('fitClockMap on the simulated behaviour device', () => {
  for (const sim of sims) {
    it(`fitClockMap maps every device event onto its session time within 0.5 ms (seed ${sim.options.seed})`, () => {
      const map = fitClockMap(sim.sync.pulses, sim.device.syncPulses);
      expect(map.pieces).toHaveLength(1);
      // Truth: device = offset + (1 + 40e-6)·session, so β = 1/(1 + 40e-6): −39.998 ppm.
      expect(Math.abs(map.pieces[0]!.driftPpm - (1 / (1 + sim.truth.clock.driftPpm * 1e-6) - 1) * 1e6)).toBeLessThan(0.5);
      // Pairs: the simulator drops pulses independently per side; every surviving pair is the same
      // pulse iff its session times agree (pulses are ≥ 0.5 s apart).
      for (let k = 0; k < map.pairs.reference.length; k++) {
        const s = sim.sync.pulses[map.pairs.reference[k]!]!;
        const d = sim.device.syncPulses[map.pairs.device[k]!]!;
        expect(Math.abs((d - sim.truth.clock.offsetSec) / (1 + sim.truth.clock.driftPpm * 1e-6) - s)).toBeLessThan(0.01);
      }
      const dev = sim.device.events.time;
      const p = map.pieces[0]!;
      let inside = 0;
      let worst = 0;
      for (let i = 0; i < dev.length; i++) {
        expect(sim.device.events.name[i]).toBe(sim.session.events.name[i]); // same order
        if (dev[i]! >= p.deviceStart && dev[i]! <= p.deviceEnd) {
          inside++;
          worst = Math.max(worst, Math.abs(mapDeviceTimes(map, [dev[i]!])[0]! - sim.session.events.time[i]!));
        } else {
          expect(() => mapDeviceTimes(map, [dev[i]!])).toThrow(expect.objectContaining({ code: 'TF_SYNC_FAILED' }));
        }
      }
      expect(inside).toBeGreaterThan(0.95 * dev.length);
      expect(worst).toBeLessThanOrEqual(0.5e-3);
      // The few events after the last shared pulse (≤ 2 s) map within 0.5 ms when extrapolated.
      const all = mapDeviceTimes(map, dev, { extrapolate: true });
      let worstAll = 0;
      for (let i = 0; i < dev.length; i++) worstAll = Math.max(worstAll, Math.abs(all[i]! - sim.session.events.time[i]!));
      expect(worstAll).toBeLessThanOrEqual(0.5e-3);
    });
  }

  it('digitalEdges recovers the simulated sync pulses from the digital line within one sample', () => {
    const sim = sims[0]!;
    const e = digitalEdges(sim.sync.line);
    expect(e.starts.length).toBe(sim.sync.pulses.length);
    // The line is high from sample ceil(t·fs): start − t lies in [0, 1/fs).
    for (let k = 0; k < e.starts.length; k++) {
      const d = e.starts[k]! - sim.sync.pulses[k]!;
      expect(d).toBeGreaterThanOrEqual(-1e-9);
      expect(d).toBeLessThan(1 / sim.sync.line.sampleRate);
    }
  });
});

describe('movementOnsets on the simulated accelerometer', () => {
  for (const sim of sims) {
    it(`movementOnsets detects ≥ 95 % of true onsets within 50 ms with ≤ 5 % false onsets (seed ${sim.options.seed})`, () => {
      const accel = sim.session.continuous.accel!;
      const r = movementOnsets(accel, { baseline: 'median', refine: 'off-threshold' });
      const truth = sim.truth.movementOnsets;
      const used = new Uint8Array(r.onsets.length);
      let hit = 0;
      let vigourOk = 0;
      for (let i = 0; i < truth.length; i++) {
        let best = -1;
        let bd = Infinity;
        for (let k = 0; k < r.onsets.length; k++) {
          const d = Math.abs(r.onsets[k]! - truth[i]!);
          if (!used[k] && d < bd) {
            bd = d;
            best = k;
          }
        }
        if (bd <= 0.05) {
          used[best] = 1;
          hit++;
          // Vigour: truth is the bout's peak acceleration above gravity (g); the detected peak adds
          // sensor noise (sd 0.01 g) and the median's offset, so ±20 % is ample for peaks ≈ 0.3 g.
          if (Math.abs(r.vigour[best]! / sim.truth.movementVigour[i]! - 1) <= 0.2) vigourOk++;
        }
      }
      const falseOnsets = r.onsets.length - hit;
      expect(hit).toBeGreaterThanOrEqual(Math.ceil(0.95 * truth.length));
      expect(falseOnsets).toBeLessThanOrEqual(Math.floor(0.05 * r.onsets.length));
      expect(vigourOk).toBe(hit);
    });
  }
});

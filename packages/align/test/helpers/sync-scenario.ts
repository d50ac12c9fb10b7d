/**
 * Synthetic two-clock sessions with known truth for clock-sync tests (core rng only).
 * Pulses at random 0.5–1.5 s intervals; each side drops its own share; Gaussian timestamp jitter
 * on both sides; the device clock has an offset, a drift and optionally one jump.
 */
import { rng } from '@tuningfork/core';

export interface ScenarioOptions {
  seed: number;
  durationSec: number;
  driftPpm: number;
  offsetSec: number;
  /** sd of Gaussian timestamp jitter on each side, seconds. */
  jitterSec: number;
  dropFraction: number;
  /** The device starts this late (its first pulses are missing). */
  deviceLateSec: number;
  /** The reference starts this late. */
  referenceLateSec: number;
  /** 'reset': the device clock restarts near 0 at jumpAtSec; 'forward': it steps forward by stepSec. */
  jump: 'none' | 'reset' | 'forward';
  jumpAtSec: number;
  stepSec: number;
  /** Send pulses at this fixed period instead of U(0.5, 1.5) s intervals (barcode trains). */
  periodSec?: number;
}

export interface Scenario {
  reference: Float64Array;
  device: Float64Array;
  /** True pulse id of each recorded pulse. */
  referenceId: Int32Array;
  deviceId: Int32Array;
  /** Session → device clock (the truth), and the clock piece (0 before a jump, 1 after). */
  toDevice(s: number): number;
  pieceOf(s: number): number;
  /** Number of pulses recorded on both sides. */
  nShared: number;
}

export function makeScenario(o: ScenarioOptions): Scenario {
  const r = rng(o.seed);
  const times = r.stream(1);
  const drops = r.stream(2);
  const jit = r.stream(3);
  const beta = 1 + o.driftPpm * 1e-6;
  const pieceOf = (s: number) => (o.jump !== 'none' && s >= o.jumpAtSec ? 1 : 0);
  const toDevice = (s: number): number => {
    if (pieceOf(s) === 0) return o.offsetSec + beta * s;
    if (o.jump === 'reset') return 0.25 + beta * (s - o.jumpAtSec);
    return o.offsetSec + o.stepSec + beta * s;
  };
  const ref: number[] = [];
  const dev: number[] = [];
  const refId: number[] = [];
  const devId: number[] = [];
  let shared = 0;
  let id = 0;
  const next = () => (o.periodSec === undefined ? 0.5 + times.uniform() : o.periodSec);
  for (let t = next(); t < o.durationSec; t += next(), id++) {
    const inRef = t >= o.referenceLateSec && !drops.bernoulli(o.dropFraction);
    const inDev = t >= o.deviceLateSec && !drops.bernoulli(o.dropFraction);
    const jr = o.jitterSec * jit.normal();
    const jd = o.jitterSec * jit.normal();
    if (inRef) {
      ref.push(t + jr);
      refId.push(id);
    }
    if (inDev) {
      dev.push(toDevice(t) + jd);
      devId.push(id);
    }
    if (inRef && inDev) shared++;
  }
  return {
    reference: Float64Array.from(ref), device: Float64Array.from(dev),
    referenceId: Int32Array.from(refId), deviceId: Int32Array.from(devId),
    toDevice, pieceOf, nShared: shared,
  };
}

export const HARSH: Omit<ScenarioOptions, 'seed'> = {
  durationSec: 3600, driftPpm: 100, offsetSec: 12.5, jitterSec: 0.5e-3, dropFraction: 0.1,
  deviceLateSec: 60, referenceLateSec: 0, jump: 'none', jumpAtSec: 1800, stepSec: 7.3,
};

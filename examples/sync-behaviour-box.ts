/**
 * Put a behaviour box's events on the photometry clock: the box logs its events and its copy of
 * the sync pulses on its own clock; the photometry system recorded the same pulses on a TTL line.
 * Fit the box → session clock map from the pulses, check drift and residuals, and map the events.
 *
 * Run:  npm run build && npx tsx examples/sync-behaviour-box.ts
 */
import { pathToFileURL } from 'node:url';
import { eventTimes } from '@tuningfork/core';
import { digitalEdges, fitClockMap, mapDeviceTimes } from '@tuningfork/align';
import { simulateSession } from '@tuningfork/simulate';

export function main(durationSec = 600): { driftPpm: number; rmsMs: number; rewards: number; worstMs: number } {
  // The simulator's operant task: the box clock is offset and drifts against the session clock.
  const sim = simulateSession({ durationSec, nSites: 1, nUnits: 0, seed: 21 });
  const line = sim.sync.line; // TTL line sampled with the photometry (1 kHz, session clock)

  // 1. Session-clock pulse times: rising edges of the line, moved half a sample earlier (an edge
  //    first seen at sample i happened between samples i − 1 and i).
  const pulses = digitalEdges(line).starts.map((t) => t - 0.5 / line.sampleRate);

  // 2. The box's copy of the same pulses (its clock); match them and fit offset + drift.
  const map = fitClockMap(pulses, sim.device.syncPulses);
  const piece = map.pieces[0]!;
  console.log(`box clock: drift ${piece.driftPpm.toFixed(2)} ppm, ${piece.nPairs} pulse pairs, RMS residual ${(piece.rmsResidualSec * 1e3).toFixed(3)} ms, ${map.unmatchedDevice.length} box pulses unmatched`);

  // 3. The box's reward times on the session clock (times outside the synchronised range throw).
  const rewards = mapDeviceTimes(map, eventTimes(sim.device.events, 'reward'));

  // The simulator also knows the rewards on the session clock: how far off are we?
  const truth = eventTimes(sim.session.events, 'reward');
  let worst = 0;
  rewards.forEach((t, i) => { worst = Math.max(worst, Math.abs(t - truth[i]!)); });
  console.log(`${rewards.length} rewards mapped; largest error against the simulated truth ${(worst * 1e3).toFixed(3)} ms`);
  return { driftPpm: piece.driftPpm, rmsMs: piece.rmsResidualSec * 1e3, rewards: rewards.length, worstMs: worst * 1e3 };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) main();

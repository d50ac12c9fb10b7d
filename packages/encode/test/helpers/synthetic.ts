/** Test helper: a small event design with named role groups and cells built from its columns. */
import { rng } from '@tuningfork/core';
import { designMatrix } from '../../src/index.js';
import type { EncodingDesign } from '../../src/index.js';

export function roleSession(seed: number, durSec = 400) {
  const r = rng(seed);
  const draw = (k: number) => Float64Array.from({ length: k }, () => r.uniformIn(2, durSec - 4)).sort();
  const outcome = draw(70);
  const move = draw(90);
  const choice = draw(70);
  const cue = draw(70);
  const design = designMatrix([
    { name: 'outcome', group: 'reward', times: outcome, basis: { postSec: 2, nBumps: 4 } },
    { name: 'outcome×RPE', group: 'reward', times: outcome, modulator: Float64Array.from(outcome, () => r.normal()), basis: { postSec: 2, nBumps: 4 } },
    { name: 'move', group: 'movement', times: move, basis: { postSec: 1.5, nBumps: 4, preSec: 0.5, nPreBumps: 1 } },
    { name: 'choice×APE', group: 'action-prediction', times: choice, modulator: Float64Array.from(choice, () => r.uniform()), basis: { postSec: 1.5, nBumps: 4 } },
    { name: 'cue', group: 'cue', times: cue, basis: { postSec: 1.5, nBumps: 4 } },
  ], { startSec: 0, endSec: durSec, binRate: 20 });
  return { design, r };
}

/** AR(1) noise plus gain_g × (sum of group g's columns) for each group gain given. */
export function cellFrom(design: EncodingDesign, r: ReturnType<typeof rng>, gains: Record<string, number>, noise = 1): Float64Array {
  const y = new Float64Array(design.nRows);
  let v = 0;
  for (let i = 0; i < y.length; i++) {
    v = 0.7 * v + noise * r.normal();
    y[i] = v;
  }
  const g = design.groups.map((name) => gains[name] ?? 0);
  for (let t = 0; t < design.nRows; t++) {
    for (let k = design.rowPtr[t]!; k < design.rowPtr[t + 1]!; k++) y[t] = y[t]! + g[design.columnGroup[design.colIdx[k]!]!]! * design.values[k]!;
  }
  return y;
}

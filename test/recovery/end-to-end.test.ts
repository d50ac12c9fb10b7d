import { describe, expect, it } from 'vitest';
import { endToEnd, formatResult } from './end-to-end.js';

// Reference: the simulator's ground truth (classes, per-trial RPE and APE of its agent).
describe('end-to-end recovery on the simulator (5 seeds, 60-minute sessions, 4 sites + 10 units)', () => {
  it('classifies ≥ 95 % of cells correctly, keeps untuned cells untuned, and recovers RPE/APE (r ≥ 0.95)', async () => {
    const r = await endToEnd([1, 2, 3, 4, 5], 60, 10);
    console.log(formatResult(r));
    expect(r.correct / r.cells).toBeGreaterThanOrEqual(0.95);
    // FDR at q = 0.05 across cells: with 10 untuned cells, more than 1 false call would exceed it.
    expect(r.noneCalledTuned).toBeLessThanOrEqual(1);
    expect(r.apeAsMovement + r.movementAsApe).toBe(0);
    for (const s of r.perSeed) {
      expect(s.rpeR, `seed ${s.seed} RPE`).toBeGreaterThanOrEqual(0.95);
      expect(s.apeR, `seed ${s.seed} APE`).toBeGreaterThanOrEqual(0.95);
    }
  }, 600_000);
});

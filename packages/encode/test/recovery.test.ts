import { describe, expect, it } from 'vitest';
import { simulateSession } from '@tuningfork/simulate';
import { encodeCells } from '../src/index.js';
import { simulatedCells } from './helpers/simulated-cells.js';

const CLASSES = ['reward', 'movement', 'mixed', 'action-prediction', 'none', 'unattributed'] as const;

describe('encodeCells recovers the simulator ground truth', () => {
  it('classifies ≥ 95 % of sites and units of 5 default sessions correctly, with FDR-bounded false tuning and no action-prediction/movement confusion', () => {
    // Reference: @tuningfork/simulate truth (cells[].class, cells[].sign) of simulateSession({ seed }),
    // default options (600 s, 4 sites, 10 units; classes cycled reward, movement, mixed,
    // action-prediction, none). Regressors from the truth: outcome × RPE + bonus, movement onsets
    // × vigour, choice × APE (helpers/simulated-cells.ts). Sites: ratio ΔF/F of the session's own
    // channels; units: spike counts in 20 ms bins.
    const confusion: Record<string, Record<string, number>> = {};
    let correct = 0;
    let total = 0;
    let signOk = 0;
    let tunedCalls = 0;
    let falseTuned = 0;
    for (const seed of [1, 2, 3, 4, 5]) {
      const { design, cells, truth } = simulatedCells(simulateSession({ seed }), 25);
      const res = encodeCells(design, cells, { null: { nShifts: 200, seed }, ridge: { jackknifeBlocks: 0 }, poissonGLM: false });
      res.classes.cells.forEach((c, i) => {
        const t = truth[i]!;
        (confusion[t.class] ??= {})[c.class] = (confusion[t.class]?.[c.class] ?? 0) + 1;
        total++;
        if (c.class === t.class) {
          correct++;
          if (t.class === 'none' || c.sign === t.sign) signOk++;
        }
        if (c.class !== 'none') {
          tunedCalls++;
          if (t.class === 'none') falseTuned++;
        }
      });
    }
    const rows = CLASSES.slice(0, 5).map((t) => `${t.padEnd(18)} ${CLASSES.map((c) => String(confusion[t]?.[c] ?? 0).padStart(4)).join(' ')}`);
    console.info(`confusion (rows truth, columns called: ${CLASSES.join(', ')})\n${rows.join('\n')}\ncorrect ${correct}/${total}, signs right ${signOk}/${correct}, false tuned ${falseTuned}/${tunedCalls}`);
    expect(correct / total).toBeGreaterThanOrEqual(0.95);
    expect(signOk).toBe(correct);
    // FDR 0.05: the share of none-cells among cells called tuned must stay near 5 % (≤ 3 of ~60 calls)
    expect(falseTuned).toBeLessThanOrEqual(Math.max(1, Math.ceil(0.05 * tunedCalls)));
    expect(confusion['action-prediction']?.movement ?? 0).toBe(0);
    expect(confusion.movement?.['action-prediction'] ?? 0).toBe(0);
  });
});

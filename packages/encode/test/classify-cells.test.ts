import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { adjustPValues } from '@tuningfork/stats';
import { classifyCells, fitRidgeCV, shiftNull } from '../src/index.js';
import { cellFrom, roleSession } from './helpers/synthetic.js';

describe('classifyCells', () => {
  const { design, r } = roleSession(21);
  const spec: [string, Record<string, number>, string, number][] = [
    ['rew', { reward: 1 }, 'reward', 1],
    ['mov', { movement: -1 }, 'movement', -1],
    ['mix', { reward: 1, movement: 1 }, 'mixed', 1],
    ['ape', { 'action-prediction': 1.5 }, 'action-prediction', 1],
    ['cue', { cue: 1.5 }, 'unattributed', 0],
    ['none', {}, 'none', 0],
  ];
  const cells = spec.map(([name, gains]) => ({ name, values: cellFrom(design, r, gains) }));
  const fit = fitRidgeCV(design, cells, { jackknifeBlocks: 0 });
  const nul = shiftNull(design, fit, { nShifts: 199, seed: 3 });
  const cls = classifyCells(design, fit, nul);

  it('labels cells by their significant role groups, with the response sign (INFERENCE.md §4.7 labels)', () => {
    expect(cls.cells.map((c) => c.class)).toEqual(spec.map((s) => s[2]));
    expect(cls.cells.map((c) => c.sign)).toEqual(spec.map((s) => s[3]));
    expect(cls.roles).toEqual(['reward', 'movement', 'action-prediction', 'other']);
  });

  it('adjusts group p-values across cells × groups and full-model p-values across cells (BH)', () => {
    // Reference: @tuningfork/stats adjustPValues (BH, checked there against scipy false_discovery_control).
    const G = fit.groups.length;
    const pG = nul.cells.flatMap((c) => Array.from(c.pGroup));
    const qG = adjustPValues(pG, { method: 'bh' });
    expectAllClose(cls.cells.flatMap((c) => Array.from(c.qGroup)), qG, { rtol: 0, atol: 0 });
    expectAllClose(cls.cells.map((c) => c.qFull), adjustPValues(nul.cells.map((c) => c.pFull)), { rtol: 0, atol: 0 });
    expect(G).toBe(4);
  });

  it("labels a cell the fit skipped 'not-fitted', not 'none' (a dead channel is not an untuned cell)", () => {
    const dead = [...cells, { name: 'dead', values: new Float64Array(design.nRows).fill(0.1) }];
    const f2 = fitRidgeCV(design, dead, { jackknifeBlocks: 0 });
    expect(f2.cells[6]!.warnings.map((w) => w.code)).toContain('TF_DEGENERATE_SIGNAL');
    const c2 = classifyCells(design, f2, shiftNull(design, f2, { nShifts: 199, seed: 3 }));
    expect(c2.cells.map((c) => c.class)).toEqual([...spec.map((s) => s[2]), 'not-fitted']);
  });

  it('uses custom roles and the minimum ΔR², and refuses unknown roles', () => {
    const renamed = classifyCells(design, fit, nul, { groupRoles: { cue: 'reward', reward: 'other' } });
    expect(renamed.cells[4]!.class).toBe('reward'); // the cue cell now counts as reward
    expect(renamed.cells[0]!.class).toBe('unattributed');
    const strict = classifyCells(design, fit, nul, { minDeltaR2: 1 });
    expect(strict.cells.slice(0, 4).every((c) => c.class === 'unattributed')).toBe(true);
    expect(() => classifyCells(design, fit, nul, { groupRoles: { cue: 'licking' as never } })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

import { describe, expect, it } from 'vitest';
import { encodeCells } from '../src/index.js';
import { cellFrom, roleSession } from './helpers/synthetic.js';

describe('encodeCells', () => {
  it('runs fit, null, classification and Poisson GLM and returns tidy tables', () => {
    const { design, r } = roleSession(5, 300);
    const rate = cellFrom(design, r, { reward: 0.3 }, 0.05);
    // counts: Poisson draws from exp(rate) × 8 Hz × 50 ms (inversion sampling with the seeded Rng)
    const counts = Float64Array.from(rate, (v) => {
      const lam = 8 * Math.exp(v) * 0.05;
      let k = 0;
      let p = Math.exp(-lam);
      let s = p;
      const u = r.uniform();
      while (u > s) { k++; p *= lam / k; s += p; }
      return k;
    });
    const res = encodeCells(design, [
      { name: 'site', values: cellFrom(design, r, { movement: 1 }) },
      { name: 'unit', values: counts, kind: 'counts' },
    ], { null: { nShifts: 99 }, ridge: { jackknifeBlocks: 5 } });
    expect(res.cells.numRows()).toBe(2);
    expect(res.cells.columnNames()).toEqual(['cell', 'kind', 'class', 'sign', 'cvR2', 'pFull', 'qFull', 'sharedR2', 'significantGroups', 'nUsed', 'nMissing', 'cvDevianceExplained', 'bitsPerSpike']);
    expect(res.groups.numRows()).toBe(2 * 4);
    expect(res.groups.columnNames()).toEqual(['cell', 'group', 'role', 'deltaR2', 'aloneR2', 'p', 'q', 'significant', 'class', 'sign', 'penalty']);
    expect(res.cells.array('class')).toEqual(['movement', 'reward']);
    expect(Number.isNaN(res.cells.get('cvDevianceExplained', 0))).toBe(true);
    expect(res.cells.get('cvDevianceExplained', 1)).toBeGreaterThan(0);
    // kernels: every lag of every term, for the ridge fit of both cells and the GLM of the unit
    const lags = design.terms.reduce((s, t) => s + t.nLags, 0);
    expect(res.kernels.numRows()).toBe(3 * lags);
    expect(res.kernels.columnNames()).toEqual(['cell', 'term', 'group', 'model', 'lagSec', 'estimate', 'se', 'low', 'high']);
    const low = res.kernels.array('low', Float64Array) as Float64Array;
    const high = res.kernels.array('high', Float64Array) as Float64Array;
    expect(low.every((v, i) => v <= high[i]!)).toBe(true);
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { designMatrix, fitRidgeCV, shiftNull } from '../src/index.js';

function session(seed: number, durSec = 300) {
  const r = rng(seed);
  const a = Float64Array.from({ length: 60 }, () => r.uniformIn(1, durSec - 3)).sort();
  const b = Float64Array.from({ length: 60 }, () => r.uniformIn(1, durSec - 3)).sort();
  const m = Float64Array.from(a, () => r.normal());
  const design = designMatrix([
    { name: 'a', group: 'A', times: a, basis: { postSec: 1.5, nBumps: 4 } },
    { name: 'a×m', group: 'A', times: a, modulator: m, basis: { postSec: 1.5, nBumps: 4 } },
    { name: 'b', group: 'B', times: b, basis: { postSec: 1.5, nBumps: 4, preSec: 0.5, nPreBumps: 1 } },
  ], { startSec: 0, endSec: durSec, binRate: 20 });
  return { design, r };
}

function ar1(r: ReturnType<typeof rng>, n: number, phi: number): Float64Array {
  const y = new Float64Array(n);
  let v = 0;
  for (let i = 0; i < n; i++) {
    v = phi * v + r.normal();
    y[i] = v;
  }
  return y;
}

/** y = Σ group-A columns (a response to a) + AR(1) noise. */
function tuned(design: ReturnType<typeof session>['design'], r: ReturnType<typeof rng>, gain: number): Float64Array {
  const y = ar1(r, design.nRows, 0.8);
  for (let t = 0; t < design.nRows; t++) {
    for (let k = design.rowPtr[t]!; k < design.rowPtr[t + 1]!; k++) if (design.columnGroup[design.colIdx[k]!] === 0) y[t] = y[t]! + gain * design.values[k]!;
  }
  return y;
}

describe('shiftNull', () => {
  const { design, r } = session(1);
  const n = design.nRows;
  const cells = [{ name: 'tuned', values: tuned(design, r, 3) }, { name: 'noise', values: ar1(r, n, 0.8) }];

  it('reproduces, shift by shift, the cvR² statistics of fitRidgeCV refitted on the rolled signal at the same penalties', () => {
    // Independent route: roll y explicitly and refit every model with its penalty fixed.
    const fit = fitRidgeCV(design, cells, { penalties: [0.03], jackknifeBlocks: 0 });
    const nul = shiftNull(design, fit, { nShifts: 40, seed: 9 });
    for (let i = 0; i < 3; i++) {
      const k = nul.shifts[i]!;
      const y = cells[1]!.values;
      const rolled = Float64Array.from({ length: n }, (_, t) => y[(((t - k) % n) + n) % n]!);
      const ref = fitRidgeCV(design, [{ name: 'rolled', values: rolled }], { penalties: [0.03], jackknifeBlocks: 0 }).cells[0]!;
      // Same arithmetic up to summation order: 1e-9 absolute on R² values of order 0.01.
      expectAllClose(nul.cells[1]!.nullFull[i]!, ref.modelR2[0]! - ref.modelR2[1]!, { atol: 1e-9, rtol: 0, label: `shift ${k}` });
      expectAllClose([nul.cells[1]!.nullGroup[i]!, nul.cells[1]!.nullGroup[40 + i]!], [ref.deltaR2[0]!, ref.deltaR2[1]!], { atol: 1e-9, rtol: 0 });
    }
    // at shift 0 the statistic is the fit's own
    expectAllClose(nul.cells[0]!.deltaR2, fit.cells[0]!.deltaR2, { atol: 1e-12, rtol: 0 });
  });

  it('gives the smallest possible p = 1/(m + 1) to a strongly tuned group and a large p to an absent one', () => {
    const fit = fitRidgeCV(design, cells, { jackknifeBlocks: 0 });
    const nul = shiftNull(design, fit, { nShifts: 99, seed: 1 });
    // Phipson & Smyth (2010): p = (b + 1)/(m + 1) with b = 0 exceedances
    expect(nul.cells[0]!.pGroup[0]).toBe(1 / 100);
    expect(nul.cells[0]!.pFull).toBe(1 / 100);
    expect(nul.cells[0]!.pGroup[1]!).toBeGreaterThan(0.05);
    expect(nul.shifts.length).toBe(99);
    expect(new Set(nul.shifts).size).toBe(99);
    expect(nul.shifts[0]!).toBeGreaterThanOrEqual(nul.minShiftBins);
  });

  it('keeps p-values of untuned cells roughly uniform (size of the test)', () => {
    const r2 = rng(77);
    const noise = Array.from({ length: 24 }, (_, i) => ({ name: `n${i}`, values: ar1(r2, n, 0.9) }));
    const fit = fitRidgeCV(design, noise, { jackknifeBlocks: 0, penalties: [0.01, 0.1, 1, 10] });
    const nul = shiftNull(design, fit, { nShifts: 99, seed: 2 });
    const ps = nul.cells.flatMap((c) => [c.pFull, ...c.pGroup]);
    const small = ps.filter((p) => p <= 0.05).length;
    // 72 p-values, E[#≤0.05] = 3.6 under the null; binomial(72, 0.05) exceeds 10 with probability < 0.002.
    expect(small).toBeLessThanOrEqual(10);
    const mean = ps.reduce((a, b) => a + b, 0) / ps.length;
    expect(mean).toBeGreaterThan(0.35); // uniform mean 0.5; sd of the mean ≈ 0.034 (dependent p's: wider)
  });

  it('is reproducible from its seed and reports it', () => {
    const fit = fitRidgeCV(design, cells, { jackknifeBlocks: 0, contributions: false });
    const a = shiftNull(design, fit, { nShifts: 30, seed: 5 });
    const b = shiftNull(design, fit, { nShifts: 30, seed: 5 });
    const c = shiftNull(design, fit, { nShifts: 30, seed: 6 });
    expect(Array.from(a.shifts)).toEqual(Array.from(b.shifts));
    expect(Array.from(a.cells[1]!.nullFull)).toEqual(Array.from(b.cells[1]!.nullFull));
    expect(Array.from(a.shifts)).not.toEqual(Array.from(c.shifts));
    expect(a.seed).toBe(5);
    expect(a.cells[0]!.pGroup.every(Number.isNaN)).toBe(true); // contributions: false
  });

  it('uses every admissible shift when there are fewer than requested, and refuses fewer than 19', () => {
    const fit = fitRidgeCV(design, cells, { jackknifeBlocks: 0, contributions: false });
    const nul = shiftNull(design, fit, { nShifts: 5000, minShiftSec: 120 });
    expect(nul.exhaustive).toBe(true);
    expect(nul.shifts.length).toBe(n - 2 * 2400 + 1);
    expect(() => shiftNull(design, fit, { minShiftSec: 149.9 })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
  });

  it('imputes NaN samples by the mean for the null and counts them', () => {
    const y = Float64Array.from(cells[0]!.values);
    for (let i = 100; i < 110; i++) y[i] = NaN;
    const fit = fitRidgeCV(design, [{ name: 'gappy', values: y }], { jackknifeBlocks: 0 });
    const nul = shiftNull(design, fit, { nShifts: 50 });
    expect(nul.cells[0]!.nImputed).toBe(10);
    expect(nul.cells[0]!.warnings[0]!.code).toBe('TF_NON_FINITE');
    expect(nul.cells[0]!.pGroup[0]).toBe(1 / 51);
  });

  it('refuses a fit made on another design', () => {
    const other = session(2).design;
    const fit = fitRidgeCV(design, cells, { jackknifeBlocks: 0, contributions: false });
    expect(() => shiftNull(other, fit)).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

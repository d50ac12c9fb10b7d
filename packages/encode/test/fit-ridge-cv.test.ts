import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { designMatrix, fitRidgeCV, matrixDesign } from '../src/index.js';
import { rng } from '@tuningfork/core';

const fx = loadFixture('fixtures/numpy/ridge.json', here(import.meta.url));
const cv = fx.cv;

describe('fitRidgeCV', () => {
  // Reference: explicit numpy loops (gen_ridge.py): blocked folds, gap, training-only
  // standardisation, λ = ρ·n_train, cvR² over concatenated test predictions.
  const design = matrixDesign({ data: cv.x, rows: cv.rows, cols: cv.cols }, { columnGroups: ['ev', 'ev', 'sine', 'drift', 'noise'] });
  const fit = fitRidgeCV(design, [{ name: 'y', values: cv.y }], { nFolds: cv.nFolds, gapSec: cv.gapBins, penalties: cv.rhos, jackknifeBlocks: 0 });
  const c = fit.cells[0]!;

  it('matches numpy blocked-CV R² of the full model for every penalty', () => {
    // The sums-and-eigenbasis route vs explicit refits: rounding only, 1e-11 relative.
    expectAllClose(c.cvR2ByPenalty, cv.cvR2.full, { rtol: 1e-11, source: fx.source });
  });

  it('refits reduced and group-alone models: ΔR² and alone R² follow the numpy reduced-model cvR²', () => {
    const best = (a: Float64Array) => Math.max(...a);
    // model order: full, nuisance(none), then without/alone for groups ev, sine, drift, noise
    expectAllClose(c.modelR2[1]!, best(cv.cvR2.none), { rtol: 1e-11, source: fx.source });
    expectAllClose(c.modelR2[2]!, best(cv.cvR2.drop01), { rtol: 1e-11, source: fx.source });
    expectAllClose(c.modelR2[3]!, best(cv.cvR2.only01), { rtol: 1e-11, source: fx.source });
    expectAllClose(c.deltaR2[0]!, best(cv.cvR2.full) - best(cv.cvR2.drop01), { rtol: 1e-10, source: fx.source });
    expectAllClose(c.aloneR2[0]!, best(cv.cvR2.only01) - best(cv.cvR2.none), { rtol: 1e-10, source: fx.source });
    expect(c.penalty).toBe(cv.rhos[1]); // the numpy curve peaks at ρ = 0.01
  });

  it('masks NaN samples of a cell (out of training and test) and reports how many', () => {
    const y = Float64Array.from(cv.y);
    for (const r of cv.nanRows) y[r] = NaN;
    const f = fitRidgeCV(design, [{ name: 'y', values: y }], { nFolds: cv.nFolds, gapSec: cv.gapBins, penalties: cv.rhos, jackknifeBlocks: 0, contributions: false });
    expectAllClose(f.cells[0]!.cvR2ByPenalty, cv.cvR2FullWithNaN, { rtol: 1e-11, source: fx.source });
    expect(f.cells[0]!.nMissing).toBe(5);
    expect(f.cells[0]!.warnings[0]!.code).toBe('TF_NON_FINITE');
  });

  it('recovers the kernels of noise-free synthetic data, with jackknife intervals that contain them', () => {
    const r = rng(4);
    const times = Float64Array.from({ length: 80 }, () => r.uniformIn(1, 395)).sort();
    const mod = Float64Array.from(times, () => r.normal());
    const d = designMatrix([
      { name: 'ev', group: 'A', times, basis: { postSec: 2, nBumps: 5 } },
      { name: 'ev×m', group: 'B', times, modulator: mod, basis: { postSec: 2, nBumps: 5 } },
    ], { startSec: 0, endSec: 400, binRate: 20 });
    // y = design · w exactly (a weighted sum of the columns) plus a constant
    const w = [0.5, 1, -0.3, 0.2, 0.1, 0, 0.7, 0.4, -0.2, 0.05];
    const y = new Float64Array(d.nRows).fill(3);
    for (let t = 0; t < d.nRows; t++) for (let k = d.rowPtr[t]!; k < d.rowPtr[t + 1]!; k++) y[t] = y[t]! + d.values[k]! * w[d.colIdx[k]!]!;
    const f = fitRidgeCV(d, [{ name: 'y', values: y }], { penalties: [1e-9], jackknifeBlocks: 10 });
    const cf = f.cells[0]!;
    // exact linear data: cvR² = 1 and coefficients = w up to the tiny penalty (1e-9 × n) and rounding
    expectAllClose(cf.cvR2, 1, { rtol: 1e-8 });
    expectAllClose(cf.coefficients, w, { rtol: 1e-6, atol: 1e-7 });
    const k = cf.kernels[1]!;
    for (let i = 0; i < k.estimate.length; i++) {
      expect(k.low[i]!).toBeLessThanOrEqual(k.estimate[i]!);
      expect(k.high[i]!).toBeGreaterThanOrEqual(k.estimate[i]!);
    }
    // groups are nearly orthogonal (modulator centred): each group's unique ΔR² is positive
    expect(cf.deltaR2[0]!).toBeGreaterThan(0.01);
    expect(cf.deltaR2[1]!).toBeGreaterThan(0.01);
  });

  it('skips a constant cell (all-zero counts) with a warning and still fits the others', () => {
    const f = fitRidgeCV(design, [{ name: 'zero', values: new Float64Array(cv.rows), kind: 'counts' }, { name: 'y', values: cv.y }], { nFolds: cv.nFolds, penalties: cv.rhos, jackknifeBlocks: 0 });
    expect(f.cells[0]!.cvR2).toBeNaN();
    expect(f.cells[0]!.warnings.some((w) => w.code === 'TF_DEGENERATE_SIGNAL')).toBe(true);
    expect(Number.isFinite(f.cells[1]!.cvR2)).toBe(true);
  });

  it('skips a cell that repeats one non-zero value (R² undefined) instead of returning ±Infinity', () => {
    // Constant targets have zero variance, so R² = 1 − SSE/SST is 0/0 (undefined; the house rule
    // is NaN with a warning). 0.1, 1/3 and 5.3 are not exact in binary: their running mean differs
    // from the value by a few ulps, which is what a centred-sum-of-squares test alone misses.
    for (const v of [0.1, 1 / 3, 5.3]) {
      const f = fitRidgeCV(design, [{ name: 'flat', values: new Float64Array(cv.rows).fill(v) }, { name: 'y', values: cv.y }], { nFolds: cv.nFolds, penalties: cv.rhos, jackknifeBlocks: 0 });
      const c0 = f.cells[0]!;
      expect(c0.cvR2).toBeNaN();
      expect(Array.from(c0.deltaR2).every(Number.isNaN)).toBe(true);
      expect(c0.warnings.some((w) => w.code === 'TF_DEGENERATE_SIGNAL')).toBe(true);
      expect(Number.isFinite(f.cells[1]!.cvR2)).toBe(true);
    }
  });

  it('skips a cell whose NaN samples leave a test block without training rows, with a warning', () => {
    // Usable samples only inside test block 1 (plus its gaps): every other block has no test
    // rows, and block 1 has no training rows left, so no cross-validated prediction exists.
    const f0 = fitRidgeCV(design, [{ name: 'y', values: cv.y }], { nFolds: cv.nFolds, gapSec: cv.gapBins, penalties: cv.rhos, jackknifeBlocks: 0 });
    const a = f0.folds.testStart[1]!;
    const b = f0.folds.testEnd[1]!;
    const y = Float64Array.from(cv.y as Float64Array, (v, i) => (i >= a && i < b ? v : NaN));
    const f = fitRidgeCV(design, [{ name: 'island', values: y }, { name: 'y', values: cv.y }], { nFolds: cv.nFolds, gapSec: cv.gapBins, penalties: cv.rhos, jackknifeBlocks: 0 });
    const c0 = f.cells[0]!;
    expect(c0.cvR2).toBeNaN();
    expect(c0.warnings.some((w) => w.code === 'TF_TOO_FEW_SAMPLES' && (w.details as { fold: number }).fold === 1)).toBe(true);
    expect(f.cells[1]!.cvR2).toBe(f0.cells[0]!.cvR2);
  });

  it('warns when a group is collinear with the others', () => {
    const x = new Float64Array(cv.rows * 3);
    for (let i = 0; i < cv.rows; i++) {
      x[i * 3] = cv.x[i * 5 + 2]!;
      x[i * 3 + 1] = cv.x[i * 5 + 4]!;
      x[i * 3 + 2] = 2 * cv.x[i * 5 + 2]! - cv.x[i * 5 + 4]!; // exact combination of the other two
    }
    const d = matrixDesign({ data: x, rows: cv.rows, cols: 3 }, { columnGroups: ['a', 'b', 'c'] });
    const f = fitRidgeCV(d, [{ name: 'y', values: cv.y }], { penalties: [0.01], jackknifeBlocks: 0 });
    expect(f.collinearity[2]!).toBeGreaterThan(0.999);
    expect(f.warnings.some((w) => w.code === 'TF_FIT_FAILED' && (w.details as { group: string }).group === 'c')).toBe(true);
  });

  it('refuses fewer trials than folds, cells of the wrong length and unknown nuisance groups', () => {
    expect(() => fitRidgeCV(design, [{ name: 'y', values: cv.y }], { foldCutTimes: [50, 100, 150] })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => fitRidgeCV(design, [{ name: 'y', values: cv.y.subarray(1) }])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => fitRidgeCV(design, [{ name: 'y', values: cv.y }], { nuisanceGroups: ['nope'] })).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
    expect(() => fitRidgeCV(design, [{ name: 'y', values: cv.y }], { penalties: [0] })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { designMatrix, designToMatrix, matrixDesign, poissonGLMCV, raisedCosineBasis } from '../src/index.js';

const grid = { startSec: 0, endSec: 20, binRate: 10 };

describe('designMatrix', () => {
  it('places the raised-cosine basis at the nearest bin of each event (kernel columns = basis rows)', () => {
    const d = designMatrix([{ name: 'cue', group: 'cue', times: [5.04], basis: { postSec: 2, nBumps: 4 } }], grid);
    const x = designToMatrix(d);
    const b = raisedCosineBasis({ sampleRate: 10, postSec: 2, nBumps: 4 });
    // event at 5.04 s → bin 50 (nearest); rows 50 … 50 + nLags − 1 hold the basis exactly
    for (let i = 0; i < b.basis.rows; i++) {
      for (let j = 0; j < 4; j++) expect(x.data[(50 + i) * 4 + j]).toBe(b.basis.data[i * 4 + j]);
    }
    expect(x.data.subarray(0, 50 * 4).every((v) => v === 0)).toBe(true);
    expect(d.columnNames).toEqual(['cue[0]', 'cue[1]', 'cue[2]', 'cue[3]']);
  });

  it('shifting every event by k bins shifts the design rows by k (property)', () => {
    fc.assert(fc.property(fc.array(fc.integer({ min: 20, max: 120 }), { minLength: 1, maxLength: 6 }), fc.integer({ min: 1, max: 40 }), (bins, k) => {
      const t = bins.map((b) => b / 10);
      const a = designToMatrix(designMatrix([{ name: 'e', group: 'g', times: t, basis: { postSec: 1.5, nBumps: 3, preSec: 0.5, nPreBumps: 1 } }], grid));
      const s = designToMatrix(designMatrix([{ name: 'e', group: 'g', times: t.map((x) => x + k / 10), basis: { postSec: 1.5, nBumps: 3, preSec: 0.5, nPreBumps: 1 } }], grid));
      const p = a.cols;
      for (let r = 0; r + k < 170; r++) for (let j = 0; j < p; j++) if (Math.abs(a.data[r * p + j]! - s.data[(r + k) * p + j]!) > 1e-12) return false;
      return true;
    }), { seed: 11, numRuns: 40 });
  });

  it('scales each event of a modulated kernel by its centred value, replacing NaN values by the mean', () => {
    const times = [2, 6, 10, 14];
    const mod = [1, 3, NaN, 8];
    const d = designMatrix([{ name: 'rpe', group: 'reward', times, modulator: mod, basis: { postSec: 1, nBumps: 2 } }], grid);
    const t = d.terms[0]!;
    // mean over finite values = 4; centred: −3, −1, 0 (NaN → mean), 4
    expectAllClose(t.eventWeights, [-3, -1, 0, 4], { rtol: 0, atol: 1e-15 });
    expect(t.modulatorMean).toBe(4);
    expect(d.warnings.some((w) => w.code === 'TF_NON_FINITE' && (w.details as { nNaN: number }).nNaN === 1)).toBe(true);
  });

  it('drops events whose kernel cannot reach the grid and reports how many', () => {
    const d = designMatrix([{ name: 'e', group: 'g', times: [-5, 3, 25], basis: { postSec: 1, nBumps: 2 } }], grid);
    expect(d.terms[0]!.eventBins.length).toBe(1);
    expect(d.warnings.find((w) => w.code === 'TF_WINDOW_OUT_OF_RANGE')?.details).toMatchObject({ dropped: 2 });
  });

  it('enters covariates as centred lagged copies x(t − ℓ) and masks rows that use a NaN sample', () => {
    const vals = Float64Array.from({ length: 200 }, (_, i) => Math.sin(i / 5) + 2);
    vals[100] = NaN;
    const d = designMatrix([{ name: 'speed', group: 'movement', signal: { values: vals, sampleRate: 10, t0: 0 }, lagsSec: [-0.1, 0.2] }], grid);
    expect(d.nCols).toBe(4); // lags −1 … 2 bins
    const x = designToMatrix(d);
    let mean = 0;
    let c = 0;
    for (let i = 0; i < 200; i++) if (i !== 100) { mean += vals[i]!; c++; }
    mean /= c;
    // column for lag ℓ (bins) at row 50 is x(50 − ℓ) − mean (exact arithmetic on the same values)
    // (1e-14: one subtraction of the same doubles)
    expectAllClose(x.data.subarray(200, 204), [-1, 0, 1, 2].map((l) => vals[50 - l]! - mean), { rtol: 1e-14, atol: 1e-15 });
    // rows 99 … 102 use sample 100 for some lag → masked (4 rows)
    expect(d.nMaskedRows).toBe(4);
    expect(Array.from(d.rowValid!.subarray(98, 104))).toEqual([1, 0, 0, 0, 0, 1]);
  });

  it('refuses an empty group, a kernel as long as the session, duplicate names and mismatched modulators', () => {
    expect(() => designMatrix([
      { name: 'a', group: 'A', times: [5] },
      { name: 'b', group: 'B', times: [500] },
    ], grid)).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => designMatrix([{ name: 'a', group: 'A', times: [1], basis: { postSec: 30 } }], grid)).toThrow(expect.objectContaining({ code: 'TF_WINDOW_OUT_OF_RANGE' }));
    expect(() => designMatrix([{ name: 'a', group: 'A', times: [1] }, { name: 'a', group: 'B', times: [2] }], grid)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => designMatrix([{ name: 'a', group: 'A', times: [1, 2], modulator: [1] }], grid)).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => designMatrix([{ name: 'a', group: 'A', times: [1, NaN] }], grid)).toThrow(expect.objectContaining({ code: 'TF_BAD_EVENTS' }));
    expect(() => designMatrix([{ name: 'a', group: 'A', times: [1] }], { binRate: 10 })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });

  it('drops a constant modulated kernel (all values equal) with a warning instead of a zero column', () => {
    const d = designMatrix([
      { name: 'a', group: 'A', times: [2, 8] },
      { name: 'am', group: 'A', times: [2, 8], modulator: [3, 3] },
    ], grid);
    expect(d.terms.map((t) => t.name)).toEqual(['a']);
    expect(d.warnings.some((w) => w.code === 'TF_DEGENERATE_SIGNAL')).toBe(true);
  });
});

describe('matrixDesign', () => {
  it('wraps a dense matrix with column groups, one single-lag term per column', () => {
    const d = matrixDesign({ data: new Float64Array([1, 2, 3, 4, 5, 7]), rows: 3, cols: 2 }, { columnGroups: ['a', 'b'] });
    expect(d.groups).toEqual(['a', 'b']);
    // stored centred by the column mean (the intercept absorbs it)
    expectAllClose(designToMatrix(d).data, [-2, -2.333333333333333, 0, -0.3333333333333335, 2, 2.666666666666667], { rtol: 1e-14 });
    expect(() => matrixDesign({ data: new Float64Array(6), rows: 3, cols: 2 }, { columnGroups: ['a'] })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });

  // n × 3 design: two random columns and a third filled with `c` (an event that never occurs, c = 0,
  // or a constant such as an intercept column).
  const withConstant = (c: number, n = 300) => {
    const r = rng(11);
    const x = new Float64Array(n * 3);
    for (let i = 0; i < n; i++) {
      x[i * 3] = r.normal();
      x[i * 3 + 1] = r.normal();
      x[i * 3 + 2] = c;
    }
    const counts = Float64Array.from({ length: n }, (_, i) => Math.floor(3 * r.uniform() * Math.exp(0.3 * x[i * 3]!)));
    const two = new Float64Array(n * 2);
    for (let i = 0; i < n; i++) two.set(x.subarray(i * 3, i * 3 + 2), i * 2);
    return { x: { data: x, rows: n, cols: 3 }, two: { data: two, rows: n, cols: 2 }, counts };
  };

  it('refuses a group whose every column is constant (an event that never occurred) instead of testing an empty group', () => {
    // Before: the group got ΔR² = 0 and a shift-null p = 1, a test of nothing reported as a result.
    const { x } = withConstant(0);
    expect(() => matrixDesign(x, { columnGroups: ['a', 'a', 'never'] })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES', details: { group: 'never' } }));
  });

  it('drops constant columns with a warning, so fits equal those of the design without them', () => {
    for (const c of [0, 0.1]) {
      const { x, two, counts } = withConstant(c);
      const d = matrixDesign(x, { columnGroups: ['a', 'b', 'b'], columnNames: ['u', 'v', 'flat'], binRate: 10 });
      expect(d.nCols).toBe(2);
      expect(d.columnNames).toEqual(['u', 'v']);
      expect(d.warnings.some((w) => w.code === 'TF_DEGENERATE_SIGNAL' && (w.details as { dropped: string[] }).dropped[0] === 'flat')).toBe(true);
      const ref = matrixDesign(two, { columnGroups: ['a', 'b'], columnNames: ['u', 'v'], binRate: 10 });
      // Before: the constant column made the GLM's Fisher information singular (every SE NaN with
      // c = 0; a slope of −4e12 with c = 0.1, whose centred column is a rounding-size constant).
      const units = [{ name: 'u', values: counts }];
      const got = poissonGLMCV(d, units, { threads: 1 }).cells[0]!;
      const want = poissonGLMCV(ref, units, { threads: 1 }).cells[0]!;
      expect(Array.from(got.coefficientSE).every(Number.isFinite)).toBe(true);
      // Same columns, same rows, same code path: identical bits.
      expectAllClose(got.coefficients, want.coefficients, { rtol: 0 });
      expectAllClose(got.coefficientSE, want.coefficientSE, { rtol: 0 });
      expectAllClose(got.cvDevianceExplained, want.cvDevianceExplained, { rtol: 0 });
    }
  });
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { ridgeRegression } from '../src/index.js';

const ols = loadFixture('fixtures/numpy/ols-longley-norris.json', here(import.meta.url));
const ridge = loadFixture('fixtures/numpy/ridge.json', here(import.meta.url));

describe('ridgeRegression', () => {
  // NIST StRD Longley certified values, as listed in INFERENCE.md §5.1 (taken there from the public
  // statsmodels test file results_regression.py, class Longley, which credits NIST Longley.dat).
  const longley = ridgeRegression({ data: ols.longley.x, rows: 16, cols: 6 }, ols.longley.y);

  it('reproduces the NIST StRD Longley certified coefficients and SDs to ≥ 9 significant digits', () => {
    const nist = { source: 'NIST StRD Longley (certified), via INFERENCE.md §5.1' };
    // rtol 1e-9 = LRE ≥ 9, the requirement of INFERENCE.md §5.1 (we reach ≈ 12.5).
    expectAllClose(longley.intercept, -3482258.63459582, { rtol: 1e-9, ...nist });
    expectAllClose(longley.coefficients, [15.0618722713733, -0.358191792925910e-1, -2.02022980381683, -1.03322686717359, -0.511041056535807e-1, 1829.15146461355], { rtol: 1e-9, ...nist });
    expectAllClose(longley.interceptStandardError, 890420.383607373, { rtol: 1e-9, ...nist });
    expectAllClose(longley.standardErrors, [84.9149257747669, 0.334910077722432e-1, 0.488399681651699, 0.214274163161675, 0.226073200069370, 455.478499142212], { rtol: 1e-9, ...nist });
    expectAllClose(longley.residualSD, 304.854073561965, { rtol: 1e-9, ...nist });
    expectAllClose(longley.rSquared, 0.995479004577296, { rtol: 1e-9, ...nist });
    expectAllClose(longley.residualSS, 836424.055505915, { rtol: 1e-9, ...nist });
  });

  it('agrees with numpy.linalg.lstsq on Longley (cross-check of the certified values)', () => {
    // lstsq itself reaches LRE ≈ 10.9 (INFERENCE.md §5.1), so 1e-9 relative is the joint accuracy.
    expectAllClose(longley.coefficients, ols.longley.coefficients, { rtol: 1e-9, source: ols.source });
    expectAllClose(longley.intercept, ols.longley.intercept, { rtol: 1e-9, source: ols.source });
    expectAllClose(longley.standardErrors, ols.longley.standardErrors, { rtol: 1e-9, source: ols.source });
  });

  it('reproduces the NIST StRD Norris certified values (intercept, slope, SDs, residual SD, R²)', () => {
    const r = ridgeRegression({ data: ols.norris.x, rows: 36, cols: 1 }, ols.norris.y);
    const nist = { source: 'NIST StRD Norris (certified), via INFERENCE.md §5.2 (scipy/scipy Norris.dat)' };
    // Norris is the lower-difficulty set: scipy.linregress reaches LRE 12.8–14.4; 1e-11 leaves margin.
    expectAllClose(r.intercept, -0.262323073774029, { rtol: 1e-11, ...nist });
    expectAllClose(r.coefficients, [1.00211681802045], { rtol: 1e-11, ...nist });
    expectAllClose(r.interceptStandardError, 0.232818234301152, { rtol: 1e-11, ...nist });
    expectAllClose(r.standardErrors, [0.429796848199937e-3], { rtol: 1e-11, ...nist });
    expectAllClose(r.residualSD, 0.884796396144373, { rtol: 1e-11, ...nist });
    expectAllClose(r.rSquared, 0.999993745883712, { rtol: 1e-11, ...nist });
    expectAllClose(r.residualSS, 26.6173985294224, { rtol: 1e-11, ...nist });
  });

  it('solves the §4.9 hand example: β = [0.875, 1.375] and df = 1.25 at λ = 1', () => {
    // INFERENCE.md §4.9 "Ridge by hand" (derived): X = [[1,0],[0,1],[1,1]], y = [1,2,3], no intercept.
    const r = ridgeRegression({ data: new Float64Array([1, 0, 0, 1, 1, 1]), rows: 3, cols: 2 }, [1, 2, 3], { penalty: 1, intercept: false, standardize: false });
    // exact rationals 7/8, 11/8 and 5/4; the doc states eig and SVD routes agree to 1e-15.
    expectAllClose(r.coefficients, [0.875, 1.375], { rtol: 1e-14 });
    expectAllClose(r.df, 1.25, { rtol: 1e-14 });
  });

  it('matches the numpy closed form on standardised columns for λ = 0, 0.5, 5, 50 (coefficients, SEs, df, RSS)', () => {
    const s = ridge.single;
    for (const f of s.fits) {
      const r = ridgeRegression({ data: s.x, rows: s.rows, cols: s.cols }, s.y, { penalty: f.penalty });
      // Both solve a well-conditioned 5 × 5 system (numpy.linalg.solve vs eigen route): 1e-10.
      const src = { rtol: 1e-10, source: ridge.source, label: `λ=${f.penalty}` };
      expectAllClose(r.coefficients, f.coefficients, src);
      expectAllClose(r.intercept, f.intercept, src);
      expectAllClose(r.standardErrors, f.standardErrors, src);
      expectAllClose(r.df, f.df, src);
      expectAllClose(r.residualSS, f.residualSS, src);
    }
    const raw = ridgeRegression({ data: s.x, rows: s.rows, cols: s.cols }, s.y, { penalty: 2, intercept: false, standardize: false });
    // raw XᵀX has column means up to 50: condition ~1e5, so 1e-9.
    expectAllClose(raw.coefficients, s.rawNoIntercept.coefficients, { rtol: 1e-9, source: ridge.source });
  });

  it('gives each of two orthogonal centred groups its alone R² as unique ΔR², with no shared variance (property)', () => {
    // INFERENCE.md §4.9 "Orthogonal groups" (derived here), in-sample OLS.
    fc.assert(fc.property(fc.integer({ min: 1, max: 1000 }), (seed) => {
      const n = 64;
      const x = new Float64Array(n * 2);
      const y = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const a = Math.cos((2 * Math.PI * i) / n); // orthogonal, centred columns
        const b = Math.sin((4 * Math.PI * i) / n);
        x[i * 2] = a;
        x[i * 2 + 1] = b;
        y[i] = ((seed % 7) - 3) * a + ((seed % 5) - 2) * b + Math.sin(seed * 0.37 + i * 1.7);
      }
      const full = ridgeRegression({ data: x, rows: n, cols: 2 }, y).rSquared;
      const onlyA = ridgeRegression({ data: x.filter((_, k) => k % 2 === 0), rows: n, cols: 1 }, y).rSquared;
      const onlyB = ridgeRegression({ data: x.filter((_, k) => k % 2 === 1), rows: n, cols: 1 }, y).rSquared;
      const dA = full - onlyB;
      const dB = full - onlyA;
      return Math.abs(dA - onlyA) < 1e-12 && Math.abs(dB - onlyB) < 1e-12 && Math.abs(full - dA - dB) < 1e-12;
    }), { seed: 3, numRuns: 40 });
  });

  it('refuses collinear columns without a penalty, and too few rows', () => {
    const x = new Float64Array([1, 2, 2, 4, 3, 6, 4, 8]);
    expect(() => ridgeRegression({ data: x, rows: 4, cols: 2 }, [1, 2, 3, 5])).toThrow(expect.objectContaining({ code: 'TF_FIT_FAILED' }));
    expect(ridgeRegression({ data: x, rows: 4, cols: 2 }, [1, 2, 3, 5], { penalty: 0.1 }).coefficients.every(Number.isFinite)).toBe(true);
    expect(() => ridgeRegression({ data: new Float64Array([1, 2]), rows: 2, cols: 1 }, [1, 2])).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
    expect(() => ridgeRegression({ data: new Float64Array([1, 2, 3]), rows: 3, cols: 1 }, [1, 2])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

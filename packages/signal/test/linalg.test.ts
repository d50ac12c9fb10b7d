import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { householderQR, leastSquaresQR, solveLinear } from '../src/index.js';

// Reference: NIST StRD Longley and Norris certified values (fixtures/nist/gen_nist.py, which
// cross-checks them against exact rational least squares; data as in INFERENCE.md §5.1–5.2).
const fx = loadFixture('fixtures/nist/nist.json', here(import.meta.url));

/** Log relative error: the number of correct significant digits. */
const lre = (est: number, cert: number): number => -Math.log10(Math.abs(est - cert) / Math.abs(cert));

describe('leastSquaresQR', () => {
  it('reproduces NIST Longley (6 predictors) to ≥ 9 significant digits, coefficients and standard deviations', () => {
    const L = fx.longley;
    const f = leastSquaresQR({ data: L.x, rows: 16, cols: 6 }, L.y, { intercept: true });
    const c = L.certified;
    for (let j = 0; j < 7; j++) {
      expect(lre(f.coefficients[j]!, c.coefficients[j])).toBeGreaterThanOrEqual(9);
      expect(lre(f.standardErrors[j]!, c.standardErrors[j])).toBeGreaterThanOrEqual(9);
    }
    expect(lre(f.residualSd, c.residualSd)).toBeGreaterThanOrEqual(9);
    expect(lre(f.rSquared, c.rSquared)).toBeGreaterThanOrEqual(9);
    expect(f.df).toBe(9);
  });

  it('reproduces NIST Longley with an explicit constant column (no centring) to ≥ 9 digits', () => {
    const L = fx.longley;
    const X = new Float64Array(16 * 7);
    for (let i = 0; i < 16; i++) {
      X[i * 7] = 1;
      for (let j = 0; j < 6; j++) X[i * 7 + 1 + j] = L.x[i * 6 + j];
    }
    const f = leastSquaresQR({ data: X, rows: 16, cols: 7 }, L.y);
    for (let j = 0; j < 7; j++) {
      expect(lre(f.coefficients[j]!, L.certified.coefficients[j])).toBeGreaterThanOrEqual(9);
      expect(lre(f.standardErrors[j]!, L.certified.standardErrors[j])).toBeGreaterThanOrEqual(9);
    }
  });

  it('reproduces NIST Norris (1 predictor) certified values', () => {
    const N = fx.norris;
    const f = leastSquaresQR({ data: N.x, rows: 36, cols: 1 }, N.y, { intercept: true });
    const c = N.certified;
    // Lower-difficulty data: 12 significant digits (certified values carry 15).
    expectAllClose(f.coefficients, c.coefficients, { rtol: 1e-12 });
    expectAllClose(f.standardErrors, c.standardErrors, { rtol: 1e-12 });
    expectAllClose([f.residualSd, f.rSquared], [c.residualSd, c.rSquared], { rtol: 1e-12 });
  });

  it('fits y = 1 + 2x exactly (the TSDoc example)', () => {
    const fit = leastSquaresQR({ data: Float64Array.of(0, 1, 2), rows: 3, cols: 1 }, [1, 3, 5], { intercept: true });
    // Exact data: coefficients to rounding, residual sd 0.
    expectAllClose(fit.coefficients, [1, 2], { rtol: 1e-14, atol: 1e-14 });
    expectAllClose(fit.residualSd, 0, { atol: 1e-14 });
  });

  it('rejects collinear columns and too few observations with codes', () => {
    const X = { data: Float64Array.of(1, 2, 2, 4, 3, 6, 4, 8), rows: 4, cols: 2 };
    expect(() => leastSquaresQR(X, [1, 2, 3, 4])).toThrow(expect.objectContaining({ code: 'TF_FIT_FAILED' }));
    expect(() => leastSquaresQR({ data: Float64Array.of(1, 2), rows: 2, cols: 1 }, [1, 2], { intercept: true })).not.toThrow();
    expect(() => leastSquaresQR({ data: Float64Array.of(1), rows: 1, cols: 1 }, [1], { intercept: true })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
  });
});

describe('householderQR', () => {
  it('factorises A = QR: QᵀA has R on top and zeros below, |diag R| = column norms for orthogonal columns', () => {
    // Orthogonal columns (analytic): R is diagonal with entries ±‖column‖.
    const A = { data: Float64Array.of(1, 1, 1, -1, 1, 1, 1, -1), rows: 4, cols: 2 };
    const qr = householderQR(A);
    expectAllClose(Array.from(qr.rDiag, Math.abs), [2, 2], { rtol: 1e-15 });
    const col1 = qr.applyQt([1, 1, 1, 1]);
    expectAllClose(col1.subarray(1), [0, 0, 0], { atol: 1e-15 });
    expect(qr.rank).toBe(2);
  });
});

describe('solveLinear', () => {
  it('solves a system that needs pivoting', () => {
    // [[0, 1], [1, 1]]·x = [1, 3] → x = [2, 1] (hand-derived).
    expectAllClose(solveLinear({ data: Float64Array.of(0, 1, 1, 1), rows: 2, cols: 2 }, [1, 3]), [2, 1], { rtol: 1e-15 });
    expect(() => solveLinear({ data: Float64Array.of(1, 2, 2, 4), rows: 2, cols: 2 }, [1, 1])).toThrow(expect.objectContaining({ code: 'TF_FIT_FAILED' }));
  });
});

import { describe, expect, it } from 'vitest';
import { expectAllClose, here, loadFixture } from '@tuningfork/test-utils';
import { designMatrix, designToMatrix, fitPoissonGLM, matrixDesign, poissonGLMCV } from '../src/index.js';

const fx = loadFixture('fixtures/scipy/poisson.json', here(import.meta.url));
const dob = fx.dobson;
const dobsonX = { data: dob.x, rows: 9, cols: 4 };

describe('fitPoissonGLM', () => {
  it('reproduces R glm(counts ~ outcome + treatment, family = poisson) on the Dobson data', () => {
    // Reference: INFERENCE.md §4.9 CHECK (R base example(glm), Dobson 1990): closed-form MLE
    // intercept log 21, outcome2 log(40/63), outcome3 log(47/63), treatments 0.
    const r = fitPoissonGLM(dobsonX, dob.y);
    const src = { source: 'R example(glm), Dobson (1990); INFERENCE.md §4.9' };
    // IRLS stops at a 1e-8 relative deviance change; the coefficients are then exact to ~1e-11.
    expectAllClose(r.intercept, 3.044522437723, { rtol: 1e-10, ...src });
    expectAllClose(r.coefficients, [-0.454255272278, -0.292987124681, 0, 0], { rtol: 1e-10, atol: 1e-10, ...src });
    // The doc prints deviance/AIC to 10 significant digits: half a unit of the last one.
    expectAllClose(r.deviance, 5.129141077, { rtol: 1e-9, ...src });
    expectAllClose(r.nullDeviance, 10.581445864, { rtol: 1e-9, ...src });
    expectAllClose(r.aic, 56.7613184, { rtol: 1e-9, ...src });
    // R needs 4 Fisher-scoring iterations from μ = y + 0.1; we start at β₀ = log ȳ (§4.5).
    expect(r.iterations).toBeLessThanOrEqual(6);
  });

  it('matches the ridge fit (λ = 1, raw scale) of §4.9 and of scipy trust-exact + Newton polish', () => {
    const r = fitPoissonGLM(dobsonX, dob.y, { penalty: 1, standardize: false });
    // §4.9 values were confirmed by BFGS, which is accurate to ~1e-7 only: compare at 3e-7.
    expectAllClose([r.intercept, ...r.coefficients], [3.03322002, -0.43220562, -0.27583307, 0, 0], { rtol: 3e-7, atol: 1e-12, source: 'INFERENCE.md §4.9' });
    expectAllClose([r.intercept, ...r.coefficients], [dob.intercept, ...dob.coefficients], { rtol: 1e-9, atol: 1e-12, source: fx.source });
  });

  it('penalises standardised slopes like scipy for a random design with offset-free raw columns', () => {
    const s = fx.std;
    const r = fitPoissonGLM({ data: s.x, rows: s.rows, cols: s.cols }, s.y, { penalty: s.penalty });
    // scipy solution polished to |gradient| < 1e-9; our IRLS stops at 1e-8 relative deviance change.
    expectAllClose([r.intercept, ...r.coefficients], [s.intercept, ...s.coefficients], { rtol: 1e-7, atol: 1e-9, source: fx.source });
  });

  it('gives the AIC of large and of non-integer counts with log Γ(y + 1), like scipy', () => {
    // Reference: gen_poisson_aic.py (scipy.special.gammaln; for the integer case checked against
    // scipy.stats.poisson.logpmf). Before: log y! was a loop to y (minutes for 10⁹ counts per
    // bin) that truncated y = 2.5 to log 2!, so the AIC of non-integer counts was silently off.
    const ax = loadFixture('fixtures/scipy/poisson-aic.json', here(import.meta.url));
    for (const c of [ax.large, ax.fractional]) {
      const r = fitPoissonGLM({ data: c.x, rows: c.rows, cols: c.cols }, c.y);
      // IRLS stops at a 1e-8 relative deviance change: coefficients to ~1e-9, and the AIC is
      // stationary there; the large case's log-likelihood cancels terms of ~1e9 down to ~1e2,
      // leaving ~1e-9 relative rounding.
      expectAllClose([r.intercept, ...r.coefficients], [c.intercept, ...c.coefficients], { rtol: 1e-8, atol: 1e-9, source: ax.source });
      expectAllClose(r.aic, c.aic, { rtol: 1e-8, source: ax.source });
    }
  });

  it('refuses all-zero counts, negative counts and mismatched shapes', () => {
    expect(() => fitPoissonGLM(dobsonX, new Float64Array(9))).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
    expect(() => fitPoissonGLM(dobsonX, [1, 2, 3, -1, 5, 6, 7, 8, 9])).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
    expect(() => fitPoissonGLM(dobsonX, [1, 2, 3])).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
  });
});

describe('poissonGLMCV', () => {
  const c = fx.cv;
  const design = matrixDesign({ data: c.x, rows: c.rows, cols: c.cols }, { columnGroups: ['ev', 'slow', 'noise'], binRate: c.binRate });

  it('reports NaN cross-validated deviance with a warning when a test block has spikes but its training rows none', () => {
    // The training-mean rate of that fold is 0, so its held-out deviance is undefined. Before, the
    // unit got a finite cvDevianceExplained set by the clamps (rate 1e-10, |η| ≤ 30) and no warning.
    const f0 = poissonGLMCV(design, [{ name: 'u', values: c.y }], { nFolds: c.nFolds, gapSec: c.gapBins / c.binRate, penalty: c.penalty, threads: 1 });
    const b = f0.folds.testEnd[0]!;
    const early = Float64Array.from(c.y as Float64Array, (v, i) => (i < b ? v : 0)); // stops firing after block 0
    const island = Float64Array.from(c.y as Float64Array, (v, i) => (i >= f0.folds.testStart[1]! && i < f0.folds.testEnd[1]! ? v : NaN));
    const r = poissonGLMCV(design, [{ name: 'early', values: early }, { name: 'island', values: island }, { name: 'u', values: c.y }], { nFolds: c.nFolds, gapSec: c.gapBins / c.binRate, penalty: c.penalty, threads: 1, contributions: true });
    for (const [k, fold] of [[0, 0], [1, 1]] as const) {
      const u = r.cells[k]!;
      expect(u.cvDevianceExplained).toBeNaN();
      expect(u.bitsPerSpike).toBeNaN();
      expect(Array.from(u.deltaDeviance).every(Number.isNaN)).toBe(true);
      expect(u.warnings.some((w) => w.code === 'TF_TOO_FEW_SAMPLES' && (w.details as { fold: number }).fold === fold)).toBe(true);
    }
    // the full-data fit is still reported; a unit firing throughout is unaffected
    expect(Number.isFinite(r.cells[0]!.intercept)).toBe(true);
    expect(r.cells[2]!.cvDevianceExplained).toBe(f0.cells[0]!.cvDevianceExplained);
  });

  it('matches scipy blocked-CV deviance explained and bits per spike (training-only standardised penalty, log Δt offset)', () => {
    // tol 1e-10: fold fits (kept Hessian, linear convergence) stop at a 1e-12 relative change, so
    // the test deviances are exact to ~1e-10 relative; with the default 1e-8 they are to ~1e-5.
    const r = poissonGLMCV(design, [{ name: 'u', values: c.y, kind: 'counts' }], { nFolds: c.nFolds, gapSec: c.gapBins / c.binRate, penalty: c.penalty, tol: 1e-10 });
    const u = r.cells[0]!;
    expectAllClose(u.cvDevianceExplained, c.cvDevianceExplained, { rtol: 1e-6, source: fx.source });
    expectAllClose(u.bitsPerSpike, c.bitsPerSpike, { rtol: 1e-6, source: fx.source });
    // full-data fit (matrixDesign centres columns, which only moves the intercept)
    expectAllClose(u.coefficients, c.fullCoefficients, { rtol: 1e-7, atol: 1e-9, source: fx.source });
    expect(u.converged).toBe(true);
  });

  it('approximates the exact CV closely with one Newton step per fold (foldFits: newton-step)', () => {
    const r = poissonGLMCV(design, [{ name: 'u', values: c.y }], { nFolds: c.nFolds, gapSec: c.gapBins / c.binRate, penalty: c.penalty, foldFits: 'newton-step' });
    // The one-step error is second order in the fold's change of coefficients, which is large on
    // this tiny problem (600 bins, 30 events, ~130 spikes per fold): 5 % here, 10 % allowed.
    // On 60-minute sessions it is ~5e-4 relative (measured on simulated units, see the report).
    expectAllClose(r.cells[0]!.cvDevianceExplained, c.cvDevianceExplained, { rtol: 0.1, source: fx.source });
    expect(() => poissonGLMCV(design, [{ name: 'u', values: c.y }], { foldFits: 'approx' as never })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });

  it('skips a unit without spikes with a coded warning and masks NaN counts', () => {
    const y = Float64Array.from(c.y);
    y[10] = NaN;
    const r = poissonGLMCV(design, [{ name: 'silent', values: new Float64Array(c.rows) }, { name: 'u', values: y }], { nFolds: c.nFolds, penalty: c.penalty });
    expect(r.cells[0]!.cvDevianceExplained).toBeNaN();
    expect(r.cells[0]!.warnings.some((w) => w.code === 'TF_DEGENERATE_SIGNAL')).toBe(true);
    expect(r.cells[1]!.nUsed).toBe(c.rows - 1);
    expect(r.cells[1]!.warnings.some((w) => w.code === 'TF_NON_FINITE')).toBe(true);
    expect(() => poissonGLMCV(design, [{ name: 'neg', values: Float64Array.from(c.y as Float64Array, (v: number, i: number) => (i === 3 ? -1 : v)) }])).toThrow(expect.objectContaining({ code: 'TF_BAD_VALUE' }));
  });
  // A 2-minute 50 Hz design of event kernels (modulated and not) with deterministic counts.
  const rate = 50;
  const nBins = 6000;
  const evA = Float64Array.from({ length: 60 }, (_, i) => 1 + i * 1.9 + 0.3 * Math.sin(i));
  const evB = Float64Array.from({ length: 90 }, (_, i) => 0.5 + i * 1.3 + 0.2 * Math.cos(3 * i));
  const modA = Float64Array.from(evA, (_, i) => Math.cos(0.7 * i));
  const eventDesign = designMatrix([
    { name: 'a', group: 'a', times: evA, basis: { postSec: 1, nBumps: 5 } },
    { name: 'a×m', group: 'a', times: evA, modulator: modA, basis: { postSec: 1, nBumps: 5 } },
    { name: 'b', group: 'b', times: evB, basis: { postSec: 0.8, nBumps: 4, preSec: 0.4, nPreBumps: 1 } },
  ], { startSec: 0, endSec: nBins / rate, binRate: rate });
  const eventCounts = (phase: number) => {
    const y = new Float64Array(nBins);
    for (const t of evA) for (let k = 3; k < 20; k++) { const b = Math.round(t * rate) + k; if (b < nBins && (b + phase) % 3 === 0) y[b] = y[b]! + 1; }
    for (let b = 0; b < nBins; b++) if ((b * 7919 + phase) % 23 === 0) y[b] = y[b]! + 1;
    return y;
  };

  it('fits an event design through its convolution structure as through its dense matrix, on any number of threads', () => {
    const units = [0, 1, 2].map((k) => ({ name: `u${k}`, values: eventCounts(k), kind: 'counts' as const }));
    const opts = { nFolds: 4, penalty: 1, tol: 1e-12, contributions: true };
    const one = poissonGLMCV(eventDesign, units, { ...opts, threads: 1 });
    // Reference: the same model through the dense-matrix route, which the scipy fixture above
    // checks; matrixDesign centres columns, which only moves the intercept. Both stop at a 1e-14
    // relative deviance change, so the CV figures agree to ~1e-9.
    const dense = poissonGLMCV(matrixDesign(designToMatrix(eventDesign), { columnGroups: Array.from(eventDesign.columnGroup, (g) => eventDesign.groups[g]!), binRate: rate }), units, { ...opts, gapSec: one.folds.gapBins / rate, threads: 1 });
    one.cells.forEach((u, k) => {
      const d = dense.cells[k]!;
      expectAllClose([u.cvDevianceExplained, u.bitsPerSpike, ...u.deltaDeviance], [d.cvDevianceExplained, d.bitsPerSpike, ...d.deltaDeviance], { rtol: 1e-7, atol: 1e-9, source: 'dense-matrix route (scipy-checked above)' });
      expectAllClose(u.coefficients, d.coefficients, { rtol: 1e-6, atol: 1e-8, source: 'dense-matrix route (scipy-checked above)' });
    });
    // Units are independent and deterministic: a worker thread gives bit-identical fits.
    const two = poissonGLMCV(eventDesign, units, { ...opts, threads: 2 });
    expect(two.warnings.filter((w) => w.code === 'workers-unavailable')).toEqual([]);
    two.cells.forEach((u, k) => {
      const s = one.cells[k]!;
      expect([u.name, u.cvDevianceExplained, u.bitsPerSpike, u.iterations, ...u.deltaDeviance, ...u.coefficients, ...u.coefficientSE]).toEqual([s.name, s.cvDevianceExplained, s.bitsPerSpike, s.iterations, ...s.deltaDeviance, ...s.coefficients, ...s.coefficientSE]);
    });
  });
});

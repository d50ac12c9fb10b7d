import { TuningforkError, checkInteger, checkOneOf, checkPositive, resolveOptions } from '@tuningfork/core';
import type { ResultWarning } from '@tuningfork/core';
import { normalEquations, projectAmplitudes } from '../internal/exp-fit-kernels.js';
import { solveLinear } from '../linalg/solve-linear.js';
import { asF64, requireFinite } from '../internal/validate.js';

/** Options of {@link fitExponentialDecay}. */
export interface ExponentialFitOptions {
  /** 'double' = a·e^(−t/τ1) + b·e^(−t/τ2) + c, 'single' = a·e^(−t/τ1) + c. @defaultValue 'double' */
  model?: 'double' | 'single';
  /** Lower bound of the time constants, s; null = max(3 sample intervals, span/10⁴). @defaultValue null */
  tauMinSec?: number | null;
  /** Upper bound of the time constants, s; null = 10 × the time span. @defaultValue null */
  tauMaxSec?: number | null;
  /** Levenberg–Marquardt iteration cap. @defaultValue 200 */
  maxIterations?: number;
  /** Time constants per axis of the starting-value grid. @defaultValue 24 */
  gridSize?: number;
}

/** A fitted exponential decay (t measured from `originSec`). */
export interface ExponentialFit {
  readonly model: 'double' | 'single';
  /** Amplitude of the fast term (≥ 0) and its time constant, s. */
  readonly a: number;
  readonly tau1: number;
  /** Amplitude of the slow term (≥ 0; 0 for 'single') and its time constant, s (NaN for 'single'). */
  readonly b: number;
  readonly tau2: number;
  /** Asymptote. */
  readonly c: number;
  /** Time origin of the model, s (the first input time). */
  readonly originSec: number;
  /** 1 − fit(end)/fit(start) over the fitted span. */
  readonly fractionBleached: number;
  /** Root-mean-square residual. */
  readonly rmse: number;
  readonly iterations: number;
  readonly converged: boolean;
  /** True when a time constant with a non-zero amplitude sits at a bound (the fit is not trustworthy). */
  readonly tauAtBound: boolean;
  readonly bounds: { readonly tauMinSec: number; readonly tauMaxSec: number };
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ model: 'double', tauMinSec: null, tauMaxSec: null, maxIterations: 200, gridSize: 24 } as const);

/** Evaluate a fitted decay at time t (s, same clock as the fit). */
export function evaluateExponential(fit: Pick<ExponentialFit, 'a' | 'tau1' | 'b' | 'tau2' | 'c' | 'originSec' | 'model'>, t: number): number {
  const u = t - fit.originSec;
  let v = fit.c + fit.a * Math.exp(-u / fit.tau1);
  if (fit.model === 'double' && fit.b !== 0) v += fit.b * Math.exp(-u / fit.tau2);
  return v;
}

/** Σ a_i·b_i over i < n. */
function dotN(a: Float64Array, b: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i]! * b[i]!;
  return s;
}

/**
 * Residual sum of squares of the (double) exponential at θ = (a, ln τ1, [b, ln τ2,] c) on times u,
 * writing the basis values to o1, o2 and the residuals to orr. Module-level (not a closure per
 * call) so optimised callers keep their code from one call to the next.
 */
function modelCost(th: Float64Array, u: Float64Array, yy: Float64Array, m: number, double: boolean, o1: Float64Array, o2: Float64Array, orr: Float64Array): number {
  const t1 = Math.exp(th[1]!);
  const t2 = double ? Math.exp(th[3]!) : 1;
  const A = th[0]!;
  const Bm = double ? th[2]! : 0;
  const C = double ? th[4]! : th[2]!;
  let s = 0;
  for (let i = 0; i < m; i++) {
    const a1 = Math.exp(-u[i]! / t1);
    const a2 = double ? Math.exp(-u[i]! / t2) : 0;
    o1[i] = a1;
    o2[i] = a2;
    const r = yy[i]! - (A * a1 + Bm * a2 + C);
    orr[i] = r;
    s += r * r;
  }
  return s;
}

/**
 * Fit a single or double exponential decay with a constant by bounded nonlinear least squares.
 *
 * **Method.** Model `a·e^(−u/τ1) + b·e^(−u/τ2) + c`, u = t − t[0], with a, b ≥ 0 and
 * τmin ≤ τ1 < τ2 ≤ τmax. Starting values come from variable projection on a log-spaced grid of
 * (τ1, τ2): for each pair the amplitudes are the exact non-negative least-squares solution, so
 * the start is the best grid pair whatever the data's scale. The full model is then refined by
 * Levenberg–Marquardt on (a, ln τ1, b, ln τ2, c) with the bounds enforced by projection, stopping
 * when the relative decrease of the residual sum of squares and the step both fall below 1e-12.
 * Failures are reported, not hidden: `converged`, and `tauAtBound` when a time constant with a
 * non-zero amplitude ends on a bound. Bleaching fraction = 1 − fit(end)/fit(start).
 *
 * @param t - Sample times, s (finite, increasing).
 * @param y - Values (finite), same length, at least 6 samples.
 * @throws {TuningforkError} TF_SHAPE_MISMATCH, TF_NON_FINITE, TF_TOO_FEW_SAMPLES, TF_BAD_OPTION.
 * @example
 * ```ts
 * // F = .5 + .3e^(−t/100) + .2e^(−t/1000), t = 0 … 1799.9 s → (a, τ1, b, τ2, c) = (.3, 100, .2, 1000, .5)
 * const fit = fitExponentialDecay(t, F);
 * fit.fractionBleached; // 0.4669369116
 * ```
 *
 * References
 * - Golub, G. H. & Pereyra, V. (1973). The differentiation of pseudo-inverses and nonlinear least
 *   squares problems whose variables separate. SIAM J. Numer. Anal. 10(2):413–432. doi:10.1137/0710036
 * - Marquardt, D. W. (1963). An algorithm for least-squares estimation of nonlinear parameters.
 *   J. SIAM 11(2):431–441. doi:10.1137/0111030
 */
export function fitExponentialDecay(t: ArrayLike<number>, y: ArrayLike<number>, options: ExponentialFitOptions = {}): ExponentialFit {
  const fn = 'fitExponentialDecay';
  const opts = resolveOptions(fn, DEFAULTS, options);
  const tt = asF64(fn, 't', t);
  const yy = asF64(fn, 'y', y, tt.length);
  requireFinite(fn, 't', tt);
  requireFinite(fn, 'y', yy);
  const model = checkOneOf(fn, 'model', opts.model, ['double', 'single'] as const);
  const maxIt = checkInteger(fn, 'maxIterations', opts.maxIterations, 1);
  const gridSize = checkInteger(fn, 'gridSize', opts.gridSize, 4, 200);
  const m = tt.length;
  if (m < 6) throw new TuningforkError('TF_TOO_FEW_SAMPLES', `${fn}: need at least 6 samples, got ${m}.`, { fn, n: m });
  for (let i = 1; i < m; i++) {
    if (!(tt[i]! > tt[i - 1]!)) throw new TuningforkError('TF_IRREGULAR_SAMPLING', `${fn}: t must strictly increase; t[${i}] = ${tt[i]} follows ${tt[i - 1]}.`, { fn, index: i });
  }
  const origin = tt[0]!;
  const span = tt[m - 1]! - origin;
  const u = new Float64Array(m);
  for (let i = 0; i < m; i++) u[i] = tt[i]! - origin;
  const dtMed = span / (m - 1);
  const tauMin = opts.tauMinSec === null ? Math.max(3 * dtMed, span / 1e4) : checkPositive(fn, 'tauMinSec', opts.tauMinSec);
  const tauMax = opts.tauMaxSec === null ? 10 * span : checkPositive(fn, 'tauMaxSec', opts.tauMaxSec);
  if (!(tauMax > tauMin)) throw new TuningforkError('TF_BAD_OPTION', `${fn}: tauMaxSec (${tauMax}) must exceed tauMinSec (${tauMin}).`, { fn });
  const warnings: ResultWarning[] = [];
  const double = model === 'double';

  // 1. Variable projection on a log grid (on at most ~4000 points for speed).
  const gstep = Math.max(1, Math.floor(m / 4000));
  const gm = Math.ceil(m / gstep);
  const gu = new Float64Array(gm);
  const gy = new Float64Array(gm);
  for (let i = 0, j = 0; i < m; i += gstep, j++) {
    gu[j] = u[i]!;
    gy[j] = yy[i]!;
  }
  const taus = new Float64Array(gridSize);
  const basis: Float64Array[] = [];
  const sumE = new Float64Array(gridSize);
  const sumEy = new Float64Array(gridSize);
  let sy = 0;
  let syy = 0;
  for (let i = 0; i < gm; i++) {
    sy += gy[i]!;
    syy += gy[i]! * gy[i]!;
  }
  for (let g = 0; g < gridSize; g++) {
    const tau = tauMin * Math.pow(tauMax / tauMin, g / (gridSize - 1));
    taus[g] = tau;
    const e = new Float64Array(gm);
    let s1 = 0;
    let s2 = 0;
    for (let i = 0; i < gm; i++) {
      const v = Math.exp(-gu[i]! / tau);
      e[i] = v;
      s1 += v;
      s2 += v * gy[i]!;
    }
    basis.push(e);
    sumE[g] = s1;
    sumEy[g] = s2;
  }
  const selfDot = Float64Array.from(basis, (e) => dotN(e, e, gm));
  let bestRss = Infinity;
  let start = [0, tauMin, 0, tauMax, 0];
  for (let g1 = 0; g1 < gridSize; g1++) {
    if (!double) {
      const G = Float64Array.of(selfDot[g1]!, sumE[g1]!, sumE[g1]!, gm);
      const f = projectAmplitudes(1, G, Float64Array.of(sumEy[g1]!, sy), syy);
      if (f.rss < bestRss) {
        bestRss = f.rss;
        start = [f.coef[0]!, taus[g1]!, 0, NaN, f.coef[1]!];
      }
      continue;
    }
    for (let g2 = g1 + 1; g2 < gridSize; g2++) {
      const x12 = dotN(basis[g1]!, basis[g2]!, gm);
      const G = Float64Array.of(
        selfDot[g1]!, x12, sumE[g1]!,
        x12, selfDot[g2]!, sumE[g2]!,
        sumE[g1]!, sumE[g2]!, gm,
      );
      const f = projectAmplitudes(2, G, Float64Array.of(sumEy[g1]!, sumEy[g2]!, sy), syy);
      if (f.rss < bestRss) {
        bestRss = f.rss;
        start = [f.coef[0]!, taus[g1]!, f.coef[1]!, taus[g2]!, f.coef[2]!];
      }
    }
  }

  // 2. Levenberg–Marquardt on θ = (a, ln τ1, b, ln τ2, c) (single: (a, ln τ1, c)).
  const lnMin = Math.log(tauMin);
  const lnMax = Math.log(tauMax);
  const np = double ? 5 : 3;
  // Float64Arrays (not arrays) so the element kind never changes between calls: a change would
  // throw away this large function's optimised code.
  let theta = double
    ? Float64Array.of(start[0]!, Math.log(start[1]!), start[2]!, Math.log(start[3]!), start[4]!)
    : Float64Array.of(start[0]!, Math.log(start[1]!), start[4]!);
  const lower = double ? Float64Array.of(0, lnMin, 0, lnMin, -Infinity) : Float64Array.of(0, lnMin, -Infinity);
  const upper = double ? Float64Array.of(Infinity, lnMax, Infinity, lnMax, Infinity) : Float64Array.of(Infinity, lnMax, Infinity);
  // Current (e1, e2, res) and candidate buffers; swapped when a step is accepted.
  let e1 = new Float64Array(m);
  let e2 = new Float64Array(m);
  let res = new Float64Array(m);
  let c1 = new Float64Array(m);
  let c2 = new Float64Array(m);
  let cr = new Float64Array(m);
  const cost = (th: Float64Array, o1: Float64Array, o2: Float64Array, orr: Float64Array): number => modelCost(th, u, yy, m, double, o1, o2, orr);
  let f0 = cost(theta, e1, e2, res);
  let lambda = 1e-3;
  let it = 0;
  let converged = false;
  const JtJ = new Float64Array(np * np);
  const Jtr = new Float64Array(np);
  let yScale = 0;
  for (let i = 0; i < m; i++) yScale += yy[i]! * yy[i]!;
  while (it < maxIt) {
    it++;
    // Jacobian of the model (not the residual) at theta; e1, e2, res are current.
    normalEquations(u, e1, e2, res, theta[0]!, Math.exp(theta[1]!), double ? theta[2]! : 0, double ? Math.exp(theta[3]!) : 1, double, JtJ, Jtr);
    let improved = false;
    let stepSmall = false;
    for (let attempt = 0; attempt < 30; attempt++) {
      // Projected step: parameters on a bound whose step points outward are held fixed and the
      // step is re-solved for the others (an active-set Levenberg–Marquardt step).
      const free = new Array<boolean>(np).fill(true);
      let delta = new Float64Array(np);
      let singular = false;
      for (let pass = 0; pass < np; pass++) {
        const idx: number[] = [];
        for (let k = 0; k < np; k++) if (free[k]) idx.push(k);
        const kk = idx.length;
        if (kk === 0) break;
        const A = new Float64Array(kk * kk);
        const rhs = new Float64Array(kk);
        for (let i = 0; i < kk; i++) {
          rhs[i] = Jtr[idx[i]!]!;
          for (let j = 0; j < kk; j++) A[i * kk + j] = JtJ[idx[i]! * np + idx[j]!]!;
          A[i * kk + i] = JtJ[idx[i]! * np + idx[i]!]! * (1 + lambda) + 1e-300;
        }
        let sol: Float64Array;
        try {
          sol = solveLinear({ data: A, rows: kk, cols: kk }, rhs);
        } catch {
          singular = true;
          break;
        }
        delta = new Float64Array(np);
        idx.forEach((k, i) => { delta[k] = sol[i]!; });
        let changed = false;
        for (const k of idx) {
          const atLo = theta[k]! <= lower[k]! + 1e-12 * (1 + Math.abs(lower[k]!));
          const atHi = theta[k]! >= upper[k]! - 1e-12 * (1 + Math.abs(upper[k]!));
          if ((atLo && delta[k]! < 0) || (atHi && delta[k]! > 0)) {
            free[k] = false;
            changed = true;
          }
        }
        if (!changed) break;
      }
      if (singular) {
        lambda *= 10;
        continue;
      }
      const cand = theta.map((v, k) => Math.min(upper[k]!, Math.max(lower[k]!, v + delta[k]!)));
      let maxRel = 0;
      for (let k = 0; k < np; k++) maxRel = Math.max(maxRel, Math.abs(cand[k]! - theta[k]!) / (Math.abs(theta[k]!) + 1e-8));
      const f1 = cost(cand, c1, c2, cr);
      if (f1 <= f0) {
        [e1, c1] = [c1, e1];
        [e2, c2] = [c2, e2];
        [res, cr] = [cr, res];
        const rel = (f0 - f1) / Math.max(f0, 1e-300);
        theta = cand;
        improved = true;
        lambda = Math.max(lambda / 3, 1e-12);
        // Converged: a negligible step, a negligible decrease of the cost (a plateau, as along the
        // flat valley of a slow time constant that the span cannot resolve), or an exact fit.
        if ((rel < 1e-12 && maxRel < 1e-8) || maxRel < 1e-12 || rel < 1e-14 || f1 <= 1e-28 * yScale) stepSmall = true;
        f0 = f1;
        break;
      }
      lambda *= 4;
      if (maxRel < 1e-13) {
        stepSmall = true;
        break;
      }
    }
    if (stepSmall || !improved) {
      converged = stepSmall || f0 <= 1e-28 * yScale;
      if (!improved && !converged) {
        // No step reduces the cost at any damping: a (possibly bounded) minimum.
        converged = true;
      }
      break;
    }
  }
  let a = theta[0]!;
  let tau1 = Math.exp(theta[1]!);
  let b = double ? theta[2]! : 0;
  let tau2 = double ? Math.exp(theta[3]!) : NaN;
  const c = double ? theta[4]! : theta[2]!;
  if (double && tau1 > tau2) {
    [a, b] = [b, a];
    [tau1, tau2] = [tau2, tau1];
  }
  const atBound = (tau: number, amp: number): boolean => amp > 0 && (Math.abs(Math.log(tau) - lnMin) < 1e-6 || Math.abs(Math.log(tau) - lnMax) < 1e-6);
  const tauAtBound = atBound(tau1, a) || (double && atBound(tau2, b));
  if (tauAtBound) warnings.push({ code: 'TAU_AT_BOUND', message: `${fn}: a time constant ended on its bound [${tauMin}, ${tauMax}] s; the decay is not resolved by these data.`, details: { tau1, tau2, tauMin, tauMax } });
  if (double && (a === 0 || b === 0)) warnings.push({ code: 'ONE_EXPONENTIAL', message: `${fn}: one amplitude is 0; a single exponential describes these data and its partner time constant is arbitrary.` });
  if (!converged) warnings.push({ code: 'NOT_CONVERGED', message: `${fn}: Levenberg–Marquardt stopped after ${it} iterations without meeting its tolerance.` });
  const fit = { model, a, tau1, b, tau2, c, originSec: origin };
  const fEnd = evaluateExponential(fit, tt[m - 1]!);
  const fStart = evaluateExponential(fit, origin);
  return {
    ...fit,
    fractionBleached: 1 - fEnd / fStart,
    rmse: Math.sqrt(f0 / m),
    iterations: it,
    converged,
    tauAtBound,
    bounds: { tauMinSec: tauMin, tauMaxSec: tauMax },
    warnings,
  };
}

/** Kernels of the exponential-decay fit: amplitude projection and normal equations. */
import { solveLinear } from '../linalg/solve-linear.js';

export interface LinearFit { coef: number[]; rss: number }

/**
 * Non-negative least squares of y on p basis columns plus a constant, from the Gram matrix G
 * ((p+1) × (p+1), constant last), r = [basisᵀy, Σy] and yy = yᵀy, by enumerating the active sets
 * (p ≤ 2, so at most 4 small systems).
 */
export function projectAmplitudes(p: number, G: Float64Array, r: Float64Array, yy: number): LinearFit {
  const q = p + 1;
  let best: LinearFit = { coef: [], rss: Infinity };
  for (let mask = (1 << p) - 1; mask >= 0; mask--) {
    const idx: number[] = [];
    for (let a = 0; a < p; a++) if (mask & (1 << a)) idx.push(a);
    idx.push(p);
    const k = idx.length;
    const A = new Float64Array(k * k);
    const rhs = new Float64Array(k);
    for (let i = 0; i < k; i++) {
      rhs[i] = r[idx[i]!]!;
      for (let j = 0; j < k; j++) A[i * k + j] = G[idx[i]! * q + idx[j]!]!;
    }
    let sol: Float64Array;
    try {
      sol = solveLinear({ data: A, rows: k, cols: k }, rhs);
    } catch {
      continue;
    }
    if (idx.some((v, i) => v < p && !(sol[i]! >= 0))) continue;
    const coef = new Array<number>(q).fill(0);
    idx.forEach((v, i) => { coef[v] = sol[i]!; });
    let rss = yy;
    for (let i = 0; i < q; i++) {
      rss -= 2 * coef[i]! * r[i]!;
      for (let j = 0; j < q; j++) rss += coef[i]! * coef[j]! * G[i * q + j]!;
    }
    if (rss < best.rss) best = { coef, rss };
  }
  return best;
}

/**
 * JᵀJ and Jᵀr of the decay model at (A, τ1, B, τ2) for parameters (a, ln τ1, b, ln τ2, c), or
 * (a, ln τ1, c) for a single exponential. Kept small and monomorphic for the JIT.
 */
export function normalEquations(
  u: Float64Array, e1: Float64Array, e2: Float64Array, res: Float64Array,
  A: number, t1: number, B: number, t2: number, double: boolean, JtJ: Float64Array, Jtr: Float64Array,
): void {
  const np = double ? 5 : 3;
  const s = new Float64Array(15); // upper triangle of a 5 × 5 symmetric matrix
  let g0 = 0, g1 = 0, g2 = 0, g3 = 0, g4 = 0;
  const m = u.length;
  const i1 = 1 / t1;
  const i2 = 1 / t2;
  if (double) {
    let s00 = 0, s01 = 0, s02 = 0, s03 = 0, s04 = 0, s11 = 0, s12 = 0, s13 = 0, s14 = 0;
    let s22 = 0, s23 = 0, s24 = 0, s33 = 0, s34 = 0, s44 = 0;
    for (let i = 0; i < m; i++) {
      const j0 = e1[i]!;
      const j1 = A * j0 * u[i]! * i1;
      const j2 = e2[i]!;
      const j3 = B * j2 * u[i]! * i2;
      const r = res[i]!;
      g0 += j0 * r; g1 += j1 * r; g2 += j2 * r; g3 += j3 * r; g4 += r;
      s00 += j0 * j0; s01 += j0 * j1; s02 += j0 * j2; s03 += j0 * j3; s04 += j0;
      s11 += j1 * j1; s12 += j1 * j2; s13 += j1 * j3; s14 += j1;
      s22 += j2 * j2; s23 += j2 * j3; s24 += j2;
      s33 += j3 * j3; s34 += j3;
      s44 += 1;
    }
    s.set([s00, s01, s02, s03, s04, s11, s12, s13, s14, s22, s23, s24, s33, s34, s44]);
  } else {
    let s00 = 0, s01 = 0, s02 = 0, s11 = 0, s12 = 0, s22 = 0;
    for (let i = 0; i < m; i++) {
      const j0 = e1[i]!;
      const j1 = A * j0 * u[i]! * i1;
      const r = res[i]!;
      g0 += j0 * r; g1 += j1 * r; g2 += r;
      s00 += j0 * j0; s01 += j0 * j1; s02 += j0;
      s11 += j1 * j1; s12 += j1;
      s22 += 1;
    }
    s.set([s00, s01, s02, s11, s12, s22]);
  }
  const g = [g0, g1, g2, g3, g4];
  let k = 0;
  for (let a = 0; a < np; a++) {
    Jtr[a] = g[a]!;
    for (let b = a; b < np; b++) {
      JtJ[a * np + b] = s[k]!;
      JtJ[b * np + a] = s[k]!;
      k++;
    }
  }
}


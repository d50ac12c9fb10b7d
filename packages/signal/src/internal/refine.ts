/**
 * Iterative refinement of a linear solve with residuals computed in doubled precision
 * (Ogita, Rump & Oishi 2005, "Accurate sum and dot product", SIAM J. Sci. Comput. 26(6):1955–1988,
 * doi:10.1137/030601818: TwoSum and Dekker's TwoProduct). Used where the system is
 * ill-conditioned but small (steady-state filter states of high-order transfer functions).
 */
import { solveLinear } from '../linalg/solve-linear.js';

const SPLIT = 134217729; // 2^27 + 1

function twoProduct(a: number, b: number): [number, number] {
  const p = a * b;
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  const e = al * bl - (((p - ah * bh) - al * bh) - ah * bl);
  return [p, e];
}

/** r = b − A·x, accurate to about twice the working precision. */
function residual(A: Float64Array, n: number, x: Float64Array, b: ArrayLike<number>): Float64Array {
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i]!;
    let c = 0;
    for (let j = 0; j < n; j++) {
      const [p, e] = twoProduct(-A[i * n + j]!, x[j]!);
      const t = s + p;
      const z = t - s;
      c += (s - (t - z)) + (p - z) + e;
      s = t;
    }
    r[i] = s + c;
  }
  return r;
}

/** Solve A·x = b (n × n, row-major) by LU with partial pivoting plus `steps` refinement steps. */
export function solveRefined(A: Float64Array, n: number, b: ArrayLike<number>, steps = 3): Float64Array {
  const M = { data: A, rows: n, cols: n };
  const x = solveLinear(M, b);
  for (let k = 0; k < steps; k++) {
    const r = residual(A, n, x, b);
    const d = solveLinear(M, r);
    let change = 0;
    for (let i = 0; i < n; i++) {
      x[i] = x[i]! + d[i]!;
      change = Math.max(change, Math.abs(d[i]!) / (Math.abs(x[i]!) + 1e-300));
    }
    if (change < 1e-17) break;
  }
  return x;
}

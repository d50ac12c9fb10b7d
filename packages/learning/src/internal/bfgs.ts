// BFGS quasi-Newton minimiser with a strong-Wolfe line search (Nocedal & Wright 2006, Algorithms
// 6.1, 3.5 and 3.6; approximate-Wolfe acceptance of Hager & Zhang 2005, SIAM J. Optim. 16(1):170–192,
// doi:10.1137/030601880). The objective fills the gradient and may return NaN/±Infinity, which the line
// search treats as "too far" and backs off from.

/** f(x), writing ∇f(x) into g. */
export type Objective = (x: Float64Array, g: Float64Array) => number;

export interface BfgsSettings {
  /** Stop when max |∂f/∂x_i| ≤ gtol. */
  readonly gtol: number;
  readonly maxIterations: number;
  /** Largest first trial step along the search direction (max-norm, x units). */
  readonly maxStep: number;
}

export type BfgsStop = 'gradient' | 'max-iterations' | 'line-search' | 'non-finite-start';

export interface BfgsOutcome {
  readonly x: Float64Array;
  readonly f: number;
  readonly g: Float64Array;
  readonly iterations: number;
  readonly evaluations: number;
  readonly converged: boolean;
  readonly stop: BfgsStop;
}

const C1 = 1e-4;
const C2 = 0.9;

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i]! * b[i]!;
  return s;
}
function normInf(a: Float64Array): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]!));
  return m;
}

interface Probe {
  a: number;
  f: number;
  d: number;
  g: Float64Array;
}

/** Minimise `fun` from `x0`. */
export function bfgs(fun: Objective, x0: Float64Array, settings: BfgsSettings): BfgsOutcome {
  const n = x0.length;
  let evaluations = 0;
  const x = Float64Array.from(x0);
  let g: Float64Array = new Float64Array(n);
  let f = fun(x, g);
  evaluations++;
  if (!Number.isFinite(f) || !g.every(Number.isFinite)) {
    return { x, f, g, iterations: 0, evaluations, converged: false, stop: 'non-finite-start' };
  }
  const h = new Float64Array(n * n);
  const resetH = (scale: number) => {
    h.fill(0);
    for (let i = 0; i < n; i++) h[i * n + i] = scale;
  };
  resetH(1);
  let identity = true;
  const p = new Float64Array(n);
  const xt = new Float64Array(n);
  const s = new Float64Array(n);
  const y = new Float64Array(n);
  const hy = new Float64Array(n);

  const probe = (a: number): Probe => {
    for (let i = 0; i < n; i++) xt[i] = x[i]! + a * p[i]!;
    const gt = new Float64Array(n);
    const ft = fun(xt, gt);
    evaluations++;
    const ok = Number.isFinite(ft) && gt.every(Number.isFinite);
    return { a, f: ok ? ft : Infinity, d: ok ? dot(gt, p) : NaN, g: gt };
  };

  const interpolate = (lo: Probe, hi: Probe): number => {
    const a0 = lo.a;
    const a1 = hi.a;
    if (Number.isFinite(hi.f) && Number.isFinite(hi.d)) {
      const d1 = lo.d + hi.d - (3 * (lo.f - hi.f)) / (a0 - a1);
      const rad = d1 * d1 - lo.d * hi.d;
      if (rad >= 0) {
        const d2 = Math.sign(a1 - a0) * Math.sqrt(rad);
        const a = a1 - ((a1 - a0) * (hi.d + d2 - d1)) / (hi.d - lo.d + 2 * d2);
        const left = Math.min(a0, a1);
        const w = Math.abs(a1 - a0);
        if (Number.isFinite(a) && a > left + 0.1 * w && a < left + 0.9 * w) return a;
      }
    }
    return 0.5 * (a0 + a1);
  };

  // Strong-Wolfe line search; returns the accepted probe or null. Sufficient decrease is the Armijo
  // rule, or — once f changes only at rounding level near the optimum — Hager & Zhang's (2005)
  // approximate-Wolfe rule φ(α) ≤ φ(0) + ε|φ(0)| with φ'(α) ≤ (2c1 − 1)φ'(0), which relies on the
  // (exact) gradient instead of f differences lost to rounding.
  const lineSearch = (f0: number, d0: number, a1: number, aMax: number): Probe | null => {
    const epsF = 1e-11 * (1 + Math.abs(f0));
    const decreases = (t: Probe): boolean => t.f <= f0 + C1 * t.a * d0 || (t.f <= f0 + epsF && t.d <= (2 * C1 - 1) * d0);
    const zoom = (lo: Probe, hi: Probe): Probe | null => {
      for (let j = 0; j < 40; j++) {
        const a = interpolate(lo, hi);
        const t = probe(a);
        if (!decreases(t) || (t.f >= lo.f && !(t.f <= lo.f + epsF && Math.abs(t.d) < Math.abs(lo.d)))) {
          hi = t;
        } else {
          if (Math.abs(t.d) <= -C2 * d0) return t;
          if (t.d * (hi.a - lo.a) >= 0) hi = lo;
          lo = t;
        }
        if (Math.abs(hi.a - lo.a) <= 1e-14 * Math.max(1, Math.abs(lo.a))) break;
      }
      return lo.a > 0 ? lo : null; // sufficient decrease holds at lo
    };
    let prev: Probe = { a: 0, f: f0, d: d0, g };
    let a = a1;
    for (let i = 0; i < 30; i++) {
      const t = probe(a);
      if (!decreases(t) || (i > 0 && t.f >= prev.f && !(t.f <= prev.f + epsF && t.d < 0))) return zoom(prev, t);
      if (Math.abs(t.d) <= -C2 * d0) return t;
      if (t.d >= 0) return zoom(t, prev);
      prev = t;
      if (a >= aMax) return t;
      a = Math.min(2 * a, aMax);
    }
    return prev.a > 0 ? prev : null;
  };

  let iterations = 0;
  let stop: BfgsStop = 'max-iterations';
  while (iterations < settings.maxIterations) {
    if (normInf(g) <= settings.gtol) {
      stop = 'gradient';
      break;
    }
    for (let i = 0; i < n; i++) {
      let v = 0;
      for (let j = 0; j < n; j++) v -= h[i * n + j]! * g[j]!;
      p[i] = v;
    }
    let d0 = dot(p, g);
    if (!(d0 < 0)) {
      resetH(1);
      identity = true;
      for (let i = 0; i < n; i++) p[i] = -g[i]!;
      d0 = dot(p, g);
    }
    const pn = normInf(p);
    const a1 = Math.min(1, settings.maxStep / pn);
    let acc = lineSearch(f, d0, a1, Math.max(a1, (10 * settings.maxStep) / pn));
    if (acc === null && !identity) {
      // Retry once along steepest descent with a fresh Hessian approximation.
      resetH(1);
      identity = true;
      for (let i = 0; i < n; i++) p[i] = -g[i]!;
      const pn2 = normInf(p);
      const b1 = Math.min(1, settings.maxStep / pn2);
      acc = lineSearch(f, dot(p, g), b1, Math.max(b1, (10 * settings.maxStep) / pn2));
    }
    if (acc === null) {
      stop = 'line-search';
      break;
    }
    iterations++;
    for (let i = 0; i < n; i++) {
      s[i] = acc.a * p[i]!;
      y[i] = acc.g[i]! - g[i]!;
      x[i] = x[i]! + s[i]!;
    }
    const fPrev = f;
    f = acc.f;
    g = acc.g;
    const sy = dot(s, y);
    if (sy > 1e-12 * Math.sqrt(dot(s, s) * dot(y, y))) {
      if (identity) {
        resetH(sy / dot(y, y)); // Nocedal & Wright eq. 6.20
        identity = false;
      }
      const rho = 1 / sy;
      for (let i = 0; i < n; i++) {
        let v = 0;
        for (let j = 0; j < n; j++) v += h[i * n + j]! * y[j]!;
        hy[i] = v;
      }
      const yhy = dot(y, hy);
      const coef = rho * rho * yhy + rho;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) {
          h[i * n + j] = h[i * n + j]! - rho * (hy[i]! * s[j]! + s[i]! * hy[j]!) + coef * s[i]! * s[j]!;
        }
      }
    }
    if (fPrev - f <= 1e-16 * Math.max(1, Math.abs(f)) && normInf(s) <= 1e-14 * Math.max(1, normInf(x))) {
      stop = normInf(g) <= settings.gtol ? 'gradient' : 'line-search';
      break;
    }
  }
  if (stop === 'max-iterations' && normInf(g) <= settings.gtol) stop = 'gradient';
  return { x, f, g, iterations, evaluations, converged: stop === 'gradient', stop };
}

/** Small dense helpers on row-major square matrices (internal kernels; inputs trusted). */

/** out = Vᵀ·x for an n × n V (columns are vectors). */
export function multTransVec(v: Float64Array, n: number, x: Float64Array, out: Float64Array): Float64Array {
  out.fill(0, 0, n);
  for (let i = 0; i < n; i++) {
    const xi = x[i]!;
    if (xi === 0) continue;
    const row = i * n;
    for (let k = 0; k < n; k++) out[k] = out[k]! + v[row + k]! * xi;
  }
  return out;
}

/** out = V·x for an n × n V. */
export function multVec(v: Float64Array, n: number, x: Float64Array, out: Float64Array): Float64Array {
  for (let i = 0; i < n; i++) {
    const row = i * n;
    let s = 0;
    for (let k = 0; k < n; k++) s += v[row + k]! * x[k]!;
    out[i] = s;
  }
  return out;
}

/** Vᵀ·A·V for symmetric A (n × n); returns a new n × n matrix. */
export function congruence(v: Float64Array, a: Float64Array, n: number): Float64Array {
  const av = new Float64Array(n * n); // A·V
  for (let i = 0; i < n; i++) {
    const ar = i * n;
    for (let k = 0; k < n; k++) {
      const aik = a[ar + k]!;
      if (aik === 0) continue;
      const vr = k * n;
      for (let j = 0; j < n; j++) av[ar + j] = av[ar + j]! + aik * v[vr + j]!;
    }
  }
  const out = new Float64Array(n * n);
  for (let k = 0; k < n; k++) {
    const vr = k * n;
    for (let i = 0; i < n; i++) {
      const vki = v[vr + i]!;
      if (vki === 0) continue;
      const or = i * n;
      for (let j = 0; j < n; j++) out[or + j] = out[or + j]! + vki * av[vr + j]!;
    }
  }
  // symmetrise against rounding
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) {
    const m = 0.5 * (out[i * n + j]! + out[j * n + i]!);
    out[i * n + j] = m;
    out[j * n + i] = m;
  }
  return out;
}

/** xᵀ·A·x for symmetric n × n A. */
export function quadForm(a: Float64Array, n: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const xi = x[i]!;
    if (xi === 0) continue;
    const row = i * n;
    let t = 0;
    for (let j = 0; j < n; j++) t += a[row + j]! * x[j]!;
    s += xi * t;
  }
  return s;
}

/** Binary search: index s with cuts[s] === row (cuts sorted, row present). */
export function cutIndex(cuts: Int32Array, row: number): number {
  let lo = 0;
  let hi = cuts.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (cuts[mid]! < row) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

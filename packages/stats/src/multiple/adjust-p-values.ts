import { checkOneOf, checkRange, resolveOptions, toFloat64, TuningforkError } from '@tuningfork/core';

export type AdjustMethod = 'bh' | 'by' | 'holm';

export interface AdjustPValuesOptions {
  /**
   * 'bh' Benjamini–Hochberg FDR (independent or positively dependent tests), 'by'
   * Benjamini–Yekutieli FDR (any dependence), 'holm' Holm FWER. @defaultValue 'bh'
   */
  method?: AdjustMethod;
}

const DEFAULTS = Object.freeze({ method: 'bh' as AdjustMethod });

/**
 * Adjusted p-values for multiple comparisons, in input order.
 *
 * NaN entries stay NaN and are excluded from m (the number of tests). Sorting is stable, so
 * tied p-values keep their input order (their adjusted values are equal anyway).
 * - BH: q₍ᵢ₎ = min_{j ≥ i} min(1, p₍ⱼ₎·(m/j)); reject where q ≤ level.
 * - BY: the BH values times c(m) = Σ_{i=1..m} 1/i, capped at 1.
 * - Holm: h₍ᵢ₎ = max_{j ≤ i} min(1, (m − j + 1)·p₍ⱼ₎).
 * The BH/BY arithmetic follows scipy.stats.false_discovery_control (p·(m/i), then ·c(m)), so
 * values agree with it to the last bit.
 *
 * @param p - Raw p-values in [0, 1] (NaN allowed).
 * @returns Adjusted values, same length and order as `p`.
 * @throws {TuningforkError} TF_BAD_VALUE when a p-value is outside [0, 1] or ±∞ (index given);
 *   TF_BAD_OPTION, TF_UNKNOWN_OPTION.
 *
 * @example
 * adjustPValues([0.01, 0.04, 0.03], { method: 'bh' }); // Float64Array [0.03, 0.04, 0.04]
 *
 * References
 * - Benjamini, Y. & Hochberg, Y. (1995). Controlling the false discovery rate: a practical and
 *   powerful approach to multiple testing. Journal of the Royal Statistical Society B 57(1):289–300.
 *   doi:10.1111/j.2517-6161.1995.tb02031.x
 * - Benjamini, Y. & Yekutieli, D. (2001). The control of the false discovery rate in multiple
 *   testing under dependency. Annals of Statistics 29(4):1165–1188. doi:10.1214/aos/1013699998
 * - Holm, S. (1979). A simple sequentially rejective multiple test procedure. Scandinavian Journal
 *   of Statistics 6(2):65–70.
 */
export function adjustPValues(p: ArrayLike<number>, options: AdjustPValuesOptions = {}): Float64Array {
  const fn = 'adjustPValues';
  const o = resolveOptions(fn, DEFAULTS, options);
  const method = checkOneOf(fn, 'method', o.method, ['bh', 'by', 'holm'] as const);
  const x = toFloat64(p);
  const order = sortedFinite(fn, x);
  const m = order.length;
  const out = new Float64Array(x.length).fill(NaN);
  if (m === 0) return out;
  const v = new Float64Array(m);
  if (method === 'holm') {
    let running = 0;
    for (let k = 0; k < m; k++) {
      const val = Math.min(1, (m - k) * x[order[k]!]!);
      if (val > running) running = val;
      v[k] = running;
    }
  } else {
    for (let k = 0; k < m; k++) v[k] = x[order[k]!]! * (m / (k + 1));
    if (method === 'by') {
      const inv = new Float64Array(m);
      for (let i = 0; i < m; i++) inv[i] = 1 / (i + 1);
      const c = pairwiseSum(inv, 0, m);
      for (let k = 0; k < m; k++) v[k]! *= c;
    }
    for (let k = m - 2; k >= 0; k--) if (v[k + 1]! < v[k]!) v[k] = v[k + 1]!;
    for (let k = 0; k < m; k++) v[k] = Math.min(1, Math.max(0, v[k]!));
  }
  for (let k = 0; k < m; k++) out[order[k]!] = v[k]!;
  return out;
}

/**
 * numpy's pairwise summation (blocks of 8 partial sums up to 128 values, halving above), so
 * c(m) = Σ1/i has the same rounding as scipy's `xp.sum(1 / i)`.
 */
function pairwiseSum(a: Float64Array, start: number, n: number): number {
  if (n < 8) {
    let r = 0;
    for (let i = 0; i < n; i++) r += a[start + i]!;
    return r;
  }
  if (n <= 128) {
    const r = new Float64Array(8);
    for (let j = 0; j < 8; j++) r[j] = a[start + j]!;
    let i = 8;
    for (; i < n - (n % 8); i += 8) for (let j = 0; j < 8; j++) r[j]! += a[start + i + j]!;
    let res = ((r[0]! + r[1]!) + (r[2]! + r[3]!)) + ((r[4]! + r[5]!) + (r[6]! + r[7]!));
    for (; i < n; i++) res += a[start + i]!;
    return res;
  }
  let n2 = Math.floor(n / 2);
  n2 -= n2 % 8;
  return pairwiseSum(a, start, n2) + pairwiseSum(a, start + n2, n - n2);
}

/** Indices of the non-NaN p-values sorted by value, stable. @throws TF_BAD_VALUE */
function sortedFinite(fn: string, x: Float64Array): Uint32Array {
  let m = 0;
  for (let i = 0; i < x.length; i++) {
    const v = x[i]!;
    if (v !== v) continue;
    if (!(v >= 0 && v <= 1)) {
      throw new TuningforkError('TF_BAD_VALUE', `${fn}: p-values must lie in [0, 1] (or be NaN for a missing test); index ${i} is ${v}.`, { fn, index: i, value: v });
    }
    m++;
  }
  const idx = new Uint32Array(m);
  let k = 0;
  for (let i = 0; i < x.length; i++) if (x[i] === x[i]) idx[k++] = i;
  // Array.prototype.sort is stable (ES2019); ties keep input order.
  return Uint32Array.from(Array.from(idx).sort((a, b) => x[a]! - x[b]!));
}

export interface RejectHypothesesOptions extends AdjustPValuesOptions {
  /** FDR level q (BH, BY) or family-wise α (Holm). @defaultValue 0.05 */
  level?: number;
}

/** Result of `rejectHypotheses`. */
export interface RejectionResult {
  /** 1 where the hypothesis is rejected, 0 otherwise (also 0 for NaN), input order. */
  readonly rejected: Uint8Array;
  readonly count: number;
  /** The adjusted p-values, input order. */
  readonly adjusted: Float64Array;
  readonly method: AdjustMethod;
  readonly level: number;
  /** Tests counted in m (non-NaN p-values). */
  readonly tests: number;
}

/**
 * Which hypotheses to reject at FDR level q (BH, BY) or FWER α (Holm): those whose adjusted
 * p-value is ≤ `level`. For BH this is the step-up rule "reject p₍₁₎..p₍ₖ₎ for the largest k with
 * p₍ₖ₎ ≤ k·q/m" of Benjamini & Hochberg (1995).
 *
 * @throws {TuningforkError} as `adjustPValues`; TF_BAD_OPTION for a level outside [0, 1].
 *
 * References
 * - Benjamini, Y. & Hochberg, Y. (1995). Journal of the Royal Statistical Society B 57(1):289–300.
 *   doi:10.1111/j.2517-6161.1995.tb02031.x
 */
export function rejectHypotheses(p: ArrayLike<number>, options: RejectHypothesesOptions = {}): RejectionResult {
  const fn = 'rejectHypotheses';
  const { level = 0.05, ...rest } = options;
  checkRange(fn, 'level', level, 0, 1);
  const method = rest.method ?? 'bh';
  const adjusted = adjustPValues(p, rest);
  const rejected = new Uint8Array(adjusted.length);
  let count = 0;
  let tests = 0;
  for (let i = 0; i < adjusted.length; i++) {
    const a = adjusted[i]!;
    if (a === a) tests++;
    if (a <= level) { rejected[i] = 1; count++; }
  }
  return { rejected, count, adjusted, method, level, tests };
}

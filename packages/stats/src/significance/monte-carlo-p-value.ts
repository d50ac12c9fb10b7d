import { checkInteger, TuningforkError } from '@tuningfork/core';

/**
 * Monte Carlo p-value (b + 1)/(m + 1) from b null statistics at least as extreme as the
 * observed one among m random permutations (or resamples). Counting the observed labelling as
 * one of the permutations keeps the test exact in size and the p-value never 0.
 *
 * @param exceedances - b, an integer in [0, m].
 * @param permutations - m, an integer ≥ 1.
 * @throws {TuningforkError} TF_BAD_OPTION when b or m is not an integer, m < 1, or b > m.
 *
 * @example
 * monteCarloPValue(0, 999); // 0.001
 *
 * References
 * - Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero: calculating exact
 *   p-values when permutations are randomly drawn. Statistical Applications in Genetics and
 *   Molecular Biology 9(1):39. doi:10.2202/1544-6115.1585
 */
export function monteCarloPValue(exceedances: number, permutations: number): number {
  const fn = 'monteCarloPValue';
  const m = checkInteger(fn, 'permutations', permutations, 1);
  const b = checkInteger(fn, 'exceedances', exceedances, 0);
  if (b > m) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: exceedances (${b}) cannot exceed permutations (${m}).`, { fn, exceedances: b, permutations: m });
  }
  return (b + 1) / (m + 1);
}

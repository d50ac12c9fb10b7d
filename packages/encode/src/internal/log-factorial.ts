/**
 * log Γ(y + 1) for a count y ≥ 0: log y! for integers, its continuous extension otherwise.
 *
 * Integers below 256 sum log i exactly as before (same bits); everything else uses the Stirling
 * series of log Γ(z), z = y + 1, after raising z to at least 16 by Γ(z) = Γ(z + m)/∏(z + i),
 * so the cost no longer grows with the count (a loop to 10⁹ per bin took minutes) and
 * non-integer counts are no longer truncated to ⌊y⌋!. Series truncated after the z⁻⁹ term: the
 * next term is 691/(360360·z¹¹) < 2·10⁻¹⁶ for z ≥ 16 (Abramowitz & Stegun 1964, 6.1.40).
 */
export function logFactorial(y: number): number {
  if (y < 256 && y === Math.floor(y)) {
    let s = 0;
    for (let i = 2; i <= y; i++) s += Math.log(i);
    return s;
  }
  let z = y + 1;
  let shift = 0;
  if (z < 16) {
    let prod = 1;
    while (z < 16) {
      prod *= z;
      z += 1;
    }
    shift = Math.log(prod);
  }
  const r = 1 / z;
  const r2 = r * r;
  const series = r * (1 / 12 - r2 * (1 / 360 - r2 * (1 / 1260 - r2 * (1 / 1680 - r2 / 1188))));
  return (z - 0.5) * Math.log(z) - z + 0.5 * Math.log(2 * Math.PI) + series - shift;
}

const MINUS = '\u2212';
const SUPERSCRIPT: Readonly<Record<string, string>> = {
  '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻',
};

/** Integer exponent written in Unicode superscript digits, e.g. -5 → '⁻⁵'. */
export function superscript(n: number): string {
  let out = '';
  for (const ch of String(n)) out += SUPERSCRIPT[ch] ?? ch;
  return out;
}

/**
 * Format an axis tick value given the tick step, with just enough decimals to tell ticks apart.
 *
 * A step of 1, 2 or 5 × 10^k with k < 0 gives −k decimals; k ≥ 0 gives none. Values of magnitude
 * ≥ 10⁶, or steps below 10⁻⁵, are written as mantissa × 10ⁿ. Negative numbers use the typographic
 * minus (U+2212). −0 prints as 0.
 *
 * @param value - The tick value.
 * @param step - Distance between neighbouring ticks (> 0); NaN formats with up to 6 significant digits.
 * @returns Display text, e.g. formatTick(-0.5, 0.25) → '−0.50'.
 */
export function formatTick(value: number, step: number): string {
  if (!Number.isFinite(value)) return Number.isNaN(value) ? '—' : value > 0 ? '∞' : `${MINUS}∞`;
  if (value === 0) return '0';
  if (!(step > 0) || !Number.isFinite(step)) return formatNumber(value, { significant: 6 });
  const e = Math.floor(Math.log10(step) + 1e-9);
  const big = Math.abs(value) >= 1e6;
  if (big || e < -5) {
    const exp = Math.floor(Math.log10(Math.abs(value)) + 1e-9);
    const mant = value / 10 ** exp;
    const mantDecimals = Math.max(0, Math.min(6, exp - e));
    const m = mant.toFixed(mantDecimals);
    const mText = m === '1' || m === '1.0' ? '' : `${m.replace('-', MINUS)}×`;
    return `${mText}10${superscript(exp)}`;
  }
  const decimals = Math.max(0, -e);
  return value.toFixed(decimals).replace('-', MINUS);
}

/** Options of formatNumber. */
export interface FormatNumberOptions {
  /** Fixed number of decimals; takes precedence over `significant`. */
  decimals?: number;
  /** Significant digits when `decimals` is not given. @defaultValue 3 */
  significant?: number;
}

/**
 * Format a number for tables and labels: fixed decimals or significant digits, typographic minus,
 * exponent form (`1.2×10⁻⁶`) outside [10⁻⁴, 10⁶), and '—' for NaN. Never rounds to a misleading 0:
 * a non-zero value smaller than the last shown digit is written in exponent form.
 *
 * @param value - Any number.
 * @param options - `decimals` or `significant` (default 3 significant digits).
 * @returns Display text, e.g. formatNumber(0.012345) → '0.0123'.
 */
export function formatNumber(value: number, options: FormatNumberOptions = {}): string {
  if (Number.isNaN(value)) return '—';
  if (!Number.isFinite(value)) return value > 0 ? '∞' : `${MINUS}∞`;
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (options.decimals !== undefined) {
    const d = Math.max(0, Math.min(20, Math.floor(options.decimals)));
    const t = value.toFixed(d);
    if (Number(t) === 0) return expForm(value, 2);
    return t.replace('-', MINUS);
  }
  const sig = Math.max(1, Math.min(17, Math.floor(options.significant ?? 3)));
  if (abs < 1e-4 || abs >= 1e6) return expForm(value, sig);
  let t = value.toPrecision(sig);
  if (t.includes('e')) t = String(Number(t));
  return t.replace('-', MINUS);
}

function expForm(value: number, sig: number): string {
  const [m, e] = value.toExponential(Math.max(0, sig - 1)).split('e');
  return `${(m ?? '').replace('-', MINUS)}×10${superscript(Number(e))}`;
}

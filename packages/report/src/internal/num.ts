/** Pixel coordinate as short text: rounded to 0.1 px, no "-0". */
export function px(v: number): string {
  const r = Math.round(v * 10) / 10;
  return r === 0 ? '0' : String(r);
}

/** A finite number rendered with up to 6 significant digits (for attributes such as data-value). */
export function attrNumber(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  return String(Number(v.toPrecision(12)));
}

/** Approximate rendered width of text in px for a sans-serif face (wide faces such as DejaVu Sans). */
export function textWidth(text: string, fontSize: number): number {
  let w = 0;
  for (const ch of text) {
    if ('il.,:;|!\'()[] ·'.includes(ch)) w += 0.34;
    else if (/[A-Z]/.test(ch) || 'mwMW%ΔΔ'.includes(ch)) w += 0.78;
    else if (/[0-9]/.test(ch)) w += 0.64;
    else w += 0.6;
  }
  return w * fontSize;
}

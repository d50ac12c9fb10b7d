import { byClass, descendants, type XmlElement } from './xml.js';

/**
 * The affine map value → pixel that an axis shows, read back from its tick labels (data-value and
 * x or y position). Throws when the ticks are not collinear within 0.06 px (coordinates are written
 * to 0.1 px, so a tick may be off by 0.05 px).
 */
export function axisMap(root: XmlElement, side: 'left' | 'bottom' | 'right' | 'top', index = 0): { map: (v: number) => number; ticks: number[] } {
  const axes = byClass(root, `axis-${side}`);
  const axis = axes[index];
  if (!axis) throw new Error(`no axis-${side} #${index}`);
  const texts = descendants(axis, (e) => e.name === 'text' && e.attrs.has('data-value'));
  const coord = side === 'left' || side === 'right' ? 'y' : 'x';
  const pts = texts.map((t) => [Number(t.attrs.get('data-value')), Number(t.attrs.get(coord))] as const);
  if (pts.length < 2) throw new Error(`axis-${side} has fewer than 2 labelled ticks`);
  const [v0, p0] = pts[0]!;
  const [v1, p1] = pts[pts.length - 1]!;
  const b = (p1 - p0) / (v1 - v0);
  const map = (v: number) => p0 + (v - v0) * b;
  for (const [v, p] of pts) if (Math.abs(map(v) - p) > 0.11) throw new Error(`axis-${side} ticks not collinear at ${v}: ${p} vs ${map(v)}`);
  return { map, ticks: pts.map((p) => p[0]) };
}

/** Absolute M/L/H/V/Z path data → list of points (new subpath starts flagged). Relative commands are not supported except h/v/a used by markers. */
export function pathPoints(d: string): { x: number; y: number; move: boolean }[] {
  const out: { x: number; y: number; move: boolean }[] = [];
  const re = /([MLHVZmlhvza])([^MLHVZmlhvza]*)/g;
  let m: RegExpExecArray | null;
  let x = 0, y = 0;
  while ((m = re.exec(d))) {
    const cmd = m[1]!;
    const nums = m[2]!.trim() ? m[2]!.trim().split(/[\s,]+/).map(Number) : [];
    if (cmd === 'M' || cmd === 'L') {
      for (let i = 0; i < nums.length; i += 2) {
        x = nums[i]!; y = nums[i + 1]!;
        out.push({ x, y, move: cmd === 'M' && i === 0 });
      }
    } else if (cmd === 'H') { x = nums[0]!; out.push({ x, y, move: false }); }
    else if (cmd === 'V') { y = nums[0]!; out.push({ x, y, move: false }); }
    else if (cmd === 'h') { x += nums[0]!; out.push({ x, y, move: false }); }
    else if (cmd === 'v') { y += nums[0]!; out.push({ x, y, move: false }); }
  }
  return out;
}

/** Split path points into subpaths at each move. */
export function subpaths(points: { x: number; y: number; move: boolean }[]): { x: number; y: number }[][] {
  const out: { x: number; y: number }[][] = [];
  for (const p of points) {
    if (p.move || !out.length) out.push([]);
    out[out.length - 1]!.push({ x: p.x, y: p.y });
  }
  return out;
}

/** Extract every inline <svg>…</svg> element of an HTML string. */
export function inlineSvgs(html: string): string[] {
  const out: string[] = [];
  let i = 0;
  for (;;) {
    const s = html.indexOf('<svg', i);
    if (s < 0) return out;
    const e = html.indexOf('</svg>', s);
    out.push(html.slice(s, e + 6));
    i = e + 6;
  }
}

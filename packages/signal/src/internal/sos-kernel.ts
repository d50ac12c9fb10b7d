/**
 * In-place IIR kernels. The arithmetic of every step is that of scipy's `sosfilt` (direct form
 * II transposed per section) and `lfilter` (C `DOUBLE_filt`), so results agree to rounding.
 *
 * Speed: an IIR section is latency-bound (each output waits for the previous state), so sections
 * are run two at a time, sample by sample, giving the CPU two independent dependency chains to
 * overlap; the data are processed in cache-sized blocks.
 */

const BLOCK = 8192;

/** One section over buf[a, b) (dir +1) or (b, a] backwards (dir −1); state in zi[2s], zi[2s+1]. */
function one(sos: Float64Array, s: number, buf: Float64Array, a: number, b: number, zi: Float64Array, backward: boolean, src: Float64Array): void {
  const o = s * 6;
  const b0 = sos[o]!, b1 = sos[o + 1]!, b2 = sos[o + 2]!, a1 = sos[o + 4]!, a2 = sos[o + 5]!;
  let z0 = zi[2 * s]!;
  let z1 = zi[2 * s + 1]!;
  if (!backward) {
    for (let i = a; i < b; i++) {
      const x = src[i]!;
      const y = b0 * x + z0;
      z0 = b1 * x - a1 * y + z1;
      z1 = b2 * x - a2 * y;
      buf[i] = y;
    }
  } else {
    for (let i = b - 1; i >= a; i--) {
      const x = src[i]!;
      const y = b0 * x + z0;
      z0 = b1 * x - a1 * y + z1;
      z1 = b2 * x - a2 * y;
      buf[i] = y;
    }
  }
  zi[2 * s] = z0;
  zi[2 * s + 1] = z1;
}

/** Sections s and s + 1 fused: the output of s feeds s + 1 within the same sample step. */
function two(sos: Float64Array, s: number, buf: Float64Array, a: number, b: number, zi: Float64Array, backward: boolean, src: Float64Array): void {
  const o = s * 6;
  const p0 = sos[o]!, p1 = sos[o + 1]!, p2 = sos[o + 2]!, pa1 = sos[o + 4]!, pa2 = sos[o + 5]!;
  const q0 = sos[o + 6]!, q1 = sos[o + 7]!, q2 = sos[o + 8]!, qa1 = sos[o + 10]!, qa2 = sos[o + 11]!;
  let u0 = zi[2 * s]!;
  let u1 = zi[2 * s + 1]!;
  let v0 = zi[2 * s + 2]!;
  let v1 = zi[2 * s + 3]!;
  if (!backward) {
    for (let i = a; i < b; i++) {
      const x = src[i]!;
      const y = p0 * x + u0;
      u0 = p1 * x - pa1 * y + u1;
      u1 = p2 * x - pa2 * y;
      const w = q0 * y + v0;
      v0 = q1 * y - qa1 * w + v1;
      v1 = q2 * y - qa2 * w;
      buf[i] = w;
    }
  } else {
    for (let i = b - 1; i >= a; i--) {
      const x = src[i]!;
      const y = p0 * x + u0;
      u0 = p1 * x - pa1 * y + u1;
      u1 = p2 * x - pa2 * y;
      const w = q0 * y + v0;
      v0 = q1 * y - qa1 * w + v1;
      v1 = q2 * y - qa2 * w;
      buf[i] = w;
    }
  }
  zi[2 * s] = u0;
  zi[2 * s + 1] = u1;
  zi[2 * s + 2] = v0;
  zi[2 * s + 3] = v1;
}

function run(sos: Float64Array, nSections: number, buf: Float64Array, a: number, b: number, zi: Float64Array, backward: boolean, src: Float64Array): void {
  for (let s = 0; s < nSections; s += 2) {
    // Only the first stage reads the source; later stages work in place.
    const from = s === 0 ? src : buf;
    if (s + 1 < nSections) two(sos, s, buf, a, b, zi, backward, from);
    else one(sos, s, buf, a, b, zi, backward, from);
  }
}

/**
 * Filter buf[start, end) in place through nSections biquads, forward in time. `zi` (2 per section)
 * holds the initial state and receives the final state. With `src`, the input is read from
 * src[start, end) instead (a copy fused into the first pass).
 */
export function sosForward(sos: Float64Array, nSections: number, buf: Float64Array, start: number, end: number, zi: Float64Array, src: Float64Array = buf): void {
  if (nSections <= 2) {
    run(sos, nSections, buf, start, end, zi, false, src);
    return;
  }
  for (let a = start; a < end; a += BLOCK) run(sos, nSections, buf, a, Math.min(end, a + BLOCK), zi, false, src);
}

/** As {@link sosForward}, but runs from end − 1 down to start (filtering the time-reversed data). */
export function sosBackward(sos: Float64Array, nSections: number, buf: Float64Array, start: number, end: number, zi: Float64Array): void {
  if (nSections <= 2) {
    run(sos, nSections, buf, start, end, zi, true, buf);
    return;
  }
  for (let b = end; b > start; b -= BLOCK) run(sos, nSections, buf, Math.max(start, b - BLOCK), b, zi, true, buf);
}

/**
 * Direct-form II transposed filter of buf[start, end) in place with normalised coefficients
 * (a[0] = 1, b and a of equal length m ≥ 1); `z` (m − 1 values) is the state, updated.
 * `step` is +1 (forward) or −1 (backward from end − 1).
 */
export function tfInPlace(b: Float64Array, a: Float64Array, buf: Float64Array, start: number, end: number, z: Float64Array, step: 1 | -1): void {
  const m = b.length;
  const b0 = b[0]!;
  const first = step === 1 ? start : end - 1;
  const stop = step === 1 ? end : start - 1;
  if (m === 1) {
    for (let i = first; i !== stop; i += step) buf[i] = buf[i]! * b0;
    return;
  }
  for (let i = first; i !== stop; i += step) {
    const x = buf[i]!;
    const y = z[0]! + b0 * x;
    for (let n = 0; n < m - 2; n++) z[n] = z[n + 1]! + x * b[n + 1]! - y * a[n + 1]!;
    z[m - 2] = x * b[m - 1]! - y * a[m - 1]!;
    buf[i] = y;
  }
}

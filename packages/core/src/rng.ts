import { TuningforkError } from './errors.js';

const MASK64 = (1n << 64n) - 1n;

/** SplitMix64 step (Steele, Lea & Flood 2014): returns [nextState, output]. Used for seeding only. */
function splitmix64(state: bigint): [bigint, bigint] {
  const s = (state + 0x9e3779b97f4a7c15n) & MASK64;
  let z = s;
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
  return [s, z ^ (z >> 31n)];
}

function seedToKey(seed: number | bigint): bigint {
  if (typeof seed === 'bigint') {
    if (seed < 0n) throw new TuningforkError('TF_BAD_OPTION', `rng: seed must be ≥ 0, got ${seed}.`, { seed: String(seed) });
    return seed & MASK64;
  }
  if (!Number.isSafeInteger(seed) || seed < 0) {
    throw new TuningforkError('TF_BAD_OPTION', `rng: seed must be a non-negative safe integer, got ${String(seed)}.`, { seed });
  }
  return BigInt(seed);
}

/**
 * Seeded pseudo-random generator: xoshiro128** (Blackman & Vigna 2021), seeded through SplitMix64.
 *
 * Streams: `rng.stream(i)` returns an independent generator whose state depends only on this
 * generator's key and `i` (not on how many numbers were drawn), so work split over threads or
 * shards reproduces a serial run exactly. `Math.random` is never used anywhere in tuningfork.
 *
 * References
 * - Blackman, D. & Vigna, S. (2021). Scrambled linear pseudorandom number generators.
 *   ACM Trans. Math. Softw. 47(4):36. doi:10.1145/3460772
 * - Steele, G. L., Lea, D. & Flood, C. H. (2014). Fast splittable pseudorandom number generators.
 *   OOPSLA 2014, 453–472. doi:10.1145/2660193.2660195
 * - Marsaglia, G. & Tsang, W. W. (2000). The ziggurat method for generating random variables.
 *   J. Stat. Softw. 5(8). doi:10.18637/jss.v005.i08 (`normal`)
 * - Marsaglia, G. & Bray, T. A. (1964). A convenient method for generating normal variables.
 *   SIAM Review 6(3):260–264. doi:10.1137/1006063 (polar method, `normalPolar`)
 * - Marsaglia, G. & Tsang, W. W. (2000). A simple method for generating gamma variables.
 *   ACM Trans. Math. Softw. 26(3):363–372. doi:10.1145/358407.358414 (`gamma`)
 */
export class Rng {
  /** The 64-bit key this generator was seeded from (seed for the root, derived for streams). */
  readonly key: bigint;
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare = NaN;

  constructor(seed: number | bigint) {
    this.key = seedToKey(seed);
    let st = this.key;
    let a: bigint;
    let b: bigint;
    [st, a] = splitmix64(st);
    [st, b] = splitmix64(st);
    this.s0 = Number(a & 0xffffffffn) | 0;
    this.s1 = Number(a >> 32n) | 0;
    this.s2 = Number(b & 0xffffffffn) | 0;
    this.s3 = Number(b >> 32n) | 0;
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1; // all-zero state is forbidden
  }

  /** Next raw 32-bit output as an unsigned integer in [0, 2^32). */
  nextUint32(): number {
    const s1 = this.s1;
    const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number {
    const a = this.nextUint32() >>> 5;
    const b = this.nextUint32() >>> 6;
    return (a * 67108864 + b) / 9007199254740992;
  }

  /** Uniform double in [lo, hi). */
  uniformIn(lo: number, hi: number): number {
    return lo + (hi - lo) * this.uniform();
  }

  /** Uniform integer in [0, n) for 1 ≤ n ≤ 2^32, without modulo bias (rejection). */
  int(n: number): number {
    if (!(n >= 1 && n <= 4294967296 && Number.isInteger(n))) {
      throw new TuningforkError('TF_BAD_OPTION', `Rng.int: n must be an integer in [1, 2^32], got ${n}.`, { n });
    }
    const limit = 4294967296 - (4294967296 % n);
    for (;;) {
      const x = this.nextUint32();
      if (x < limit) return x % n;
    }
  }

  /**
   * Standard normal deviate by the 128-layer ziggurat (Marsaglia & Tsang 2000, in Doornik's 2005
   * form: the layer index and the uniform come from separate 32-bit draws, which avoids the
   * correlation flaw of the original). About 3× faster than the polar method.
   */
  normal(): number {
    for (;;) {
      const u = (this.nextUint32() + 0.5) / 2147483648 - 1; // uniform in (−1, 1)
      const i = this.nextUint32() & 127;
      if (Math.abs(u) < ZIG_RATIO[i]!) return u * ZIG_X[i]!;
      if (i === 0) {
        // Base strip beyond R: Marsaglia's exponential tail method.
        let x: number;
        let y: number;
        do {
          x = Math.log(this.uniform() || Number.MIN_VALUE) / ZIG_R;
          y = Math.log(this.uniform() || Number.MIN_VALUE);
        } while (-2 * y < x * x);
        return u < 0 ? x - ZIG_R : ZIG_R - x;
      }
      const x = u * ZIG_X[i]!;
      const xi = ZIG_X[i]!;
      const xi1 = ZIG_X[i + 1]!;
      const f0 = Math.exp(-0.5 * (xi * xi - x * x));
      const f1 = Math.exp(-0.5 * (xi1 * xi1 - x * x));
      if (f1 + this.uniform() * (f0 - f1) < 1) return x;
    }
  }

  /** Standard normal deviate by the Marsaglia polar method (kept for cross-checks). */
  normalPolar(): number {
    const sp = this.spare;
    if (sp === sp) {
      this.spare = NaN;
      return sp;
    }
    let u: number;
    let v: number;
    let s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const f = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * f;
    return u * f;
  }

  /** Exponential deviate with the given rate (mean 1/rate). */
  exponential(rate = 1): number {
    return -Math.log1p(-this.uniform()) / rate;
  }

  /** Gamma deviate with shape k > 0 and scale θ (Marsaglia & Tsang 2000). */
  gamma(shape: number, scale = 1): number {
    if (!(shape > 0) || !(scale > 0)) {
      throw new TuningforkError('TF_BAD_OPTION', `Rng.gamma: shape and scale must be > 0, got ${shape}, ${scale}.`, { shape, scale });
    }
    if (shape < 1) {
      const u = this.uniform();
      return this.gamma(shape + 1, scale) * Math.pow(u === 0 ? Number.MIN_VALUE : u, 1 / shape);
    }
    const d = shape - 1 / 3;
    const c = 1 / Math.sqrt(9 * d);
    for (;;) {
      let x: number;
      let v: number;
      do {
        x = this.normal();
        v = 1 + c * x;
      } while (v <= 0);
      v = v * v * v;
      const u = this.uniform();
      if (u < 1 - 0.0331 * x * x * x * x) return d * v * scale;
      if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v * scale;
    }
  }

  /** Bernoulli draw: true with probability p. */
  bernoulli(p: number): boolean {
    return this.uniform() < p;
  }

  /** Fill `out` with N(mean, sd²) deviates and return it. */
  fillNormal(out: Float64Array, mean = 0, sd = 1): Float64Array {
    for (let i = 0; i < out.length; i++) out[i] = mean + sd * this.normal();
    return out;
  }

  /** Fill `out` with uniform [0, 1) deviates and return it. */
  fillUniform(out: Float64Array): Float64Array {
    for (let i = 0; i < out.length; i++) out[i] = this.uniform();
    return out;
  }

  /** In-place Fisher–Yates shuffle of `a`. */
  shuffle<T extends { length: number; [i: number]: unknown }>(a: T): T {
    for (let i = a.length - 1; i > 0; i--) {
      const j = this.int(i + 1);
      const t = a[i];
      a[i] = a[j];
      a[j] = t;
    }
    return a;
  }

  /**
   * An independent generator for sub-stream `index` (a non-negative integer), derived from this
   * generator's key only: `rng(seed).stream(3)` is the same wherever and whenever it is created.
   */
  stream(index: number): Rng {
    if (!Number.isSafeInteger(index) || index < 0) {
      throw new TuningforkError('TF_BAD_OPTION', `Rng.stream: index must be a non-negative integer, got ${index}.`, { index });
    }
    const [, mixed] = splitmix64((this.key ^ 0x5851f42d4c957f2dn) + BigInt(index) * 0x9e3779b97f4a7c15n);
    return new Rng(mixed & MASK64);
  }

  /** Generator for a named sub-stream (a string label hashed with FNV-1a 64), e.g. 'noise/site01'. */
  streamNamed(label: string): Rng {
    let h = 0xcbf29ce484222325n;
    for (let i = 0; i < label.length; i++) {
      h ^= BigInt(label.charCodeAt(i));
      h = (h * 0x100000001b3n) & MASK64;
    }
    const [, mixed] = splitmix64(this.key ^ h);
    return new Rng(mixed);
  }
}

// Ziggurat tables (Marsaglia & Tsang 2000, 128 layers; Doornik 2005, "An improved ziggurat
// method to generate normal random samples", Univ. Oxford). ZIG_X[0] is the width of the base
// strip V/f(R); ZIG_X[1] = R; ZIG_X[128] = 0; ZIG_RATIO[i] = ZIG_X[i+1]/ZIG_X[i].
const ZIG_R = 3.442619855899;
const ZIG_V = 9.91256303526217e-3;
const ZIG_X = new Float64Array(129);
const ZIG_RATIO = new Float64Array(128);
{
  const f = (x: number) => Math.exp(-0.5 * x * x);
  ZIG_X[0] = ZIG_V / f(ZIG_R);
  ZIG_X[1] = ZIG_R;
  for (let i = 2; i < 128; i++) ZIG_X[i] = Math.sqrt(-2 * Math.log(ZIG_V / ZIG_X[i - 1]! + f(ZIG_X[i - 1]!)));
  ZIG_X[128] = 0;
  for (let i = 0; i < 128; i++) ZIG_RATIO[i] = ZIG_X[i + 1]! / ZIG_X[i]!;
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/** Create a seeded generator. `seed` is a non-negative safe integer (or bigint < 2^64). */
export function rng(seed: number | bigint): Rng {
  return new Rng(seed);
}

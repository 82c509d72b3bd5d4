/**
 * Seeded random numbers for reproducible sampling: the same seed gives the same numbers on any
 * machine and in any thread, because each realisation has a stream of its own that depends only
 * on (seed, index), never on which thread draws it or in what order.
 *
 * Exports `splitmix64` (a counter-based 64-bit mixer), `Xoshiro128StarStar` (the generator),
 * `sampleStream(seed, index)`, and the deviates `uniformOpen`, `standardNormal`, `standardUniform`.
 * Integer arithmetic only up to the deviates; those use Math.log, Math.cos and Math.sqrt, which V8
 * computes with its own ports of fdlibm rather than the platform's C library, so they do not vary
 * between machines.
 */

const MASK64 = (1n << 64n) - 1n;
/** 2⁶⁴/φ, the Weyl increment of SplitMix64. */
const GOLDEN_GAMMA = 0x9e3779b97f4a7c15n;

/**
 * Output k (k = 1, 2, …) of SplitMix64 started from `seed`: the state after k steps is
 * seed + k·γ, so any output can be reached directly (Steele, Lea & Flood, "Fast splittable
 * pseudorandom number generators", OOPSLA 2014; constants of Vigna's reference splitmix64.c).
 */
export function splitmix64(seed: bigint, k: bigint): bigint {
  let z = (seed + k * GOLDEN_GAMMA) & MASK64;
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
  return z ^ (z >> 31n);
}

/**
 * xoshiro128** 1.1 (Blackman & Vigna, "Scrambled linear pseudorandom number generators",
 * ACM Trans. Math. Softw. 47(4), 2021; reference code xoshiro128starstar.c): 128-bit state,
 * 32-bit outputs, period 2¹²⁸ − 1. The state must not be all zero.
 */
export class Xoshiro128StarStar {
  private readonly s: Uint32Array;

  constructor(state: ArrayLike<number>) {
    this.s = Uint32Array.from(state);
    if (this.s.length !== 4) throw new RangeError('xoshiro128** needs four 32-bit state words');
    if (this.s.every((w) => w === 0)) throw new RangeError('xoshiro128** state must not be all zero');
  }

  /** The current state words (for tests against published state sequences). */
  state(): number[] {
    return [...this.s];
  }

  nextUint32(): number {
    const s = this.s;
    const result = Math.imul(rotl(Math.imul(s[1], 5), 7), 9) >>> 0;
    const t = s[1] << 9;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 11);
    return result;
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/**
 * The generator of realisation `index` under `seed`: its state is outputs 2·index + 1 and
 * 2·index + 2 of SplitMix64 started from the seed, as Vigna recommends for seeding xoshiro.
 * Distinct indices get distinct states; `seed` and `index` are whole numbers from 0 to 2⁵³.
 */
export function sampleStream(seed: number, index: number): Xoshiro128StarStar {
  if (!Number.isSafeInteger(seed) || seed < 0) throw new RangeError(`seed ${seed} must be a whole number from 0 to 2^53`);
  if (!Number.isSafeInteger(index) || index < 0) throw new RangeError(`index ${index} must be a whole number from 0 to 2^53`);
  const k = 2n * BigInt(index);
  const a = splitmix64(BigInt(seed), k + 1n);
  const b = splitmix64(BigInt(seed), k + 2n);
  const words = [Number(a & 0xffffffffn), Number(a >> 32n), Number(b & 0xffffffffn), Number(b >> 32n)];
  if (!words.some((w) => w !== 0)) words[0] = 1;
  return new Xoshiro128StarStar(words);
}

/** A uniform double in the open interval (0, 1) with 53 random bits: never 0, never 1. */
export function uniformOpen(rng: Xoshiro128StarStar): number {
  const high = rng.nextUint32() >>> 5; // 27 bits
  const low = rng.nextUint32() >>> 6; // 26 bits
  return (high * 67108864 + low + 0.5) / 9007199254740992;
}

/**
 * A standard normal deviate from two uniforms by the Box–Muller transform (Box & Muller, Ann.
 * Math. Statist. 29(2), 610–611, 1958): z = √(−2 ln u₁) cos(2π u₂). Only the cosine branch is
 * used, so each deviate consumes exactly two uniforms. Since u₁ > 0, |z| < 8.6.
 */
export function standardNormal(rng: Xoshiro128StarStar): number {
  const u1 = uniformOpen(rng);
  const u2 = uniformOpen(rng);
  return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
}

/**
 * A uniform deviate on (−1, 1). It consumes two uniforms like `standardNormal`, so a stream
 * stays aligned whichever kind each draw is.
 */
export function standardUniform(rng: Xoshiro128StarStar): number {
  const u = uniformOpen(rng);
  uniformOpen(rng);
  return 2 * u - 1;
}

/**
 * Seeded pseudo-random generator: xoshiro128** (Blackman & Vigna, "Scrambled
 * linear pseudorandom number generators", ACM TOMS 2021), seeded through
 * SplitMix32. Same seed, same stream, on every platform: it uses only 32-bit
 * integer arithmetic.
 * @example const rng = new Rng(42); rng.gaussian(); rng.fillBits(new Uint8Array(64)); // same seed, same draws
 */
export class Rng {
  private s0 = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  private spare = 0;
  private hasSpare = false;

  /**
   * @param seed any safe integer; different seeds give unrelated streams
   * @throws RangeError when `seed` is not a safe integer
   */
  constructor(seed: number) {
    if (!Number.isSafeInteger(seed)) {
      throw new RangeError(`Rng: expected a safe integer seed, received ${seed}`);
    }
    // SplitMix32 over both halves of the seed fills the 128-bit state.
    let z = (seed >>> 0) ^ Math.imul(Math.floor(seed / 2 ** 32) | 0, 0x9e3779b9);
    const next = (): number => {
      z = (z + 0x9e3779b9) | 0;
      let t = z ^ (z >>> 16);
      t = Math.imul(t, 0x21f0aaad);
      t ^= t >>> 15;
      t = Math.imul(t, 0x735a2d97);
      return (t ^ (t >>> 15)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next 32-bit unsigned integer. */
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
    const hi = this.nextUint32() >>> 5; // 27 bits
    const lo = this.nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Uniform integer in [0, n). */
  integer(n: number): number {
    return Math.floor(this.uniform() * n);
  }

  /** Standard normal draw (Box–Muller; the second value is kept for the next call). */
  gaussian(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    const u1 = 1 - this.uniform(); // (0, 1]: log is finite
    const u2 = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    const a = 2 * Math.PI * u2;
    this.spare = r * Math.sin(a);
    this.hasSpare = true;
    return r * Math.cos(a);
  }

  /** Fills `out` with normal draws of standard deviation `sigma`. Returns `out`. */
  fillGaussian(out: Float64Array, sigma = 1): Float64Array {
    for (let i = 0; i < out.length; i++) out[i] = sigma * this.gaussian();
    return out;
  }

  /** Fills `out` with random bits (0 or 1). Returns `out`. */
  fillBits(out: Uint8Array): Uint8Array {
    let word = 0;
    for (let i = 0; i < out.length; i++) {
      if ((i & 31) === 0) word = this.nextUint32();
      out[i] = (word >>> (i & 31)) & 1;
    }
    return out;
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

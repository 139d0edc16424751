/**
 * Pseudo-random binary sequences from linear feedback shift registers.
 *
 * The ITU-T O.150 patterns are PRBS9, 11, 15, 20, 23, 29 and 31; PRBS7 is
 * widely used but is not an O.150 pattern. Each pattern is produced by an
 * n-stage shift register whose stages n and k are added modulo 2 and fed back
 * to the first stage (generator polynomial xⁿ + xᵏ + 1); the bit fed back is
 * the output, complemented for the patterns O.150 specifies as inverted.
 */

export type PrbsOrder = 7 | 9 | 11 | 15 | 20 | 23 | 29 | 31;

/** A PRBS generator polynomial xⁿ + xᵏ + 1 (ITU-T O.150). */
export interface PrbsPattern {
  /** Degree n: the sequence repeats every 2ⁿ − 1 bits. */
  readonly order: PrbsOrder;
  /** The second feedback stage k of xⁿ + xᵏ + 1. */
  readonly tap: number;
  /** Output complemented (O.150 inverted patterns). */
  readonly inverted: boolean;
  /** True for the ITU-T O.150 patterns. */
  readonly o150: boolean;
}

/** Polynomials and inversion per pattern (ITU-T O.150, clause 5; PRBS7 common practice). */
export const PRBS_PATTERNS: Readonly<Record<PrbsOrder, PrbsPattern>> = {
  7: { order: 7, tap: 6, inverted: false, o150: false },
  9: { order: 9, tap: 5, inverted: false, o150: true },
  11: { order: 11, tap: 9, inverted: false, o150: true },
  15: { order: 15, tap: 14, inverted: true, o150: true },
  20: { order: 20, tap: 3, inverted: false, o150: true },
  23: { order: 23, tap: 18, inverted: true, o150: true },
  29: { order: 29, tap: 27, inverted: true, o150: true },
  31: { order: 31, tap: 28, inverted: true, o150: true },
};

/**
 * A PRBS generator. The register starts from `seed` (all ones by default);
 * stage i (1…n) is bit i − 1 of the state.
 * @example new Prbs(15).fill(new Uint8Array(32767)) // one period
 */
export class Prbs {
  /** The polynomial this generator runs. */
  readonly pattern: PrbsPattern;
  private state: number;
  private readonly initial: number;
  private readonly n: number;
  private readonly k: number;
  private readonly mask: number;
  private readonly flip: number;

  /**
   * @param order one of 7, 9, 11, 15, 20, 23, 29, 31
   * @param seed initial register, a non-zero n-bit integer (default all ones)
   * @throws RangeError for another order or a zero or oversized seed
   */
  constructor(order: PrbsOrder, seed?: number) {
    const pattern = PRBS_PATTERNS[order];
    if (!pattern) {
      throw new RangeError(`Prbs: expected an order among 7, 9, 11, 15, 20, 23, 29, 31, received ${order}`);
    }
    this.pattern = pattern;
    this.n = order;
    this.k = pattern.tap;
    this.mask = order === 31 ? 0x7fffffff : (1 << order) - 1;
    const s = seed ?? this.mask;
    if (!Number.isInteger(s) || s <= 0 || s > this.mask) {
      throw new RangeError(`Prbs: expected a non-zero ${order}-bit seed, received ${seed}`);
    }
    this.state = s;
    this.initial = s;
    this.flip = pattern.inverted ? 1 : 0;
  }

  /** Period of the pattern, 2ⁿ − 1 bits. */
  get period(): number {
    return 2 ** this.n - 1;
  }

  /** The next bit. */
  next(): number {
    const fb = ((this.state >>> (this.n - 1)) ^ (this.state >>> (this.k - 1))) & 1;
    this.state = ((this.state << 1) | fb) & this.mask;
    return fb ^ this.flip;
  }

  /** Fills `out` with the next bits. Returns `out`. */
  fill(out: Uint8Array): Uint8Array {
    for (let i = 0; i < out.length; i++) out[i] = this.next();
    return out;
  }

  /** Back to the initial register. */
  reset(): void {
    this.state = this.initial;
  }
}

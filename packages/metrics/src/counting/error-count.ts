import type { Constellation } from '@intradyne/core';
import { clopperPearson, type Interval } from './clopper-pearson.js';

/** Bit and symbol errors between decided and transmitted labels. */
export interface ErrorCount {
  /** Bits that differ. */
  readonly bitErrors: number;
  /** Bits compared: symbols · log2 M. */
  readonly bits: number;
  /** Symbols whose label differs. */
  readonly symbolErrors: number;
  /** Symbols compared. */
  readonly symbols: number;
}

/**
 * Counts bit errors (Hamming distance of the labels) and symbol errors.
 * @param decided N labels from hard decisions
 * @param sent N transmitted labels
 * @throws RangeError when the lengths differ
 * @example countErrors(constellation('qpsk'), Uint8Array.of(0, 3), Uint8Array.of(0, 0)) // 2 bit errors, 1 symbol error
 */
export function countErrors(c: Constellation, decided: Uint8Array, sent: Uint8Array): ErrorCount {
  if (decided.length !== sent.length) {
    throw new RangeError(`countErrors: ${decided.length} decided labels against ${sent.length} transmitted`);
  }
  let bitErrors = 0;
  let symbolErrors = 0;
  for (let k = 0; k < decided.length; k++) {
    let d = decided[k] ^ sent[k];
    if (d !== 0) symbolErrors++;
    // Kernighan's popcount: one step per set bit.
    while (d !== 0) {
      d &= d - 1;
      bitErrors++;
    }
  }
  return { bitErrors, bits: decided.length * c.bitsPerSymbol, symbolErrors, symbols: decided.length };
}

/** An error ratio with its exact 95 % interval. */
export interface ErrorRatio {
  /**
   * errors / trials when errors > 0; with zero errors, the upper end of the
   * 95 % interval (never a bare 0), flagged by `isUpperBound`.
   */
  readonly ratio: number;
  /** Clopper–Pearson 95 % interval. */
  readonly ci95: Interval;
  /** True when no error was seen and `ratio` is an upper bound. */
  readonly isUpperBound: boolean;
}

/**
 * The error ratio of `errors` in `trials` with its Clopper–Pearson 95 % interval.
 * @throws RangeError as {@link clopperPearson}
 * @example errorRatio(0, 1000) // { ratio: 3.68e-3, ci95: [0, 3.68e-3], isUpperBound: true }
 */
export function errorRatio(errors: number, trials: number): ErrorRatio {
  const ci95 = clopperPearson(errors, trials, 0.95);
  return errors > 0 ? { ratio: errors / trials, ci95, isUpperBound: false } : { ratio: ci95[1], ci95, isUpperBound: true };
}

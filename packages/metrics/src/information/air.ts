import type { Constellation } from '@intradyne/core';

/**
 * Achievable information rate of a dual-polarization channel, bit/s: the sum
 * of the per-polarization GMIs (bits per symbol) times the symbol rate,
 * AIR = (GMIₓ + GMIᵧ)·Rs (Alvarado et al., JLT 36(2), 2018: the GMI is an
 * achievable rate for bit-wise decoding).
 * @param gmiX GMI of x, bits per symbol
 * @param gmiY GMI of y, bits per symbol
 * @param symbolRate Bd, > 0
 * @throws RangeError for a non-positive symbol rate or a non-finite GMI
 * @example airBitsPerSecond(3.5, 3.5, 32e9) // 224e9 bit/s
 */
export function airBitsPerSecond(gmiX: number, gmiY: number, symbolRate: number): number {
  if (!(symbolRate > 0) || !Number.isFinite(symbolRate)) {
    throw new RangeError(`airBitsPerSecond: expected a positive symbol rate in Bd, received ${symbolRate}`);
  }
  if (!Number.isFinite(gmiX) || !Number.isFinite(gmiY)) {
    throw new RangeError(`airBitsPerSecond: expected finite GMIs, received ${gmiX} and ${gmiY}`);
  }
  // A negative GMI estimate (possible when the fitted channel is badly mismatched) achieves nothing.
  return (Math.max(0, gmiX) + Math.max(0, gmiY)) * symbolRate;
}

/**
 * NGMI: GMI / log2 M for a uniform format; for a shaped one (prior of
 * entropy H) 1 − (H − GMI)/log2 M, the normalization that keeps the
 * soft-decision FEC thresholds meaningful for probabilistic shaping
 * (Alvarado et al., JLT 36(2), 2018; equal to GMI / log2 M when H = log2 M).
 * @example normalizedGmi(constellation('ps-64qam:entropy=4.5'), 4.2) // 1 − 0.3/6 = 0.95
 */
export function normalizedGmi(c: Constellation, gmi: number): number {
  return c.shaped ? 1 - (c.entropy - gmi) / c.bitsPerSymbol : gmi / c.bitsPerSymbol;
}

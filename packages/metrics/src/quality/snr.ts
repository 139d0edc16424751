import type { ComplexArray } from '@intradyne/core';
import erfcinv from '@stdlib/math-base-special-erfcinv';
import { errorPower } from './evm.js';

/**
 * Data-aided SNR (Es/N0 at the symbol instants), linear: the power of the
 * transmitted points over the power of the error,
 *
 *   SNR = Σ|aₖ|² / Σ|rₖ − aₖ|²,
 *
 * with rₖ scaled by the least-squares gain (so the error is uncorrelated
 * with the data and its power is the noise power).
 * @param received N complex symbols at the constellation's scale
 * @param reference N transmitted points
 * @returns linear SNR (Infinity for a noiseless stream)
 * @throws RangeError when the lengths differ or N = 0
 * @example 10 * Math.log10(dataAidedSnr(z, a)) // ≈ 15 for a 15 dB link
 */
export function dataAidedSnr(received: ComplexArray, reference: ComplexArray): number {
  const n = received.length >> 1;
  if (received.length !== reference.length || n === 0) {
    throw new RangeError(
      `dataAidedSnr: expected as many received as reference symbols (≥ 1), received ${n} and ${reference.length >> 1}`,
    );
  }
  let s = 0;
  for (let i = 0; i < reference.length; i++) s += reference[i] * reference[i];
  return s / errorPower(received, reference);
}

/**
 * SNR from a data-aided EVM normalized to the average constellation power:
 * SNR ≈ 1/EVM² (Shafik, Rahman, Islam, ICECE 2006), linear.
 * @param evm rms EVM as a fraction, ≥ 0
 * @throws RangeError for a negative or NaN EVM
 * @example snrFromEvm(0.1) // 100 (20 dB)
 */
export function snrFromEvm(evm: number): number {
  if (!(evm >= 0)) throw new RangeError(`snrFromEvm: expected an EVM ≥ 0 (a fraction), received ${evm}`);
  return 1 / (evm * evm);
}

/**
 * Q-factor in dB from a BER: Q = √2·erfc⁻¹(2·BER), Q_dB = 20·log10 Q
 * (common practice). It equals the Es/N0 in dB at which Gray QPSK has that
 * BER, since BER = ½·erfc(√(SNR/2)) gives √SNR = √2·erfc⁻¹(2·BER).
 * @param ber in (0, 0.5)
 * @returns Q in dB
 * @throws RangeError for a BER outside (0, 0.5)
 * @example qFactorDb(1e-3) // ≈ 9.80
 */
export function qFactorDb(ber: number): number {
  if (!(ber > 0 && ber < 0.5)) throw new RangeError(`qFactorDb: expected a BER in (0, 0.5), received ${ber}`);
  return 20 * Math.log10(Math.SQRT2 * erfcinv(2 * ber));
}

/**
 * A linear power ratio in dB, 10·log10(ratio) (Infinity for an infinite ratio).
 * @example toDb(100) // 20
 */
export function toDb(ratio: number): number {
  return 10 * Math.log10(ratio);
}

import type { ComplexArray } from '@intradyne/core';
import { ReferenceMismatchError } from '../counting/reference-mismatch.js';

/**
 * Real least-squares gain of received symbols r against their reference
 * points a: ĝ = Re Σ r·conj(a) / Σ|a|², the g minimizing Σ|r − g·a|² over
 * real g. Noise uncorrelated with the data does not bias it, unlike a
 * normalization to unit received power (which grows with the noise power).
 * It is real on purpose: a residual phase left by the carrier recovery stays
 * in the error and counts against EVM, SNR and BER.
 * @param received N complex symbols
 * @param reference N complex reference points
 * @returns ĝ (positive for a correctly synchronized stream)
 * @throws RangeError when the lengths differ or the reference has no power
 * @example leastSquaresGain(received, reference) // ≈ 0.5 when received ≈ 0.5·reference
 */
export function leastSquaresGain(received: ComplexArray, reference: ComplexArray): number {
  if (received.length !== reference.length) {
    throw new RangeError(`leastSquaresGain: ${received.length >> 1} received symbols against ${reference.length >> 1} reference`);
  }
  let num = 0;
  let den = 0;
  for (let i = 0; i < received.length; i++) {
    num += received[i] * reference[i];
    den += reference[i] * reference[i];
  }
  if (!(den > 0)) throw new ReferenceMismatchError('leastSquaresGain: the reference has no power');
  return num / den;
}

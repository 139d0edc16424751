import type { ComplexArray, Constellation } from '@intradyne/core';

/** What the error power of EVM is normalized to. */
export type EvmNormalization = 'average' | 'peak';

/**
 * Data-aided rms error vector magnitude, as a fraction (not %):
 *
 *   EVM = √( (1/N)·Σ|rₖ − aₖ|² / P ),
 *
 * with rₖ the received symbols already scaled to the constellation (see
 * {@link leastSquaresGain}), aₖ the transmitted points and P the average
 * power of the constellation (1, 'average', default) or its peak power
 * ('peak': max |a|², 1.8 for 16QAM, 7/3 for 64QAM) (Shafik, Rahman, Islam,
 * "On the extended relationships among EVM, BER and SNR as performance
 * metrics", ICECE 2006).
 * @param received N complex symbols at the constellation's scale
 * @param reference N transmitted points
 * @throws RangeError when the lengths differ or N = 0
 * @example evmRms(c, z, a) // 0.316 at 10 dB SNR
 */
export function evmRms(
  c: Constellation,
  received: ComplexArray,
  reference: ComplexArray,
  normalization: EvmNormalization = 'average',
): number {
  const n = received.length >> 1;
  if (received.length !== reference.length || n === 0) {
    throw new RangeError(
      `evmRms: expected as many received as reference symbols (≥ 1), received ${n} and ${reference.length >> 1}`,
    );
  }
  if (normalization !== 'average' && normalization !== 'peak') {
    throw new RangeError(`evmRms: expected normalization 'average' or 'peak', received '${String(normalization)}'`);
  }
  return Math.sqrt(errorPower(received, reference) / n / constellationPower(c, normalization));
}

/**
 * Error energy Σ|rₖ − aₖ|² over all symbols (not divided by N).
 * @param received N complex symbols
 * @param reference N complex points (the caller checks the lengths; extra reference samples are ignored)
 * @example errorPower(z, a) / (z.length / 2) // mean error power
 */
export function errorPower(received: ComplexArray, reference: ComplexArray): number {
  let e = 0;
  for (let i = 0; i < received.length; i++) {
    const d = received[i] - reference[i];
    e += d * d;
  }
  return e;
}

/**
 * Average (mean |a|² under the prior: 1) or peak (max |a|²) power of a constellation.
 * @example constellationPower(constellation('16qam'), 'peak') // 1.8
 */
export function constellationPower(c: Constellation, normalization: EvmNormalization): number {
  let sum = 0;
  let weighted = 0;
  let peak = 0;
  for (let k = 0; k < c.order; k++) {
    const p = c.points[2 * k] ** 2 + c.points[2 * k + 1] ** 2;
    sum += p;
    weighted += c.prior[k] * p;
    if (p > peak) peak = p;
  }
  // The average under the prior (1 by construction); a uniform prior keeps the plain mean.
  return normalization === 'peak' ? peak : c.shaped ? weighted : sum / c.order;
}

import type { ComplexArray } from '../signal/complex.js';
import type { Constellation } from './constellation.js';

/**
 * Blind SNR (Es/N0) of symbols from their second and fourth moments, the
 * M2M4 estimator (Pauluzzi & Beaulieu, "A comparison of SNR estimation
 * techniques for the AWGN channel", IEEE Trans. Commun. 48(10), 2000). For
 * z = a + n, a from a constellation with k = E|a|⁴/(E|a|²)² and n circular
 * Gaussian (whose normalized fourth moment is 2), with S = E|a|², N = E|n|²:
 *
 *   M2 = S + N,   M4 = k·S² + 4·S·N + 2·N²   ⇒   (S/M2)² = (2 − M4/M2²) / (2 − k)
 *
 * so with ρ = S/M2, SNR = ρ/(1 − ρ). The carrier phase does not enter, so
 * it works before carrier recovery. ρ² is the separation index of an
 * equalizer output (see `separationIndex`).
 * @param symbols N complex symbols (any scale, any phase)
 * @returns the SNR as a ratio (not dB): +Infinity when the moments say noiseless, 0 when they say noise only
 * @example momentSnr(constellation('16qam'), z) // ≈ 31.6 for 16QAM at 15 dB
 */
export function momentSnr(c: Constellation, symbols: ComplexArray): number {
  let m2 = 0;
  let m4 = 0;
  const n = symbols.length >> 1;
  for (let i = 0; i < symbols.length; i += 2) {
    const p = symbols[i] * symbols[i] + symbols[i + 1] * symbols[i + 1];
    m2 += p;
    m4 += p * p;
  }
  return snrFromMoments(m2 / n, m4 / n, c.cmaRadius2);
}

/**
 * The M2M4 SNR from the moments themselves (see {@link momentSnr}).
 * @param m2 E|z|²
 * @param m4 E|z|⁴
 * @param kurtosis E|a|⁴ of the constellation at unit power
 * @example snrFromMoments(1.1, 1.5, 1.32) // the SNR of 16QAM symbols with these moments
 */
export function snrFromMoments(m2: number, m4: number, kurtosis: number): number {
  if (!(m2 > 0)) return 0;
  const rho2 = (2 - m4 / (m2 * m2)) / (2 - kurtosis);
  if (!(rho2 > 0)) return 0;
  if (rho2 >= 1) return Number.POSITIVE_INFINITY;
  const rho = Math.sqrt(rho2);
  return rho / (1 - rho);
}

import { constellation, type ModulationName } from '@intradyne/core';
import erfc from '@stdlib/math-base-special-erfc';

/**
 * Exact bit error ratio of Gray-coded square M-QAM (QPSK = 4-QAM) in AWGN,
 * as a function of Es/N0 (Cho & Yoon, "On the general BER expression of one-
 * and two-dimensional amplitude modulations", IEEE Trans. Commun. 50(7),
 * 2002):
 *
 *   P_b = (1/log2 √M) · Σ_{k=1}^{log2 √M} P_b(k),
 *   P_b(k) = (1/√M) · Σ_{i=0}^{(1 − 2^(−k))·√M − 1} (−1)^⌊i·2^(k−1)/√M⌋
 *            · (2^(k−1) − ⌊i·2^(k−1)/√M + 1/2⌋) · erfc((2i + 1)·√(3·Es/N0 / (2(M − 1)))).
 *
 * For QPSK this is ½·erfc(√(Es/(2N0))).
 * @param modulation 'qpsk', '16qam' or '64qam'
 * @param snrDb Es/N0 per polarization, dB (any real; −Infinity gives 0.5)
 * @returns the BER, in [0, 0.5]
 * @throws RangeError for an unknown modulation or a NaN SNR
 * @example theoryBer('qpsk', 9.8) // ≈ 1.0e-3
 */
export function theoryBer(modulation: ModulationName, snrDb: number): number {
  if (Number.isNaN(snrDb)) throw new RangeError('theoryBer: expected an SNR in dB, received NaN');
  const c = constellation(modulation);
  const snr = 10 ** (snrDb / 10);
  const m = c.order;
  const sqrtM = c.levelsPerAxis;
  const a = Math.sqrt((3 * snr) / (2 * (m - 1)));
  const bitsPerAxis = c.bitsPerSymbol / 2;
  let total = 0;
  for (let k = 1; k <= bitsPerAxis; k++) {
    const p = 2 ** (k - 1);
    const last = (1 - 2 ** -k) * sqrtM - 1;
    let sum = 0;
    for (let i = 0; i <= last; i++) {
      const sign = Math.floor((i * p) / sqrtM) % 2 === 0 ? 1 : -1;
      const weight = p - Math.floor((i * p) / sqrtM + 0.5);
      sum += sign * weight * erfc((2 * i + 1) * a);
    }
    total += sum / sqrtM;
  }
  return total / bitsPerAxis;
}

/**
 * The Es/N0 (dB) at which Gray-coded square QAM in AWGN reaches a target BER:
 * the inverse of {@link theoryBer}, by bisection on the dB scale (the BER is
 * strictly decreasing in the SNR), to 1e-10 dB.
 * @param ber target BER in (0, 0.5)
 * @returns Es/N0, dB
 * @throws RangeError for a BER outside (0, 0.5) or one that needs more than 60 dB
 * @example snrForBer('16qam', 1e-3) // ≈ 16.54 dB
 */
export function snrForBer(modulation: ModulationName, ber: number): number {
  if (!(ber > 0 && ber < 0.5)) throw new RangeError(`snrForBer: expected a BER in (0, 0.5), received ${ber}`);
  let lo = -60;
  let hi = 60;
  if (theoryBer(modulation, hi) > ber) {
    throw new RangeError(`snrForBer: a BER of ${ber} needs more than ${hi} dB of Es/N0`);
  }
  while (hi - lo > 1e-10) {
    const mid = 0.5 * (lo + hi);
    if (theoryBer(modulation, mid) > ber) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * Implementation penalty of a measurement, dB: its SNR minus the Es/N0 that
 * theory (AWGN, Gray square QAM) needs for its BER. Positive means the
 * measurement needs more SNR than theory for the same BER.
 * @param snrDb the SNR of the measurement (e.g. set in a simulation or derived from OSNR), dB
 * @param ber the measured BER, in (0, 0.5)
 * @throws RangeError as {@link snrForBer}
 * @example implementationPenaltyDb('qpsk', 11, 1e-3) // ≈ 1.2 dB
 */
export function implementationPenaltyDb(modulation: ModulationName, snrDb: number, ber: number): number {
  if (!Number.isFinite(snrDb)) throw new RangeError(`implementationPenaltyDb: expected a finite SNR in dB, received ${snrDb}`);
  return snrDb - snrForBer(modulation, ber);
}

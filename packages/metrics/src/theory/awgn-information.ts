import { constellation, type ModulationName } from '@intradyne/core';
import { gaussHermite } from './gauss-hermite.js';

/** Options of the AWGN information-rate integrals. */
export interface QuadratureOptions {
  /** Gauss–Hermite nodes per dimension (default 64). */
  readonly nodes?: number;
}

/**
 * GMI (bit-wise, bits per symbol per polarization) of Gray-labelled square
 * M-QAM with uniform symbols in AWGN at Es/N0 = `snrDb`, with exact bit
 * metrics (Alvarado, Agrell, Lavery, Maher, Bayvel, JLT 33(20), 2015).
 *
 * The per-axis Gray labelling makes the in-phase bits depend on the in-phase
 * level only, and complex AWGN of variance 1/SNR splits into two real
 * Gaussians of variance σ² = 1/(2·SNR); so GMI = 2·GMI of the √M-level PAM
 * with levels sⱼ = (2j − (L − 1))·scale:
 *
 *   GMI_PAM = b − (1/L)·Σⱼ Σᵢ E_n[ log2( Σₗ e^(−(y − sₗ)²/(2σ²)) / Σ_{l: cᵢ(l) = cᵢ(j)} e^(−(y − sₗ)²/(2σ²)) ) ],
 *
 * y = sⱼ + n, b = log2 L bits per axis, the expectation over n ~ N(0, σ²)
 * by Gauss–Hermite quadrature: E[f(n)] ≈ π^(−1/2)·Σₖ wₖ·f(√2·σ·tₖ).
 * @returns GMI in bits per symbol per polarization, in [0, log2 M]
 * @throws RangeError for an unknown modulation, a NaN SNR or a bad node count
 * @example theoryGmi('16qam', 10) // ≈ 3.1636
 */
export function theoryGmi(modulation: ModulationName, snrDb: number, options: QuadratureOptions = {}): number {
  return 2 * pamInformation(modulation, snrDb, options, true);
}

/**
 * Symbol-wise mutual information (bits per symbol per polarization) of
 * square M-QAM with uniform symbols in AWGN at Es/N0 = `snrDb`: twice the MI
 * of the √M-level PAM, by Gauss–Hermite quadrature as {@link theoryGmi}:
 *
 *   MI_PAM = log2 L − (1/L)·Σⱼ E_n[ log2 Σₗ e^(−((sⱼ − sₗ + n)² − n²)/(2σ²)) ].
 * @throws RangeError as {@link theoryGmi}
 * @example theoryMi('qpsk', 5) // equals theoryGmi('qpsk', 5) (Gray QPSK)
 */
export function theoryMi(modulation: ModulationName, snrDb: number, options: QuadratureOptions = {}): number {
  return 2 * pamInformation(modulation, snrDb, options, false);
}

function pamInformation(modulation: ModulationName, snrDb: number, options: QuadratureOptions, bitWise: boolean): number {
  if (Number.isNaN(snrDb)) throw new RangeError('AWGN information: expected an SNR in dB, received NaN');
  const c = constellation(modulation);
  const L = c.levelsPerAxis;
  const b = c.bitsPerSymbol / 2;
  const { nodes, weights } = gaussHermite(options.nodes ?? 64);
  const snr = 10 ** (snrDb / 10);
  if (snr === 0) return 0;
  if (!Number.isFinite(snr)) return b;
  const sigma = Math.sqrt(1 / (2 * snr));
  const levels = new Float64Array(L);
  const labels = new Uint8Array(L);
  for (let j = 0; j < L; j++) {
    levels[j] = (2 * j - (L - 1)) * c.scale;
    labels[j] = j ^ (j >> 1);
  }
  const metric = new Float64Array(L);
  let loss = 0;
  for (let j = 0; j < L; j++) {
    for (let k = 0; k < nodes.length; k++) {
      const n = Math.SQRT2 * sigma * nodes[k];
      const y = levels[j] + n;
      // Log-metrics relative to the transmitted level keep the exponents small.
      for (let l = 0; l < L; l++) metric[l] = (n * n - (y - levels[l]) ** 2) / (2 * sigma * sigma);
      const all = logSumExp(metric, L, 0, 0);
      let term = 0;
      if (bitWise) {
        for (let i = 0; i < b; i++) {
          const mask = 1 << (b - 1 - i);
          term += all - logSumExp(metric, L, mask, labels[j] & mask, labels);
        }
      } else {
        term = all;
      }
      loss += weights[k] * term;
    }
  }
  // E over n: π^(−1/2)·Σ wₖ f; average over the L levels; natural log to bits.
  return b - loss / (Math.sqrt(Math.PI) * L * Math.LN2);
}

// log Σ e^(metric[l]) over the levels whose label has (label & mask) === want.
function logSumExp(metric: Float64Array, L: number, mask: number, want: number, labels?: Uint8Array): number {
  let max = Number.NEGATIVE_INFINITY;
  for (let l = 0; l < L; l++) if ((!labels || (labels[l] & mask) === want) && metric[l] > max) max = metric[l];
  let s = 0;
  for (let l = 0; l < L; l++) if (!labels || (labels[l] & mask) === want) s += Math.exp(metric[l] - max);
  return max + Math.log(s);
}

/**
 * The Es/N0 (dB) at which Gray square QAM in AWGN reaches a target NGMI
 * (GMI / log2 M): the inverse of {@link theoryGmi}, by bisection on the dB
 * scale (the GMI is strictly increasing in the SNR), to 1e-9 dB. With an
 * NGMI FEC threshold it gives the SNR a soft-decision code needs.
 * @param ngmi target NGMI in (0, 1)
 * @returns Es/N0, dB
 * @throws RangeError for an NGMI outside (0, 1) or one that needs an SNR outside ±60 dB
 * @example snrForNgmi('16qam', 0.8) // Es/N0 for 3.2 bit per symbol
 */
export function snrForNgmi(modulation: ModulationName, ngmi: number, options: QuadratureOptions = {}): number {
  if (!(ngmi > 0 && ngmi < 1)) throw new RangeError(`snrForNgmi: expected an NGMI in (0, 1), received ${ngmi}`);
  const target = ngmi * constellation(modulation).bitsPerSymbol;
  let lo = -60;
  let hi = 60;
  if (theoryGmi(modulation, lo, options) > target || theoryGmi(modulation, hi, options) < target) {
    throw new RangeError(`snrForNgmi: an NGMI of ${ngmi} is not reached between ${lo} and ${hi} dB`);
  }
  while (hi - lo > 1e-9) {
    const mid = 0.5 * (lo + hi);
    if (theoryGmi(modulation, mid, options) < target) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

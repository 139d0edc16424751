import { type Constellation, constellation, type ModulationName } from '@intradyne/core';
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
 *
 * A shaped format (Maxwell–Boltzmann prior P, which factorizes over the
 * axes into per-level priors Pⱼ) weights the sums and the average by the
 * prior, and b becomes the entropy Hₐ of the per-axis prior (Alvarado et
 * al., JLT 36(2), 2018, for the GMI of non-uniform signalling):
 *
 *   GMI_PAM = Hₐ − Σⱼ Pⱼ·Σᵢ E_n[ log2( Σₗ Pₗ·e^(…) / Σ_{l: cᵢ(l) = cᵢ(j)} Pₗ·e^(…) ) ].
 *
 * Cross QAM and 8QAM, whose labels do not split by axis, are integrated over
 * the plane with a product Gauss–Hermite rule (see {@link theoryMi}).
 * @returns GMI in bits per symbol per polarization, in [0, H] (H = log2 M for a uniform format)
 * @throws RangeError for an unknown modulation, a NaN SNR or a bad node count
 * @example theoryGmi('16qam', 10) // ≈ 3.1636
 */
export function theoryGmi(modulation: ModulationName, snrDb: number, options: QuadratureOptions = {}): number {
  const c = constellation(modulation);
  if (!c.square) return planeInformation(c, snrDb, options, true);
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
  const c = constellation(modulation);
  if (!c.square) return planeInformation(c, snrDb, options, false);
  return 2 * pamInformation(modulation, snrDb, options, false);
}

function pamInformation(modulation: ModulationName, snrDb: number, options: QuadratureOptions, bitWise: boolean): number {
  if (Number.isNaN(snrDb)) throw new RangeError('AWGN information: expected an SNR in dB, received NaN');
  const c = constellation(modulation);
  if (c.shaped) return shapedPamInformation(c, snrDb, options, bitWise);
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

/** The per-axis PAM information of shaped square QAM (see {@link theoryGmi}), weighted by the per-level prior. */
function shapedPamInformation(c: Constellation, snrDb: number, options: QuadratureOptions, bitWise: boolean): number {
  const L = c.levelsPerAxis;
  const b = c.bitsPerSymbol / 2;
  const prior = new Float64Array(L);
  for (let p = 0; p < c.order; p++) prior[Math.round((c.points[2 * p] / c.scale + L - 1) / 2)] += c.prior[p];
  let entropy = 0;
  for (let j = 0; j < L; j++) if (prior[j] > 0) entropy -= prior[j] * Math.log2(prior[j]);
  const { nodes, weights } = gaussHermite(options.nodes ?? 64);
  const snr = 10 ** (snrDb / 10);
  if (snr === 0) return 0;
  if (!Number.isFinite(snr)) return entropy;
  const sigma = Math.sqrt(1 / (2 * snr));
  const levels = new Float64Array(L);
  const labels = new Uint8Array(L);
  const logPrior = new Float64Array(L);
  for (let j = 0; j < L; j++) {
    levels[j] = (2 * j - (L - 1)) * c.scale;
    labels[j] = j ^ (j >> 1);
    logPrior[j] = Math.log(prior[j]);
  }
  const metric = new Float64Array(L);
  let loss = 0;
  for (let j = 0; j < L; j++) {
    let own = 0;
    for (let k = 0; k < nodes.length; k++) {
      const n = Math.SQRT2 * sigma * nodes[k];
      const y = levels[j] + n;
      // ln(Pₗ·q(y|sₗ)) relative to the sent level's Gaussian term.
      for (let l = 0; l < L; l++) metric[l] = logPrior[l] + (n * n - (y - levels[l]) ** 2) / (2 * sigma * sigma);
      const all = logSumExp(metric, L, 0, 0);
      let term = 0;
      if (bitWise) {
        for (let i = 0; i < b; i++) {
          const mask = 1 << (b - 1 - i);
          term += all - logSumExp(metric, L, mask, labels[j] & mask, labels);
        }
      } else {
        term = all - metric[j];
      }
      own += weights[k] * term;
    }
    loss += prior[j] * own;
  }
  return entropy - loss / (Math.sqrt(Math.PI) * Math.LN2);
}

/**
 * GMI or MI of any constellation in AWGN by a product Gauss–Hermite rule
 * over the complex noise n = nₓ + j·n_y (each of variance σ² = 1/(2·SNR)):
 *
 *   GMI = H − Σⱼ P(aⱼ)·E_n[ Σᵢ log2( Σₗ P(aₗ)·e^(−(|aⱼ − aₗ + n|² − |n|²)/(2σ²)) / Σ_{l: bᵢ(l) = bᵢ(j)} (…) ) ],
 *   MI  = H − Σⱼ P(aⱼ)·E_n[ log2( Σₗ P(aₗ)·e^(…) / P(aⱼ) ) ],
 *
 * E_n[f] ≈ (1/π)·Σₖ Σₘ wₖ·wₘ·f(√2·σ·(tₖ + j·tₘ)). Points farther than 16σ
 * plus the largest noise node from aⱼ are left out of the sums (their
 * terms are below e^(−40) of the sent point's). {@link theoryGmi} and
 * {@link theoryMi} use it for cross QAM and 8QAM; for square QAM it gives
 * what their per-axis integrals give, at n² instead of n nodes.
 * @param bitWise true for the GMI, false for the MI
 * @returns bits per symbol per polarization
 * @throws RangeError for a NaN SNR or a bad node count
 * @example planeInformation(constellation('32qam'), 15, {}, true) // the GMI of 32QAM at 15 dB
 */
export function planeInformation(c: Constellation, snrDb: number, options: QuadratureOptions, bitWise: boolean): number {
  if (Number.isNaN(snrDb)) throw new RangeError('AWGN information: expected an SNR in dB, received NaN');
  const snr = 10 ** (snrDb / 10);
  if (snr === 0) return 0;
  if (!Number.isFinite(snr)) return c.entropy;
  // The plane costs n² nodes per point: 32 per axis by default.
  const { nodes, weights } = gaussHermite(options.nodes ?? 32);
  const sigma = Math.sqrt(1 / (2 * snr));
  const p = c.points;
  const M = c.order;
  const m = c.bitsPerSymbol;
  const logPrior = new Float64Array(M);
  for (let l = 0; l < M; l++) logPrior[l] = Math.log(c.prior[l]);
  const reach = 16 * sigma + Math.SQRT2 * Math.SQRT2 * sigma * nodes[nodes.length - 1];
  const near = new Int32Array(M);
  const metric = new Float64Array(M);
  const labels = new Uint8Array(M);
  for (let l = 0; l < M; l++) labels[l] = l;
  let loss = 0;
  for (let j = 0; j < M; j++) {
    let count = 0;
    for (let l = 0; l < M; l++) if (Math.hypot(p[2 * l] - p[2 * j], p[2 * l + 1] - p[2 * j + 1]) <= reach) near[count++] = l;
    let own = 0;
    for (let a = 0; a < nodes.length; a++) {
      const nx = Math.SQRT2 * sigma * nodes[a];
      for (let b = 0; b < nodes.length; b++) {
        const ny = Math.SQRT2 * sigma * nodes[b];
        const yx = p[2 * j] + nx;
        const yy = p[2 * j + 1] + ny;
        // Metrics of the points left out stay at −∞ (their exponentials are 0).
        metric.fill(Number.NEGATIVE_INFINITY);
        for (let i = 0; i < count; i++) {
          const l = near[i];
          metric[l] = logPrior[l] + (nx * nx + ny * ny - (yx - p[2 * l]) ** 2 - (yy - p[2 * l + 1]) ** 2) / (2 * sigma * sigma);
        }
        const all = logSumExp(metric, M, 0, 0);
        let term = 0;
        if (bitWise) {
          for (let i = 0; i < m; i++) {
            const mask = 1 << (m - 1 - i);
            term += all - logSumExp(metric, M, mask, j & mask, labels);
          }
        } else {
          term = all - logPrior[j];
        }
        own += weights[a] * weights[b] * term;
      }
    }
    loss += c.prior[j] * own;
  }
  return c.entropy - loss / (Math.PI * Math.LN2);
}

/**
 * The Es/N0 (dB) at which a modulation in AWGN reaches a target NGMI
 * (GMI / log2 M; for a shaped format 1 − (H − GMI)/log2 M): the inverse of
 * {@link theoryGmi}, by bisection on the dB scale (the GMI is strictly
 * increasing in the SNR), to 1e-9 dB. With an NGMI FEC threshold it gives
 * the SNR a soft-decision code needs.
 * @param ngmi target NGMI in (0, 1)
 * @returns Es/N0, dB
 * @throws RangeError for an NGMI outside (0, 1) or one that needs an SNR outside ±60 dB
 * @example snrForNgmi('16qam', 0.8) // Es/N0 for 3.2 bit per symbol
 */
export function snrForNgmi(modulation: ModulationName, ngmi: number, options: QuadratureOptions = {}): number {
  if (!(ngmi > 0 && ngmi < 1)) throw new RangeError(`snrForNgmi: expected an NGMI in (0, 1), received ${ngmi}`);
  const c = constellation(modulation);
  const target = c.shaped ? c.entropy - (1 - ngmi) * c.bitsPerSymbol : ngmi * c.bitsPerSymbol;
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

/**
 * The Es/N0 (dB) at which a modulation in AWGN reaches a GMI (bits per
 * symbol per polarization): the inverse of {@link theoryGmi}, by bisection
 * on the dB scale to 1e-6 dB. With a measured GMI it gives the
 * GMI-equivalent SNR, whose difference from the SNR set or measured is an
 * implementation penalty for shaped formats.
 * @param gmi in (0, H), H the entropy of the prior (log2 M for a uniform format)
 * @throws RangeError for a GMI outside (0, H) or one not reached between ±60 dB
 * @example snrForGmi('ps-64qam:entropy=4.5', 4.2) // ≈ 14.5 dB
 */
export function snrForGmi(modulation: ModulationName, gmi: number, options: QuadratureOptions = {}): number {
  const c = constellation(modulation);
  if (!(gmi > 0 && gmi < c.entropy)) throw new RangeError(`snrForGmi: expected a GMI in (0, ${c.entropy}) bits, received ${gmi}`);
  let lo = -60;
  let hi = 60;
  if (theoryGmi(modulation, hi, options) < gmi) throw new RangeError(`snrForGmi: a GMI of ${gmi} is not reached by ${hi} dB`);
  while (hi - lo > 1e-6) {
    const mid = 0.5 * (lo + hi);
    if (theoryGmi(modulation, mid, options) < gmi) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

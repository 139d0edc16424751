import { type Constellation, constellation, type ModulationName } from '@intradyne/core';
import erfc from '@stdlib/math-base-special-erfc';
import { type ErrorProbabilities, regionErrorProbabilities } from './decision-regions.js';

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
 * For QPSK this is ½·erfc(√(Es/(2N0))). Other constellations: shaped square
 * QAM per axis, exactly (each axis a PAM with its prior, decided at the
 * midpoints between levels; see {@link axisErrorProbabilities}); cross QAM
 * and 8QAM by their decision regions ({@link regionErrorProbabilities}).
 * @param modulation any modulation name
 * @param snrDb Es/N0 per polarization, dB (any real; −Infinity gives 0.5)
 * @returns the BER, in [0, 0.5]
 * @throws RangeError for an unknown modulation or a NaN SNR
 * @example theoryBer('qpsk', 9.8) // ≈ 1.0e-3
 */
export function theoryBer(modulation: ModulationName, snrDb: number): number {
  if (Number.isNaN(snrDb)) throw new RangeError('theoryBer: expected an SNR in dB, received NaN');
  const c = constellation(modulation);
  if (c.square && c.shaped) return axisErrorProbabilities(c, snrDb).ber;
  if (!c.square) return regionErrorProbabilities(c, snrDb).ber;
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
  const c = constellation(modulation);
  // The integrals of the other constellations cost milliseconds each: a root finder that needs few.
  if (!c.square || c.shaped) {
    // First guess: uniform square QAM's closed form at the same least distance (16QAM's, scaled in dB).
    const guess = snrForBer('16qam', ber) + 20 * Math.log10(constellation('16qam').minDistance / c.minDistance);
    return logRoot((snrDb) => theoryBer(modulation, snrDb), ber, lo, hi, guess);
  }
  // The closed form of uniform square QAM, by bisection to 1e-10 dB.
  while (hi - lo > 1e-10) {
    const mid = 0.5 * (lo + hi);
    if (theoryBer(modulation, mid) > ber) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * The Es/N0 (dB) in [lo, hi] at which a decreasing error ratio f equals
 * `target`, to 1e-6 dB, in few evaluations of f (each an integral costing
 * milliseconds). Near its root ln f is nearly linear in the linear SNR
 * (ln Q(√x) ≈ −x/2), so the Illinois variant of regula falsi on ln f over
 * the linear SNR converges in a handful of steps, from a bracket found by
 * stepping 2 dB either way from `guess`; a bisection step whenever the
 * secant keeps more than half of the bracket.
 */
function logRoot(f: (snrDb: number) => number, target: number, lo: number, hi: number, guess: number): number {
  const g = (db: number) => {
    const v = f(db);
    // An error ratio that underflows to 0 is far below any target.
    return (v > 0 ? Math.log(v) : -745) - Math.log(target);
  };
  let a = Math.max(lo, Math.min(hi, guess - 1));
  let b = Math.min(hi, a + 2);
  let ga = g(a);
  let gb = g(b);
  while (ga < 0 && a > lo) {
    b = a;
    gb = ga;
    a = Math.max(lo, a - 2);
    ga = g(a);
  }
  while (gb > 0 && b < hi) {
    a = b;
    ga = gb;
    b = Math.min(hi, b + 2);
    gb = g(b);
  }
  const linear = (db: number) => 10 ** (db / 10);
  let side = 0;
  while (b - a > 1e-6) {
    const ua = linear(a);
    const ub = linear(b);
    let x = 10 * Math.log10((ua * gb - ub * ga) / (gb - ga));
    if (!(x > a && x < b)) x = 0.5 * (a + b);
    const width = b - a;
    const gx = g(x);
    if (gx === 0) return x;
    if (gx > 0) {
      a = x;
      ga = gx;
      if (side === -1) gb /= 2;
      side = -1;
    } else {
      b = x;
      gb = gx;
      if (side === 1) ga /= 2;
      side = 1;
    }
    if (b - a > 0.5 * width) {
      const mid = 0.5 * (a + b);
      const gm = g(mid);
      if (gm > 0) {
        a = mid;
        ga = gm;
      } else {
        b = mid;
        gb = gm;
      }
      side = 0;
    }
  }
  return 0.5 * (a + b);
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

/**
 * Symbol error ratio of minimum-distance decisions in AWGN at Es/N0 =
 * `snrDb`. Uniform square QAM in closed form (Proakis, Digital
 * Communications, 5th ed., eq. 4.3-30): SER = 1 − (1 − P√M)²,
 * P√M = 2·(1 − 1/√M)·Q(√(3·Es/N0 / (M − 1))); shaped square QAM per axis
 * ({@link axisErrorProbabilities}); cross QAM and 8QAM by their decision
 * regions ({@link regionErrorProbabilities}).
 * @throws RangeError for an unknown modulation or a NaN SNR
 * @example theorySer('16qam', 16) // ≈ 7.4e-3
 */
export function theorySer(modulation: ModulationName, snrDb: number): number {
  if (Number.isNaN(snrDb)) throw new RangeError('theorySer: expected an SNR in dB, received NaN');
  const c = constellation(modulation);
  if (c.square && c.shaped) return axisErrorProbabilities(c, snrDb).ser;
  if (!c.square) return regionErrorProbabilities(c, snrDb).ser;
  const snr = 10 ** (snrDb / 10);
  const q = 0.5 * erfc(Math.sqrt((3 * snr) / (c.order - 1)) / Math.SQRT2);
  const axis = 2 * (1 - 1 / c.levelsPerAxis) * q;
  return 1 - (1 - axis) ** 2;
}

/**
 * Exact symbol and bit error ratios of square QAM with a prior that
 * factorizes over the axes (uniform, or Maxwell–Boltzmann) in AWGN: each
 * axis is a PAM of levels sᵢ with probabilities Pᵢ, decided at the
 * midpoints tᵢ between neighbouring levels, with Gaussian noise of
 * σ² = 1/(2·SNR):
 *
 *   P(l | i) = Φ((t_{l+1} − sᵢ)/σ) − Φ((t_l − sᵢ)/σ),
 *   BER = Σᵢ Pᵢ·Σ_{l≠i} P(l | i)·d_H(gᵢ, g_l) / log2 √M,   SER = 1 − (1 − Σᵢ Pᵢ·Σ_{l≠i} P(l | i))²,
 *
 * gᵢ the per-axis Gray codes (the definition of the error probabilities of
 * PAM, Proakis, Digital Communications, 5th ed., §4.3, with the prior).
 * @throws RangeError for a constellation that is not square QAM, or a NaN SNR
 * @example axisErrorProbabilities(constellation('ps-64qam:entropy=4.5'), 16).ber
 */
export function axisErrorProbabilities(c: Constellation, snrDb: number): ErrorProbabilities {
  if (!c.square) throw new RangeError(`axisErrorProbabilities: expected square QAM, received ${c.name}`);
  if (Number.isNaN(snrDb)) throw new RangeError('axisErrorProbabilities: expected an SNR in dB, received NaN');
  const L = c.levelsPerAxis;
  const bits = c.bitsPerSymbol / 2;
  const snr = 10 ** (snrDb / 10);
  const k = Math.sqrt(snr); // 1/(σ·√2)
  // Per-axis marginal prior of each level index.
  const prior = new Float64Array(L);
  for (let p = 0; p < c.order; p++) prior[Math.round((c.points[2 * p] / c.scale + L - 1) / 2)] += c.prior[p];
  const level = (i: number) => (2 * i - (L - 1)) * c.scale;
  let axisErrors = 0;
  let bitErrors = 0;
  for (let i = 0; i < L; i++) {
    for (let l = 0; l < L; l++) {
      if (l === i) continue;
      // The interval of level l, as distances from level i in units of σ·√2: an upper tail minus an upper tail.
      const lower = l === 0 ? Number.NEGATIVE_INFINITY : (level(l) - c.scale - level(i)) * k;
      const upper = l === L - 1 ? Number.POSITIVE_INFINITY : (level(l) + c.scale - level(i)) * k;
      const p = l > i ? 0.5 * (erfc(lower) - erfc(upper)) : 0.5 * (erfc(-upper) - erfc(-lower));
      axisErrors += prior[i] * p;
      let d = i ^ (i >> 1) ^ (l ^ (l >> 1));
      let ones = 0;
      for (; d; d >>= 1) ones += d & 1;
      bitErrors += prior[i] * p * ones;
    }
  }
  return { ser: 1 - (1 - axisErrors) ** 2, ber: bitErrors / bits };
}

/**
 * Probabilistic shaping by the Maxwell–Boltzmann family (Böcherer,
 * Steiner, Schulte, "Bandwidth efficient and rate-matched low-density
 * parity-check coded modulation", IEEE Trans. Commun. 63(12), 2015): over
 * the points gₖ of a constellation at their integer coordinates (square QAM
 * at the odd integers ±1, ±3 … per axis),
 *
 *   P(gₖ) = e^(−ν·|gₖ|²) / Σⱼ e^(−ν·|gⱼ|²),   ν ≥ 0,
 *
 * whose entropy H(ν) = −Σ P·log2 P falls from log2 M at ν = 0 (uniform)
 * towards 2 bits (the four innermost points) as ν grows. A shaped format is
 * named by either ν or the entropy it gives.
 */

/** How a shaped format is parameterized: the entropy of its prior (bits per symbol) or ν of the Maxwell–Boltzmann family. */
export type ShapingParameter =
  | {
      /** H, bits per symbol per polarization: above 2 and at most log2 M. */
      readonly entropy: number;
    }
  | {
      /** ν ≥ 0 over the points at their integer coordinates (odd integers per axis). */
      readonly nu: number;
    };

/**
 * The Maxwell–Boltzmann prior of points with squared magnitudes `energies`.
 * @param energies |gₖ|² of the M points at their integer coordinates
 * @param nu ν ≥ 0
 * @returns M probabilities summing to 1
 * @example maxwellBoltzmann(Float64Array.of(2, 2, 10, 10), 0) // [0.25, 0.25, 0.25, 0.25]
 */
export function maxwellBoltzmann(energies: Float64Array, nu: number): Float64Array {
  const p = new Float64Array(energies.length);
  let least = Number.POSITIVE_INFINITY;
  for (let k = 0; k < energies.length; k++) least = Math.min(least, energies[k]);
  let sum = 0;
  // Relative to the least energy, so that a large ν does not underflow every term.
  for (let k = 0; k < energies.length; k++) sum += p[k] = Math.exp(-nu * (energies[k] - least));
  for (let k = 0; k < energies.length; k++) p[k] /= sum;
  return p;
}

/**
 * Entropy of a distribution, bits: H = −Σ pₖ·log2 pₖ (terms with pₖ = 0 add nothing).
 * @example entropyBits(Float64Array.of(0.5, 0.25, 0.25)) // 1.5
 */
export function entropyBits(p: Float64Array): number {
  let h = 0;
  for (let k = 0; k < p.length; k++) if (p[k] > 0) h -= p[k] * Math.log2(p[k]);
  return h;
}

/**
 * The ν ≥ 0 at which the Maxwell–Boltzmann prior of the points has the
 * given entropy, by bisection (H(ν) decreases strictly for points of more
 * than one energy) to the resolution of a double.
 * @param energies |gₖ|² of the M points at their integer coordinates
 * @param entropy H, bits: above the entropy of the least-energy points alone and at most log2 M
 * @throws RangeError for an entropy outside that range
 * @example nuForEntropy(energies64, 4.5) // ν of PS-64QAM at 4.5 bits per symbol
 */
export function nuForEntropy(energies: Float64Array, entropy: number): number {
  const full = Math.log2(energies.length);
  let least = Number.POSITIVE_INFINITY;
  for (let k = 0; k < energies.length; k++) least = Math.min(least, energies[k]);
  let inner = 0;
  for (let k = 0; k < energies.length; k++) if (energies[k] === least) inner++;
  const floor = Math.log2(inner);
  if (!(entropy > floor && entropy <= full))
    throw new RangeError(`shaping: expected an entropy above ${floor} and at most ${full} bits, received ${entropy}`);
  if (entropy === full) return 0;
  let lo = 0;
  let hi = 1e-3;
  while (entropyBits(maxwellBoltzmann(energies, hi)) > entropy) {
    lo = hi;
    hi *= 2;
  }
  for (let i = 0; i < 200 && hi > lo; i++) {
    const mid = 0.5 * (lo + hi);
    if (mid === lo || mid === hi) break;
    if (entropyBits(maxwellBoltzmann(energies, mid)) > entropy) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * The Kaiser window and its design formulas (Kaiser, "Nonrecursive digital
 * filter design using the I0-sinh window function", Proc. IEEE ISCAS 1974;
 * Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., §7.5.3).
 *
 * For a lowpass with stopband attenuation A dB (passband ripple of the same
 * δ = 10^(−A/20)) and a transition width Δf in cycles per sample:
 *   β = 0.1102·(A − 8.7)                          for A > 50
 *   β = 0.5842·(A − 21)^0.4 + 0.07886·(A − 21)    for 21 ≤ A ≤ 50
 *   β = 0                                         for A < 21
 *   M = (A − 8)/(2.285·2π·Δf)   (filter order; M + 1 taps)
 */

/**
 * Modified Bessel function of the first kind, order zero, by its power
 * series I0(x) = Σₖ ((x/2)ᵏ/k!)², summed until the terms no longer change
 * the sum (fast for the |x| ≤ 30 a window needs).
 * @example besselI0(0) // 1
 */
export function besselI0(x: number): number {
  const h = (x * x) / 4;
  let sum = 1;
  let term = 1;
  for (let k = 1; k < 500; k++) {
    term *= h / (k * k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}

/**
 * Kaiser window w(u) = I0(β·√(1 − u²))/I0(β) for |u| ≤ 1, 0 outside.
 * @param u position relative to the half-length, in [−1, 1]
 * @param beta shape parameter β ≥ 0
 * @example kaiserWindow(0, kaiserBeta(80)) // 1 at the centre
 */
export function kaiserWindow(u: number, beta: number): number {
  if (u < -1 || u > 1) return 0;
  return besselI0(beta * Math.sqrt(1 - u * u)) / besselI0(beta);
}

/**
 * Kaiser's β for a stopband attenuation `attenuationDb` (dB).
 * @example kaiserBeta(80) // ≈ 7.86 for 80 dB of stop-band attenuation
 */
export function kaiserBeta(attenuationDb: number): number {
  const a = attenuationDb;
  if (a > 50) return 0.1102 * (a - 8.7);
  if (a >= 21) return 0.5842 * (a - 21) ** 0.4 + 0.07886 * (a - 21);
  return 0;
}

/**
 * Kaiser's filter order M = (A − 8)/(2.285·2π·Δf) for attenuation A (dB) and a
 * transition width Δf (cycles per sample); the filter has M + 1 taps.
 * @example kaiserOrder(80, 0.05) // taps for 80 dB over a transition of 5 % of the sample rate
 */
export function kaiserOrder(attenuationDb: number, transitionWidth: number): number {
  return (attenuationDb - 8) / (2.285 * 2 * Math.PI * transitionWidth);
}

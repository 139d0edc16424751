/**
 * Phase unwrapping for estimators that are ambiguous modulo a period (π/2
 * for the fourth-power and blind-phase-search estimators of square QAM).
 *
 *   θₖ = θ̂ₖ + P·round((θₖ₋₁ − θ̂ₖ) / P)
 *
 * picks, among the equivalent phases θ̂ₖ + m·P, the one nearest the previous
 * unwrapped phase, so that the track is continuous and can follow a carrier
 * that turns by many periods (Pfau, Hoffmann, Noé, JLT 27(8), 2009, the
 * unwrapping step of their blind phase search).
 *
 * @param raw the new estimate θ̂ₖ, rad (any value)
 * @param previous the previous unwrapped phase θₖ₋₁, rad, or NaN for the first estimate
 * @param period the ambiguity P, rad (π/2 for square QAM)
 * @returns the unwrapped phase θₖ, rad (`raw` itself when `previous` is NaN)
 * @example unwrapPhase(-0.7, 0.8, Math.PI / 2) // ≈ 0.871: −0.7 + π/2
 */
export function unwrapPhase(raw: number, previous: number, period: number): number {
  if (Number.isNaN(previous)) return raw;
  return raw + period * Math.round((previous - raw) / period);
}

/** The phase ambiguity of square QAM under the fourth power: π/2 rad. */
export const QUARTER_TURN = Math.PI / 2;

/**
 * Wraps an angle into (−π, π].
 * @param a angle, rad
 * @example wrapAngle(3 * Math.PI / 2) // −π/2
 */
export function wrapAngle(a: number): number {
  const w = a - 2 * Math.PI * Math.round(a / (2 * Math.PI));
  return w <= -Math.PI ? w + 2 * Math.PI : w;
}

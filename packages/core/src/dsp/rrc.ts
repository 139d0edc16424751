/**
 * Raised-cosine spectra and root-raised-cosine pulses (Proakis, Digital
 * Communications, 5th ed., §9.2).
 *
 * The raised cosine P(f) with roll-off β and symbol period T is 1 for
 * |f| ≤ (1 − β)/(2T), ½·(1 + cos(πT/β·(|f| − (1 − β)/(2T)))) up to
 * (1 + β)/(2T), and 0 beyond; its aliases at multiples of 1/T add up to 1
 * (Nyquist's criterion). The root-raised cosine is √P(f): a transmitter and
 * a matched receiver filter of this shape together make P(f).
 */

/**
 * Raised-cosine spectrum at frequency `f` (Hz), symbol rate `symbolRate` (Bd), roll-off β ∈ [0, 1].
 * @example raisedCosineSpectrum(0, 32e9, 0.1) // 1 in the flat band; 0.5 at f = Rs/2
 */
export function raisedCosineSpectrum(f: number, symbolRate: number, rollOff: number): number {
  const a = Math.abs(f) / symbolRate; // f·T
  const lo = (1 - rollOff) / 2;
  const hi = (1 + rollOff) / 2;
  if (a <= lo) return 1;
  if (a >= hi) return 0;
  return 0.5 * (1 + Math.cos((Math.PI / rollOff) * (a - lo)));
}

/**
 * Root-raised-cosine amplitude response √P(f).
 * @example rootRaisedCosineSpectrum(16e9, 32e9, 0.1) // √0.5 at the band edge
 */
export function rootRaisedCosineSpectrum(f: number, symbolRate: number, rollOff: number): number {
  return Math.sqrt(raisedCosineSpectrum(f, symbolRate, rollOff));
}

/**
 * The transmitter roll-off assumed when none is stated: 0.1, the
 * simulator's, and the default of every stage and setting that takes one.
 */
export const DEFAULT_ROLL_OFF = 0.1;

/**
 * Validates a roll-off factor.
 * @throws RangeError unless 0 < β ≤ 1
 * @example checkRollOff(0.1, 'my-filter'); // throws a RangeError for 0 or 1.5
 */
export function checkRollOff(rollOff: number, where: string): void {
  if (!(rollOff > 0 && rollOff <= 1)) {
    throw new RangeError(`${where}: expected a roll-off in (0, 1], received ${rollOff}`);
  }
}

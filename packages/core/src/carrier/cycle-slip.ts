/**
 * A cycle slip: the recovered carrier phase jumps by a multiple of π/2
 * relative to the true one, so every later decision is rotated by it until
 * the next slip (Taylor, "Phase estimation methods for optical coherent
 * detection using digital signal processing", JLT 27(7), 2009).
 */
export interface CycleSlip {
  /** Index of the first symbol after the slip, from the start of the stream (per polarization). */
  readonly position: number;
  /** The jump of the recovered phase in quarter turns: +1 is +π/2, −1 is −π/2, 2 is π (either way). */
  readonly quadrants: number;
}

/** How slips were found. */
export type SlipMethod = 'reference' | 'phase-jump';

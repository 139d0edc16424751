import type { ComplexArray } from '../signal/complex.js';

/**
 * A streaming carrier-phase estimator with look-ahead, as the phase-recovery
 * stage drives it: symbols go in one at a time, and the phase of the symbol
 * `delay` places back comes out once its whole window has been seen.
 *
 * The kernels hold their state in typed arrays allocated once; `push` does
 * not allocate. Symbols are expected at the constellation's scale (unit
 * average power), as the equalizer delivers them.
 */
export interface PhaseKernel {
  /** Look-ahead, in symbols: the phase of symbol n is known once symbol n + delay has been pushed. */
  readonly delay: number;
  /**
   * Feeds symbol n (the count of earlier pushes). `present` is false for the
   * absent symbols pushed after the end of the stream to drain the window:
   * they contribute nothing.
   * @returns the unwrapped carrier phase of symbol n − delay (rad), or NaN while n < delay
   */
  push(re: number, im: number, present: boolean): number;
  /** Back to the freshly created state. */
  reset(): void;
}

/**
 * A {@link PhaseKernel} that can also estimate one phase from the symbols of
 * both polarizations at once (the lasers' phase is common to them).
 */
export interface PairPhaseKernel extends PhaseKernel {
  /**
   * Feeds symbol n of each polarization, both at the same carrier phase (y
   * already turned by the phase difference between the polarizations).
   * @returns the unwrapped common phase of symbol n − delay (rad), or NaN while n < delay
   */
  pushPair(xr: number, xi: number, yr: number, yi: number, present: boolean): number;
}

/**
 * Drives a kernel over a whole array (one polarization) and drains it.
 * @param symbols N complex symbols
 * @returns N unwrapped phases, rad
 * @example const theta = runKernel(new ViterbiViterbiKernel(constellation('qpsk')), x); // one phase per symbol of x
 */
export function runKernel(kernel: PhaseKernel, symbols: ComplexArray): Float64Array {
  const n = symbols.length >> 1;
  const phase = new Float64Array(n);
  let out = 0;
  for (let k = 0; k < n + kernel.delay; k++) {
    const present = k < n;
    const theta = kernel.push(present ? symbols[2 * k] : 0, present ? symbols[2 * k + 1] : 0, present);
    if (!Number.isNaN(theta) && out < n) phase[out++] = theta;
  }
  return phase;
}

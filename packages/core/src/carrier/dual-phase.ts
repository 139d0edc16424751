import { type Constellation, nearestLabel, nearestLevel } from '../modulation/constellation.js';
import type { ComplexArray } from '../signal/complex.js';
import type { PairPhaseKernel, PhaseKernel } from './phase-kernel.js';

/**
 * A carrier-phase estimator over both polarizations, as the phase-recovery
 * stage drives it: one symbol of each goes in, and the phases of the symbols
 * `delay` places back come out.
 */
export interface DualPhaseKernel {
  /** Look-ahead, in symbols. */
  readonly delay: number;
  /**
   * Feeds symbol n of each polarization (`present` false for the absent
   * symbols that drain the window after the end of the stream).
   * @param out receives [θx, θy] of symbol n − delay, rad, unwrapped
   * @returns false while n < delay (nothing written)
   */
  push(xr: number, xi: number, yr: number, yi: number, present: boolean, out: Float64Array): boolean;
  /** Back to the freshly created state. */
  reset(): void;
}

/**
 * Each polarization estimated on its own, by its own kernel: the phases of
 * x and y owe nothing to each other.
 * @example const k = new SeparatePhaseKernels(new ViterbiViterbiKernel(c), new ViterbiViterbiKernel(c));
 */
export class SeparatePhaseKernels implements DualPhaseKernel {
  readonly delay: number;

  constructor(
    private readonly x: PhaseKernel,
    private readonly y: PhaseKernel,
  ) {
    this.delay = x.delay;
  }

  push(xr: number, xi: number, yr: number, yi: number, present: boolean, out: Float64Array): boolean {
    const tx = this.x.push(xr, xi, present);
    const ty = this.y.push(yr, yi, present);
    if (Number.isNaN(tx)) return false;
    out[0] = tx;
    out[1] = ty;
    return true;
  }

  reset(): void {
    this.x.reset();
    this.y.reset();
  }
}

/** Default gain of the loop that tracks the phase difference between the polarizations: a memory of about 2/μ = 2,048 symbols. */
export const RELATIVE_PHASE_LOOP_GAIN = 1 / 1024;

/**
 * One carrier phase for both polarizations: the lasers' phase noise and
 * frequency offset are common to them, so a window of N symbols of each
 * tells the phase as well as a window of 2N symbols of one, and the phase
 * can follow the lasers twice as fast for the same noise.
 *
 * The two outputs of a blind equalizer also differ by a phase Δ of their
 * own (y ≈ x-like symbols turned by e^(jΔ); CMA and RDE ignore phase, and a
 * decision-directed equalizer's loops run per output), which is constant
 * or slow. So y is turned by e^(−jΔ) before the common estimate θ is made
 * from both (`pushPair` of the kernel), and the phases returned are θ for x
 * and θ + Δ for y. Δ starts from an estimate on the start of the stream
 * ({@link relativePhase}) and follows a slow wander with a first-order
 * decision-directed loop on the symbol whose phase was just found:
 *
 *   φₚ = Im(zₚ·d*ₚ)/|dₚ|²  (zₚ the de-rotated symbol, dₚ its decision),   Δ ← Δ + μ·(φᵧ − φₓ)
 *
 * The π/2 ambiguity of Δ does not matter (the constellation is symmetric
 * under it; the synchronization with the reference resolves it per
 * polarization). O(1) per symbol besides the kernel; no allocation.
 * @example const joint = new JointPhaseTracker(new BlindPhaseSearchKernel(c, { halfWindow: 32 }), c, relativePhase(x, y));
 */
export class JointPhaseTracker implements DualPhaseKernel {
  readonly delay: number;
  private readonly len: number;
  /** Symbols waiting for their phase: x, y turned by the Δ of their arrival, that Δ, and presence. */
  private readonly xr: Float64Array;
  private readonly xi: Float64Array;
  private readonly yr: Float64Array;
  private readonly yi: Float64Array;
  private readonly deltaAt: Float64Array;
  private readonly present: Uint8Array;
  private readonly scale: number;
  private readonly top: number;
  /** The constellation when it is not square QAM (nearest point by {@link nearestLabel}), else null. */
  private readonly other: Constellation | null;
  private pushed = 0;
  private delta: number;

  /**
   * @param kernel the estimator (its `pushPair` is used)
   * @param c the constellation, for the loop's decisions (at unit average power)
   * @param initialDelta Δ at the start, rad
   * @param loopGain μ of the relative-phase loop (0 holds Δ fixed)
   */
  constructor(
    private readonly kernel: PairPhaseKernel,
    c: Constellation,
    private readonly initialDelta: number,
    private readonly loopGain: number = RELATIVE_PHASE_LOOP_GAIN,
  ) {
    this.delay = kernel.delay;
    this.len = kernel.delay + 1;
    this.xr = new Float64Array(this.len);
    this.xi = new Float64Array(this.len);
    this.yr = new Float64Array(this.len);
    this.yi = new Float64Array(this.len);
    this.deltaAt = new Float64Array(this.len);
    this.present = new Uint8Array(this.len);
    this.scale = c.scale;
    this.top = c.levelsPerAxis - 1;
    this.other = c.square ? null : c;
    this.delta = initialDelta;
  }

  /** Δ now, rad: the phase of y's output relative to x's. */
  relativePhase(): number {
    return this.delta;
  }

  push(xr: number, xi: number, yr: number, yi: number, present: boolean, out: Float64Array): boolean {
    const slot = this.pushed % this.len;
    const d = this.delta;
    const cs = Math.cos(d);
    const sn = Math.sin(d);
    // y·e^(−jΔ)
    const ur = yr * cs + yi * sn;
    const ui = yi * cs - yr * sn;
    this.xr[slot] = xr;
    this.xi[slot] = xi;
    this.yr[slot] = ur;
    this.yi[slot] = ui;
    this.deltaAt[slot] = d;
    this.present[slot] = present ? 1 : 0;
    this.pushed++;
    const theta = this.kernel.pushPair(xr, xi, ur, ui, present);
    if (Number.isNaN(theta)) return false;
    // The centre symbol, D pushes back, sits in the slot after the newest.
    const c = this.pushed % this.len;
    out[0] = theta;
    out[1] = theta + this.deltaAt[c];
    if (this.present[c] === 1 && this.loopGain > 0) {
      const ct = Math.cos(theta);
      const st = Math.sin(theta);
      const ex = this.phaseError(this.xr[c] * ct + this.xi[c] * st, this.xi[c] * ct - this.xr[c] * st);
      const ey = this.phaseError(this.yr[c] * ct + this.yi[c] * st, this.yi[c] * ct - this.yr[c] * st);
      this.delta += this.loopGain * (ey - ex);
    }
    return true;
  }

  reset(): void {
    this.kernel.reset();
    this.xr.fill(0);
    this.xi.fill(0);
    this.yr.fill(0);
    this.yi.fill(0);
    this.deltaAt.fill(0);
    this.present.fill(0);
    this.pushed = 0;
    this.delta = this.initialDelta;
  }

  /** Im(z·d*)/|d|² for the nearest point d of z = zr + j·zi. */
  private phaseError(zr: number, zi: number): number {
    const o = this.other;
    const l = o === null ? 0 : nearestLabel(o, zr, zi);
    const dr = o === null ? nearestLevel(zr, this.scale, this.top) : o.points[2 * l];
    const di = o === null ? nearestLevel(zi, this.scale, this.top) : o.points[2 * l + 1];
    return (zi * dr - zr * di) / (dr * dr + di * di);
  }
}

/**
 * The phase of y relative to x, Δ (y's symbols look like x's turned by
 * e^(jΔ)), modulo π/2, from the fourth power of their products:
 * Δ = arg Σₖ (yₖ·x*ₖ)⁴ / 4. For independent symbols of square QAM
 * E[(a·b*)⁴] = E[a⁴]·E[b⁴]* is real and positive (E a⁴ < 0 for every square
 * QAM), so the sum points at 4Δ whatever the common carrier phase.
 * @param x N symbols of x; y N symbols of y (the equalizer's outputs)
 * @returns Δ in (−π/4, π/4], rad (0 for empty input)
 * @example relativePhase(x, y) // ≈ 0.3 when y's output runs 0.3 rad ahead of x's
 */
export function relativePhase(x: ComplexArray, y: ComplexArray): number {
  let re = 0;
  let im = 0;
  const n = Math.min(x.length, y.length) >> 1;
  for (let k = 0; k < n; k++) {
    const ar = x[2 * k];
    const ai = x[2 * k + 1];
    const br = y[2 * k];
    const bi = y[2 * k + 1];
    // p = y·conj(x), then p⁴
    const pr = br * ar + bi * ai;
    const pi = bi * ar - br * ai;
    const r2 = pr * pr - pi * pi;
    const i2 = 2 * pr * pi;
    re += r2 * r2 - i2 * i2;
    im += 2 * r2 * i2;
  }
  if (re === 0 && im === 0) return 0;
  return Math.atan2(im, re) / 4;
}

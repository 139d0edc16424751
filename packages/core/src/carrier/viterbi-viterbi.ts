import type { Constellation } from '../modulation/constellation.js';
import type { ComplexArray } from '../signal/complex.js';
import { type PairPhaseKernel, runKernel } from './phase-kernel.js';
import { QUARTER_TURN, unwrapPhase } from './phase-unwrap.js';

/** Which symbols enter the fourth-power sum. */
export type ViterbiViterbiSelection = 'all' | 'diagonal-rings';

/** Options of the Viterbi–Viterbi estimator. */
export interface ViterbiViterbiOptions {
  /** N: the window holds 2N + 1 symbols centred on the symbol estimated (integer ≥ 0, default 16). */
  readonly halfWindow?: number;
  /**
   * The amplitude weighting F(ρ) = ρ^p of the Viterbi–Viterbi estimator
   * (p ≥ 0, default 4: the plain fourth power r⁴; p = 0 uses the angle only).
   */
  readonly amplitudeExponent?: number;
  /**
   * 'diagonal-rings' (the default for QAM): QPSK partitioning, only symbols
   * whose amplitude falls nearest a ring made of diagonal points (angles
   * π/4 + mπ/2) enter the sum — for 16QAM the inner and outer rings, for
   * 64QAM the rings of (1,1), (3,3) and (7,7); every symbol is still
   * de-rotated by the estimate. 'all': every symbol enters (square QAM keeps
   * a fourth-power tone, E[a⁴] < 0, but with more self-noise). QPSK is one
   * diagonal ring, so both choices are the same there.
   */
  readonly selection?: ViterbiViterbiSelection;
}

/**
 * Viterbi–Viterbi M-th power carrier-phase estimation with M = 4 (Viterbi &
 * Viterbi, "Nonlinear estimation of PSK-modulated carrier phase with
 * application to burst digital transmission", IEEE Trans. Inf. Theory 29(4),
 * 1983), on a sliding window with phase unwrapping:
 *
 *   Sₖ = Σ_{i=k−N}^{k+N} wᵢ·|rᵢ|^(p−4)·rᵢ⁴,   θ̂ₖ = arg(−Sₖ) / 4 ∈ (−π/4, π/4]
 *
 * (the minus sign removes the fourth power of the diagonal points, e^(jπ)),
 * wᵢ = 1 for the selected symbols and 0 for the others, then
 * θₖ = θ̂ₖ + (π/2)·round((θₖ₋₁ − θ̂ₖ)/(π/2)). The window sum is kept as a
 * running sum, so the cost per symbol does not depend on N. Symbols outside
 * the stream count as zero (a shorter window at both ends).
 *
 * {@link pushPair} estimates one phase from both polarizations: both
 * symbols' fourth powers enter the same sum.
 * @example const phase = runKernel(new ViterbiViterbiKernel(constellation('qpsk'), { halfWindow: 16 }), symbols.x);
 */
export class ViterbiViterbiKernel implements PairPhaseKernel {
  readonly delay: number;
  private readonly len: number;
  private readonly exponent: number;
  /** Ring boundaries on |r| (midpoints between ring radii) and whether each ring enters the sum. */
  private readonly bounds: Float64Array;
  private readonly selected: Uint8Array;
  private readonly ringRe: Float64Array;
  private readonly ringIm: Float64Array;
  /** Which window entries are selected symbols, and how many. */
  private readonly ringSel: Uint8Array;
  private selectedInWindow = 0;
  /** The new window entry being built: Σ weighted z⁴ (re, im) and the count of selected symbols. */
  private readonly term = new Float64Array(3);
  private sumRe = 0;
  private sumIm = 0;
  private slot = 0;
  private pushed = 0;
  private last = Number.NaN;

  /**
   * @param c the constellation (square QAM at unit average power)
   * @param options validated by the caller (the stage) — see {@link ViterbiViterbiOptions}
   */
  constructor(c: Constellation, options: ViterbiViterbiOptions = {}) {
    const n = options.halfWindow ?? 16;
    this.delay = n;
    this.len = 2 * n + 1;
    this.exponent = options.amplitudeExponent ?? 4;
    this.ringRe = new Float64Array(this.len);
    this.ringIm = new Float64Array(this.len);
    this.ringSel = new Uint8Array(this.len);
    const selection = options.selection ?? 'diagonal-rings';
    const radii = c.ringRadii2.map(Math.sqrt);
    this.bounds = new Float64Array(radii.length - 1);
    for (let r = 0; r + 1 < radii.length; r++) this.bounds[r] = (radii[r] + radii[r + 1]) / 2;
    this.selected = new Uint8Array(radii.length);
    for (let r = 0; r < radii.length; r++) this.selected[r] = selection === 'all' || diagonalOnly(c, radii[r]) ? 1 : 0;
  }

  push(re: number, im: number, present: boolean): number {
    const t = this.term;
    t[0] = 0;
    t[1] = 0;
    t[2] = 0;
    if (present) this.addTerm(re, im);
    return this.advance();
  }

  /**
   * Feeds one symbol of each polarization, both at the same carrier phase (y
   * already turned by the phase difference between the polarizations), and
   * returns their common phase: both fourth powers enter the window's sum.
   */
  pushPair(xr: number, xi: number, yr: number, yi: number, present: boolean): number {
    const t = this.term;
    t[0] = 0;
    t[1] = 0;
    t[2] = 0;
    if (present) {
      this.addTerm(xr, xi);
      this.addTerm(yr, yi);
    }
    return this.advance();
  }

  /** Adds a symbol's weighted fourth power, and whether it was selected, to the new window entry. */
  private addTerm(re: number, im: number): void {
    const p2 = re * re + im * im;
    const rho = Math.sqrt(p2);
    let ring = 0;
    while (ring < this.bounds.length && rho > this.bounds[ring]) ring++;
    if (this.selected[ring] !== 1) return;
    // r⁴ = (r²)², weighted by ρ^(p−4) for another amplitude law.
    const sr = re * re - im * im;
    const si = 2 * re * im;
    let zr = sr * sr - si * si;
    let zi = 2 * sr * si;
    if (this.exponent !== 4 && p2 > 0) {
      const g = rho ** (this.exponent - 4);
      zr *= g;
      zi *= g;
    }
    this.term[0] += zr;
    this.term[1] += zi;
    this.term[2]++;
  }

  /** Moves the window on by the new entry and returns the unwrapped phase of its centre (NaN while filling). */
  private advance(): number {
    const zr = this.term[0];
    const zi = this.term[1];
    const sel = this.term[2];
    // Sₖ ← Sₖ₋₁ + z_new − z_oldest
    this.sumRe += zr - this.ringRe[this.slot];
    this.sumIm += zi - this.ringIm[this.slot];
    this.ringRe[this.slot] = zr;
    this.ringIm[this.slot] = zi;
    this.selectedInWindow += sel - this.ringSel[this.slot];
    this.ringSel[this.slot] = sel;
    this.slot = this.slot + 1 === this.len ? 0 : this.slot + 1;
    this.pushed++;
    if (this.pushed <= this.delay) return Number.NaN;
    // With an empty window (no selected symbol) the phase holds.
    if (this.selectedInWindow === 0) return Number.isNaN(this.last) ? (this.last = 0) : this.last;
    const raw = Math.atan2(-this.sumIm, -this.sumRe) / 4;
    this.last = unwrapPhase(raw, this.last, QUARTER_TURN);
    return this.last;
  }

  reset(): void {
    this.ringRe.fill(0);
    this.ringIm.fill(0);
    this.ringSel.fill(0);
    this.selectedInWindow = 0;
    this.sumRe = 0;
    this.sumIm = 0;
    this.slot = 0;
    this.pushed = 0;
    this.last = Number.NaN;
  }
}

/** True when every point of radius ρ lies on a diagonal (|re| = |im|). */
function diagonalOnly(c: Constellation, rho: number): boolean {
  for (let k = 0; k < c.order; k++) {
    const re = c.points[2 * k];
    const im = c.points[2 * k + 1];
    if (Math.abs(Math.hypot(re, im) - rho) < 1e-9 && Math.abs(Math.abs(re) - Math.abs(im)) > 1e-9) return false;
  }
  return true;
}

/**
 * The Viterbi–Viterbi phase track of a whole symbol array (one
 * polarization): θₖ for every symbol, unwrapped, in rad.
 * @param symbols N complex symbols at unit average power
 * @returns N phases, rad
 * @example const theta = viterbiViterbiPhase(constellation('qpsk'), rx, { halfWindow: 8 });
 */
export function viterbiViterbiPhase(c: Constellation, symbols: ComplexArray, options: ViterbiViterbiOptions = {}): Float64Array {
  return runKernel(new ViterbiViterbiKernel(c, options), symbols);
}

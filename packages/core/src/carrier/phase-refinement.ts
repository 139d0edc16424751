import { type Constellation, nearestPoint } from '../modulation/constellation.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/** Symbol pairs given out by {@link PhaseRefinement}. */
export interface RefinedSymbols {
  /** The x symbols. */
  readonly x: ComplexArray;
  /** The y symbols. */
  readonly y: ComplexArray;
}

/**
 * Decision-directed refinement of the carrier phase of symbols that are
 * already carrier-recovered and equalized: each symbol pair (x, y) is turned
 * back by the phase of the products of a window of symbols with their
 * decisions, summed over both polarizations,
 *
 *   φₖ = arg Σᵢ (xᵢ·d*(xᵢ) + yᵢ·d*(yᵢ)),   i = k − N … k + N,   x'ₖ = xₖ·e^(−jφₖ)
 *
 * the maximum-likelihood phase of the window for known symbols, with the
 * decisions standing in for them (two-stage carrier recovery: Zhou, IEEE
 * PTL 22(14), 2010 — *from memory*). Run after a decision-directed
 * equalizer, it removes what the first phase estimate could not: that
 * estimate was made on the blind equalizer's output, whose SNR for dense
 * constellations is several dB below the refined symbols' (measured on
 * DP-256QAM at BER 1e-3: about 24 dB against 28). The residual phase must be
 * well inside the constellation's angular decision spacing, which it is
 * after blind phase search.
 *
 * Streaming with a look-ahead of N symbols: {@link process} returns the
 * symbols whose window is complete, {@link finish} the last N (their window
 * cut short by the end). Block-size invariant; the per-symbol loop works on
 * typed arrays allocated once.
 * @example const r = new PhaseRefinement(constellation('256qam'), 6); const out = r.process(x, y); const tail = r.finish();
 */
export class PhaseRefinement {
  private readonly len: number;
  /** Held symbols, one slot per window position (x then y, interleaved re/im). */
  private readonly heldX: Float64Array;
  private readonly heldY: Float64Array;
  /** Products z·d* of the held symbols, both polarizations summed. */
  private readonly uRe: Float64Array;
  private readonly uIm: Float64Array;
  private sumRe = 0;
  private sumIm = 0;
  /** Symbols pushed, and refined symbols given out. */
  private pushed = 0;
  private given = 0;
  /** The decision of the last {@link product}, reused. */
  private readonly decision = new Float64Array(2);
  private productRe = 0;
  private productIm = 0;

  /**
   * @param c the constellation, at unit average power
   * @param halfWindow N ≥ 0: the phase of a symbol is taken over 2N + 1 symbol pairs
   */
  constructor(
    private readonly c: Constellation,
    readonly halfWindow: number,
  ) {
    if (!Number.isInteger(halfWindow) || halfWindow < 0)
      throw new RangeError(`phase refinement: expected a half window ≥ 0, received ${halfWindow}`);
    this.len = 2 * halfWindow + 1;
    this.heldX = new Float64Array(2 * this.len);
    this.heldY = new Float64Array(2 * this.len);
    this.uRe = new Float64Array(this.len);
    this.uIm = new Float64Array(this.len);
  }

  /** Takes a block of symbol pairs and returns the refined ones whose windows are complete. */
  process(x: ComplexArray, y: ComplexArray): RefinedSymbols {
    const n = x.length >> 1;
    const ready = Math.max(0, this.pushed + n - this.halfWindow - this.given);
    const outX = complexArray(ready);
    const outY = complexArray(ready);
    let o = 0;
    for (let k = 0; k < n; k++) {
      this.push(x[2 * k], x[2 * k + 1], y[2 * k], y[2 * k + 1], true);
      if (this.pushed - this.given > this.halfWindow) this.give(outX, outY, o++);
    }
    return { x: outX, y: outY };
  }

  /** The last N refined symbols (fewer for a shorter stream), their windows cut short by the end. */
  finish(): RefinedSymbols {
    const rest = this.pushed - this.given;
    const outX = complexArray(rest);
    const outY = complexArray(rest);
    for (let o = 0; o < rest; o++) {
      this.push(0, 0, 0, 0, false);
      this.give(outX, outY, o);
    }
    return { x: outX, y: outY };
  }

  /** Back to the freshly created state. */
  reset(): void {
    this.heldX.fill(0);
    this.heldY.fill(0);
    this.uRe.fill(0);
    this.uIm.fill(0);
    this.sumRe = 0;
    this.sumIm = 0;
    this.pushed = 0;
    this.given = 0;
  }

  /** Enters one symbol pair (or, past the end, an absent one that adds nothing) and drops the oldest. */
  private push(xr: number, xi: number, yr: number, yi: number, present: boolean): void {
    const slot = this.pushed % this.len;
    let ur = 0;
    let ui = 0;
    if (present) {
      this.product(xr, xi);
      ur = this.productRe;
      ui = this.productIm;
      this.product(yr, yi);
      ur += this.productRe;
      ui += this.productIm;
    }
    this.sumRe += ur - this.uRe[slot];
    this.sumIm += ui - this.uIm[slot];
    this.uRe[slot] = ur;
    this.uIm[slot] = ui;
    this.heldX[2 * slot] = xr;
    this.heldX[2 * slot + 1] = xi;
    this.heldY[2 * slot] = yr;
    this.heldY[2 * slot + 1] = yi;
    this.pushed++;
  }

  /** Writes the next symbol pair due, the centre of the window, turned back by the window's phase. */
  private give(outX: Float64Array, outY: Float64Array, o: number): void {
    const slot = this.given % this.len;
    const m = Math.hypot(this.sumRe, this.sumIm);
    // e^(−jφ) from the sum itself; a window of zeros (nothing to tell) leaves the symbols as they are.
    const cr = m > 0 ? this.sumRe / m : 1;
    const ci = m > 0 ? -this.sumIm / m : 0;
    const xr = this.heldX[2 * slot];
    const xi = this.heldX[2 * slot + 1];
    const yr = this.heldY[2 * slot];
    const yi = this.heldY[2 * slot + 1];
    outX[2 * o] = xr * cr - xi * ci;
    outX[2 * o + 1] = xr * ci + xi * cr;
    outY[2 * o] = yr * cr - yi * ci;
    outY[2 * o + 1] = yr * ci + yi * cr;
    this.given++;
  }

  /** z·d*, d the decision on z, into productRe/productIm (fields, so that the loop does not allocate). */
  private product(re: number, im: number): void {
    nearestPoint(this.c, re, im, this.decision);
    const dr = this.decision[0];
    const di = this.decision[1];
    this.productRe = re * dr + im * di;
    this.productIm = im * dr - re * di;
  }
}

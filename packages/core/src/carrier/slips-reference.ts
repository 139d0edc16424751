import type { ComplexArray } from '../signal/complex.js';
import type { CycleSlip } from './cycle-slip.js';
import { QUARTER_TURN, wrapAngle } from './phase-unwrap.js';

/** Options of the reference-based slip detector. */
export interface ReferenceSlipOptions {
  /** W: known symbols in the sliding comparison window (integer ≥ 8, default 64). */
  readonly window?: number;
}

/** Options of {@link cycleSlipsAgainstReference}. */
export interface ReferenceSlipSearchOptions extends ReferenceSlipOptions {
  /**
   * P: with pilots, only every P-th symbol is known — symbol m·P of the
   * stream was sent as reference symbol m mod length (integer ≥ 1, default
   * 1: every symbol is known). A slip's position is then that of the first
   * pilot after it.
   */
  readonly pilotPeriod?: number;
}

/**
 * Cycle-slip detection against the transmitted symbols (or known pilots:
 * feed only the known symbols, with their stream index).
 *
 * With uₖ = aₖ·r*ₖ (reference times the conjugate of the recovered symbol),
 * arg uₖ is the error of the recovered phase. Over a sliding window of W
 * known symbols, Cₖ = Σ uᵢ; the rotation in force q (quarter turns) is set
 * from the first full window (the π/2 ambiguity, not a slip). A slip is
 * suspected when
 *
 *   |wrap(arg Cₖ − q·π/2)| > 3π/8
 *
 * (half-way between quadrants plus π/8, so noise does not make a slip come
 * and go); it is placed at the split of the window that best fits rotation q
 * before and q + s' after, s' = round(wrap(arg Cₖ − q·π/2)/(π/2)):
 * p = argmax_p Re(e^(−jqπ/2)·Σ_{i<p} uᵢ + e^(−j(q+s')π/2)·Σ_{i≥p} uᵢ).
 * Its size is then decided on the W symbols from p on, all after the slip:
 * s = round(wrap(arg Σ_{i≥p} uᵢ − q·π/2)/(π/2)), so that a half turn (whose
 * window sum passes near zero on its way) counts once as 2, and a suspicion
 * that does not hold (s = 0) is dropped. Streaming: O(1) per symbol, O(W)
 * per slip.
 * @example const d = new ReferenceSlipDetector(); d.push(rxRe, rxIm, refRe, refIm); d.finish(); d.slips();
 */
export class ReferenceSlipDetector {
  private readonly w: number;
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  /** Stream index of each window entry. */
  private readonly at: Float64Array;
  private sumRe = 0;
  private sumIm = 0;
  private seen = 0;
  private q = 0;
  private started = false;
  /** Push count of the split of a suspected slip, −1 when none. */
  private pendingAt = -1;
  private readonly found: CycleSlip[] = [];

  constructor(options: ReferenceSlipOptions = {}) {
    this.w = options.window ?? 64;
    this.re = new Float64Array(this.w);
    this.im = new Float64Array(this.w);
    this.at = new Float64Array(this.w);
  }

  /**
   * Feeds a known symbol: the reference aₖ and the recovered rₖ, with its
   * index k in the stream (increasing; default: the count of earlier pushes).
   */
  push(aRe: number, aIm: number, rRe: number, rIm: number, index = this.seen): void {
    const ur = aRe * rRe + aIm * rIm;
    const ui = aIm * rRe - aRe * rIm;
    const slot = this.seen % this.w;
    this.sumRe += ur - this.re[slot];
    this.sumIm += ui - this.im[slot];
    this.re[slot] = ur;
    this.im[slot] = ui;
    this.at[slot] = index;
    this.seen++;
    if (this.seen < this.w) return;
    if (this.pendingAt >= 0) {
      // A suspected slip is decided once the window holds only symbols after it.
      if (this.seen - this.pendingAt >= this.w) this.decide();
      return;
    }
    const a = Math.atan2(this.sumIm, this.sumRe);
    if (!this.started) {
      this.q = Math.round(a / QUARTER_TURN);
      this.started = true;
      return;
    }
    const res = wrapAngle(a - this.q * QUARTER_TURN);
    if (Math.abs(res) <= (3 * Math.PI) / 8) return;
    this.pendingAt = this.locate(Math.round(res / QUARTER_TURN));
    if (this.seen - this.pendingAt >= this.w) this.decide();
  }

  /** Ends the stream: a suspected slip is decided on the symbols after it that there are. */
  finish(): void {
    if (this.pendingAt >= 0 && this.pendingAt < this.seen) this.decide();
    this.pendingAt = -1;
  }

  /** The slips found so far, in stream order. */
  slips(): readonly CycleSlip[] {
    return this.found;
  }

  /** Forgets the running sums and the slips found: back to the state of a new detector. */
  reset(): void {
    this.re.fill(0);
    this.im.fill(0);
    this.at.fill(0);
    this.sumRe = 0;
    this.sumIm = 0;
    this.seen = 0;
    this.q = 0;
    this.started = false;
    this.pendingAt = -1;
    this.found.length = 0;
  }

  /** The push count of the best split for a slip of s quarter turns within the window. */
  private locate(s: number): number {
    const first = this.seen - this.w;
    const c0 = Math.cos(this.q * QUARTER_TURN);
    const s0 = Math.sin(this.q * QUARTER_TURN);
    const c1 = Math.cos((this.q + s) * QUARTER_TURN);
    const s1 = Math.sin((this.q + s) * QUARTER_TURN);
    // score(p) = Re(e^(−jq0)·before) + Re(e^(−jq1)·after), before + after = C.
    let beforeRe = 0;
    let beforeIm = 0;
    let best = first;
    let bestScore = Number.NEGATIVE_INFINITY;
    for (let p = first; p < this.seen; p++) {
      const afterRe = this.sumRe - beforeRe;
      const afterIm = this.sumIm - beforeIm;
      const score = beforeRe * c0 + beforeIm * s0 + afterRe * c1 + afterIm * s1;
      if (score > bestScore) {
        bestScore = score;
        best = p;
      }
      const slot = p % this.w;
      beforeRe += this.re[slot];
      beforeIm += this.im[slot];
    }
    return best;
  }

  /** Sizes the suspected slip on the window entries from its split on, records it when non-zero. */
  private decide(): void {
    let re = 0;
    let im = 0;
    for (let p = this.pendingAt; p < this.seen; p++) {
      re += this.re[p % this.w];
      im += this.im[p % this.w];
    }
    const raw = Math.round(wrapAngle(Math.atan2(im, re) - this.q * QUARTER_TURN) / QUARTER_TURN);
    // A half turn is reported as +2 whichever way it went (e^(jπ) = e^(−jπ)).
    const s = Math.abs(raw) === 2 ? 2 : raw;
    if (s !== 0) {
      this.found.push({ position: this.at[this.pendingAt % this.w], quadrants: s });
      this.q += s;
    }
    this.pendingAt = -1;
  }
}

/**
 * Cycle slips of recovered symbols against the transmitted ones (one
 * polarization, aligned: recovered symbol k was sent as reference symbol
 * k mod length), or against pilots every P symbols (`pilotPeriod`).
 * @param recovered N recovered complex symbols (after carrier recovery)
 * @param reference the transmitted symbols (or the pilots), repeated when shorter than the stream
 * @throws RangeError when the reference is empty, the window is not an integer ≥ 8 or the pilot period not an integer ≥ 1
 * @example const slips = cycleSlipsAgainstReference(out.x, cap.reference.x); // [{ position, quadrants }, …]
 */
export function cycleSlipsAgainstReference(
  recovered: ComplexArray,
  reference: ComplexArray,
  options: ReferenceSlipSearchOptions = {},
): readonly CycleSlip[] {
  const m = reference.length >> 1;
  if (m === 0) throw new RangeError('cycleSlipsAgainstReference: expected a non-empty reference');
  checkWindow('cycleSlipsAgainstReference', options.window);
  const period = options.pilotPeriod ?? 1;
  if (!Number.isInteger(period) || period < 1)
    throw new RangeError(`cycleSlipsAgainstReference: expected a pilot period that is an integer ≥ 1, received ${period}`);
  const d = new ReferenceSlipDetector(options);
  const n = recovered.length >> 1;
  for (let k = 0, pilot = 0; k < n; k += period, pilot++) {
    const j = pilot % m;
    d.push(reference[2 * j], reference[2 * j + 1], recovered[2 * k], recovered[2 * k + 1], k);
  }
  d.finish();
  return d.slips().slice();
}

/** @throws RangeError unless the window is undefined or an integer ≥ 8 */
export function checkWindow(where: string, w: number | undefined): void {
  if (w !== undefined && (!Number.isInteger(w) || w < 8))
    throw new RangeError(`${where}: expected a window that is an integer ≥ 8, received ${w}`);
}

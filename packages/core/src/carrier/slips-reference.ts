import type { ComplexArray } from '../signal/complex.js';
import type { CycleSlip } from './cycle-slip.js';
import { QUARTER_TURN, wrapAngle } from './phase-unwrap.js';

/** Options of the reference-based slip detector. */
export interface ReferenceSlipOptions {
  /** W: symbols in the sliding comparison window (integer ≥ 8, default 64). */
  readonly window?: number;
}

/**
 * Cycle-slip detection against the transmitted symbols (or known pilots).
 *
 * With uₖ = aₖ·r*ₖ (reference times the conjugate of the recovered symbol),
 * arg uₖ is the error of the recovered phase. Over a sliding window of W
 * symbols, Cₖ = Σ uᵢ; the rotation in force q (quarter turns) is set from the
 * first full window (the π/2 ambiguity, not a slip) and a slip of s quarter
 * turns is declared when
 *
 *   |wrap(arg Cₖ − q·π/2)| > 3π/8,   s = round(wrap(arg Cₖ − q·π/2) / (π/2))
 *
 * (hysteresis: half-way between quadrants plus π/8, so noise does not make a
 * slip come and go). Its position is the split of the window that best fits
 * rotation q before and q + s after: p = argmax_p Re(e^(−jqπ/2)·Σ_{i<p} uᵢ +
 * e^(−j(q+s)π/2)·Σ_{i≥p} uᵢ). Streaming: O(1) per symbol, O(W) per slip.
 */
export class ReferenceSlipDetector {
  private readonly w: number;
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  private sumRe = 0;
  private sumIm = 0;
  private seen = 0;
  private q = 0;
  private started = false;
  private readonly found: CycleSlip[] = [];

  constructor(options: ReferenceSlipOptions = {}) {
    this.w = options.window ?? 64;
    this.re = new Float64Array(this.w);
    this.im = new Float64Array(this.w);
  }

  /** Feeds symbol k: the reference aₖ and the recovered rₖ. */
  push(aRe: number, aIm: number, rRe: number, rIm: number): void {
    const ur = aRe * rRe + aIm * rIm;
    const ui = aIm * rRe - aRe * rIm;
    const slot = this.seen % this.w;
    this.sumRe += ur - this.re[slot];
    this.sumIm += ui - this.im[slot];
    this.re[slot] = ur;
    this.im[slot] = ui;
    this.seen++;
    if (this.seen < this.w) return;
    const a = Math.atan2(this.sumIm, this.sumRe);
    if (!this.started) {
      this.q = Math.round(a / QUARTER_TURN);
      this.started = true;
      return;
    }
    const res = wrapAngle(a - this.q * QUARTER_TURN);
    if (Math.abs(res) <= (3 * Math.PI) / 8) return;
    // A half turn is reported as +2 whichever way it went (e^(jπ) = e^(−jπ)).
    const s = Math.abs(Math.round(res / QUARTER_TURN)) === 2 ? 2 : Math.round(res / QUARTER_TURN);
    this.found.push({ position: this.locate(s), quadrants: s });
    this.q += s;
  }

  /** The slips found so far, in stream order. */
  slips(): readonly CycleSlip[] {
    return this.found;
  }

  reset(): void {
    this.re.fill(0);
    this.im.fill(0);
    this.sumRe = 0;
    this.sumIm = 0;
    this.seen = 0;
    this.q = 0;
    this.started = false;
    this.found.length = 0;
  }

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
    for (let p = first; p <= this.seen; p++) {
      const afterRe = this.sumRe - beforeRe;
      const afterIm = this.sumIm - beforeIm;
      const score = beforeRe * c0 + beforeIm * s0 + afterRe * c1 + afterIm * s1;
      if (score > bestScore) {
        bestScore = score;
        best = p;
      }
      if (p < this.seen) {
        const slot = p % this.w;
        beforeRe += this.re[slot];
        beforeIm += this.im[slot];
      }
    }
    return best;
  }
}

/**
 * Cycle slips of recovered symbols against the transmitted ones (one
 * polarization, aligned: recovered symbol k was sent as reference symbol
 * k mod length).
 * @param recovered N recovered complex symbols (after carrier recovery)
 * @param reference the transmitted symbols, repeated when shorter than N
 * @throws RangeError when the reference is empty or the window is not an integer ≥ 8
 * @example const slips = cycleSlipsAgainstReference(out.x, cap.reference.x); // [{ position, quadrants }, …]
 */
export function cycleSlipsAgainstReference(
  recovered: ComplexArray,
  reference: ComplexArray,
  options: ReferenceSlipOptions = {},
): readonly CycleSlip[] {
  const m = reference.length >> 1;
  if (m === 0) throw new RangeError('cycleSlipsAgainstReference: expected a non-empty reference');
  checkWindow('cycleSlipsAgainstReference', options.window);
  const d = new ReferenceSlipDetector(options);
  const n = recovered.length >> 1;
  for (let k = 0; k < n; k++) {
    const j = k % m;
    d.push(reference[2 * j], reference[2 * j + 1], recovered[2 * k], recovered[2 * k + 1]);
  }
  return d.slips().slice();
}

/** @throws RangeError unless the window is undefined or an integer ≥ 8 */
export function checkWindow(where: string, w: number | undefined): void {
  if (w !== undefined && (!Number.isInteger(w) || w < 8))
    throw new RangeError(`${where}: expected a window that is an integer ≥ 8, received ${w}`);
}

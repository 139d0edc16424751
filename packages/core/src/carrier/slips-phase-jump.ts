import type { CycleSlip } from './cycle-slip.js';
import { QUARTER_TURN } from './phase-unwrap.js';

/** Options of the phase-jump slip detector. */
export interface PhaseJumpOptions {
  /** W: symbols averaged on each side of the candidate jump (integer ≥ 8, default 32). */
  readonly window?: number;
  /** Step (rad) above which a jump is declared (in (0, π/2), default π/4). */
  readonly threshold?: number;
}

/**
 * Cycle-slip detection from the recovered phase track alone, by phase-jump
 * statistics: the laser phase is a slow random walk (a step over W symbols of
 * standard deviation √(2π·Δν·T·W), 0.02 rad for 100 kHz, 32 GBd and W = 32),
 * so a fast net step of the track near ±π/2 is a slip, not the carrier.
 *
 *   Jₖ = mean(θₖ … θₖ₊W₋₁) − mean(θₖ₋W … θₖ₋₁)
 *
 * An excursion of |Jₖ| above the threshold is one slip, at the k where |Jₖ|
 * peaks, of round(J/(π/2)) quarter turns (at least one). A clean step of
 * π/2 at p gives a triangle of height π/2 peaking exactly at k = p.
 * Streaming: O(1) per symbol, look-ahead W.
 * @example const d = new PhaseJumpSlipDetector(); for (const theta of phaseTrack) d.push(theta); d.finish(); d.slips().length;
 */
export class PhaseJumpSlipDetector {
  private readonly w: number;
  private readonly threshold: number;
  private readonly ring: Float64Array;
  private pushed = 0;
  /** Sums of the older and newer halves of the last 2W phases. */
  private older = 0;
  private newer = 0;
  private inExcursion = false;
  private peak = 0;
  private peakAt = 0;
  private readonly found: CycleSlip[] = [];

  constructor(options: PhaseJumpOptions = {}) {
    this.w = options.window ?? 32;
    this.threshold = options.threshold ?? Math.PI / 4;
    this.ring = new Float64Array(2 * this.w);
  }

  /** Feeds the unwrapped phase θₙ of symbol n, rad. */
  push(theta: number): void {
    const w = this.w;
    const len = 2 * w;
    const n = this.pushed;
    // The phase leaving the newer half joins the older half; the oldest leaves.
    if (n >= w) {
      const mid = this.ring[(n - w) % len];
      this.newer -= mid;
      this.older += mid;
    }
    if (n >= len) this.older -= this.ring[n % len];
    this.ring[n % len] = theta;
    this.newer += theta;
    this.pushed++;
    if (this.pushed < len) return;
    // Candidate k = n − W + 1: the first symbol of the newer half.
    const j = (this.newer - this.older) / w;
    const k = n - w + 1;
    if (Math.abs(j) > this.threshold) {
      if (!this.inExcursion || Math.abs(j) > Math.abs(this.peak)) {
        if (this.inExcursion && Math.sign(j) !== Math.sign(this.peak)) this.close();
        this.peak = j;
        this.peakAt = k;
      }
      this.inExcursion = true;
    } else if (this.inExcursion) {
      this.close();
    }
  }

  /** Ends the stream: an excursion still open is closed. */
  finish(): void {
    if (this.inExcursion) this.close();
  }

  /** The slips found so far, in stream order. */
  slips(): readonly CycleSlip[] {
    return this.found;
  }

  /** Forgets the phase history and the slips found: back to the state of a new detector. */
  reset(): void {
    this.ring.fill(0);
    this.pushed = 0;
    this.older = 0;
    this.newer = 0;
    this.inExcursion = false;
    this.peak = 0;
    this.peakAt = 0;
    this.found.length = 0;
  }

  private close(): void {
    // At least one quarter turn; a half turn either way is +2 (e^(jπ) = e^(−jπ)), as for the reference.
    const q = Math.round(this.peak / QUARTER_TURN);
    const quadrants = q === 0 ? Math.sign(this.peak) : Math.abs(q) === 2 ? 2 : q;
    this.found.push({ position: this.peakAt, quadrants });
    this.inExcursion = false;
    this.peak = 0;
  }
}

/**
 * Cycle slips of a recovered phase track by phase-jump statistics.
 * @param phase N unwrapped phases, rad (one polarization)
 * @throws RangeError for a window that is not an integer ≥ 8 or a threshold outside (0, π/2)
 * @example const slips = cycleSlipsFromPhase(theta); // [{ position, quadrants }, …]
 */
export function cycleSlipsFromPhase(phase: Float64Array, options: PhaseJumpOptions = {}): readonly CycleSlip[] {
  checkPhaseJumpOptions('cycleSlipsFromPhase', options);
  const d = new PhaseJumpSlipDetector(options);
  for (let k = 0; k < phase.length; k++) d.push(phase[k]);
  d.finish();
  return d.slips().slice();
}

/** @throws RangeError for a bad window or threshold */
export function checkPhaseJumpOptions(where: string, o: PhaseJumpOptions): void {
  if (o.window !== undefined && (!Number.isInteger(o.window) || o.window < 8))
    throw new RangeError(`${where}: expected a window that is an integer ≥ 8, received ${o.window}`);
  if (o.threshold !== undefined && !(o.threshold > 0 && o.threshold < QUARTER_TURN))
    throw new RangeError(`${where}: expected a threshold in (0, π/2) rad, received ${o.threshold}`);
}

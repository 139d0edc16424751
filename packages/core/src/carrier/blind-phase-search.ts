import { type Constellation, nearestLabel, nearestPoint } from '../modulation/constellation.js';
import type { ComplexArray } from '../signal/complex.js';
import { type PairPhaseKernel, runKernel } from './phase-kernel.js';
import { QUARTER_TURN, unwrapPhase, wrapAngle } from './phase-unwrap.js';

/** Options of the blind-phase-search estimator. */
export interface BlindPhaseSearchOptions {
  /** B: test phases spread over the π/2 ambiguity (integer ≥ 2, default 32). */
  readonly testPhases?: number;
  /** N: the window holds 2N + 1 symbols centred on the symbol estimated (integer ≥ 0, default 12). */
  readonly halfWindow?: number;
  /**
   * 'single' (default): the search of Pfau et al. 'coarse-fine': a coarse
   * search over `testPhases` phases, then a fine, continuous estimate from
   * the coarse decisions (see {@link CoarseFinePhaseKernel}).
   */
  readonly variant?: 'single' | 'coarse-fine';
  /** N₂: half window of the fine step of the coarse-fine variant (integer ≥ 0, default `halfWindow`). */
  readonly fineHalfWindow?: number;
}

/**
 * Blind phase search (Pfau, Hoffmann, Noé, "Hardware-efficient coherent
 * digital receiver concept with feedforward carrier recovery for M-QAM
 * constellations", JLT 27(8), 2009).
 *
 * B test phases φ_b = (b/B − ½)·π/2, b = 0 … B − 1, cover the π/2 ambiguity
 * of square QAM. For every symbol and test phase, the squared distance to
 * the nearest constellation point after rotation, summed over the window:
 *
 *   d_{i,b} = |rᵢ·e^(−jφ_b) − dec(rᵢ·e^(−jφ_b))|²,   D_{k,b} = Σ_{i=k−N}^{k+N} d_{i,b}
 *   θ̂ₖ = φ_{b̂},  b̂ = argmin_b D_{k,b},   θₖ = θ̂ₖ + (π/2)·round((θₖ₋₁ − θ̂ₖ)/(π/2))
 *
 * The quantization of the test phases bounds the error by π/(4B) on a clean
 * signal. The rotations e^(−jφ_b) are computed once; D_{k,b} is a running
 * window sum (add the new distance, subtract the one leaving), so the cost
 * per symbol is B rotations and decisions whatever N. Symbols outside the
 * stream contribute nothing (a shorter window at both ends).
 *
 * The distance to the nearest point is taken per axis without a decision:
 * in level units (points at the odd integers ±1 … ±(L − 1), L levels per
 * axis, L = 2ᵐ), the distance of a coordinate v to the nearest level is
 * |…||v| − L/2| − L/4| … − 1| (m folds: each maps the levels of one half
 * onto the other, ending at the levels ±1 around 0). The folds are branch
 * free; the clamped decision they replace mispredicted its branches on the
 * outer levels (measured: the kernel runs about 2× faster). Distances are in
 * level units, a constant factor 1/scale² from unit power, which changes no
 * argmin. Constellations that are not square QAM (cross QAM, 8QAM) take the
 * distance to their nearest point ({@link nearestLabel}) at unit power
 * instead; their quarter-turn symmetry makes the same π/2 search range right.
 *
 * {@link pushPair} estimates one phase from both polarizations (the laser
 * phase is common to them): d_{i,b} is then the sum of the two symbols'
 * distances, so the window holds twice the symbols for the same tracking.
 * @example const phase = runKernel(new BlindPhaseSearchKernel(constellation('16qam'), { testPhases: 32, halfWindow: 12 }), symbols.x);
 */
export class BlindPhaseSearchKernel implements PairPhaseKernel {
  readonly delay: number;
  private readonly b: number;
  private readonly len: number;
  private readonly cosB: Float64Array;
  private readonly sinB: Float64Array;
  private readonly phases: Float64Array;
  /** Distances of the window, (2N + 1) × B, one row per symbol slot. */
  private readonly ring: Float64Array;
  private readonly sums: Float64Array;
  private readonly inv: number;
  /** Fold offsets of the per-axis distance, largest first (see the class doc); 0 for an unused fold. */
  private readonly fold: Float64Array;
  /** The constellation when it is not square QAM (distances to its nearest point), else null (the folds). */
  private readonly other: Constellation | null;
  private slot = 0;
  private pushed = 0;
  private last = Number.NaN;

  /**
   * @param c the constellation, at unit average power
   * @param options validated by the caller (the stage)
   */
  constructor(c: Constellation, options: BlindPhaseSearchOptions = {}) {
    this.b = options.testPhases ?? 32;
    const n = options.halfWindow ?? 12;
    this.delay = n;
    this.len = 2 * n + 1;
    this.phases = new Float64Array(this.b);
    this.cosB = new Float64Array(this.b);
    this.sinB = new Float64Array(this.b);
    for (let k = 0; k < this.b; k++) {
      const phi = (k / this.b - 0.5) * QUARTER_TURN;
      this.phases[k] = phi;
      // e^(−jφ): the de-rotation applied by test phase k.
      this.cosB[k] = Math.cos(phi);
      this.sinB[k] = -Math.sin(phi);
    }
    this.ring = new Float64Array(this.len * this.b);
    this.sums = new Float64Array(this.b);
    this.inv = 1 / c.scale;
    this.other = c.square ? null : c;
    this.fold = foldOffsets(c.square ? c.levelsPerAxis : 2);
  }

  push(re: number, im: number, present: boolean): number {
    const row = this.slot * this.b;
    const ring = this.ring;
    const sums = this.sums;
    const cosB = this.cosB;
    const sinB = this.sinB;
    const inv = this.inv;
    const h0 = this.fold[0];
    const h1 = this.fold[1];
    const h2 = this.fold[2];
    const h3 = this.fold[3];
    const b = this.b;
    const other = this.other;
    if (present && other !== null) {
      for (let k = 0; k < b; k++) {
        const d = pointDistance(other, re * cosB[k] - im * sinB[k], re * sinB[k] + im * cosB[k]);
        sums[k] += d - ring[row + k];
        ring[row + k] = d;
      }
    } else if (present) {
      for (let k = 0; k < b; k++) {
        // u = r·e^(−jφ_k) in level units (points at odd integers), folded per axis
        const x = Math.abs(Math.abs(Math.abs(Math.abs(Math.abs((re * cosB[k] - im * sinB[k]) * inv) - h0) - h1) - h2) - h3);
        const y = Math.abs(Math.abs(Math.abs(Math.abs(Math.abs((re * sinB[k] + im * cosB[k]) * inv) - h0) - h1) - h2) - h3);
        const d = x * x + y * y;
        // D_b ← D_b + d_new − d_oldest
        sums[k] += d - ring[row + k];
        ring[row + k] = d;
      }
    } else {
      this.clearSlot(row);
    }
    return this.advance();
  }

  /**
   * Feeds one symbol of each polarization, both at the same carrier phase
   * (the y symbol already turned by any phase difference between the
   * equalizer's outputs), and returns their common phase, as {@link push}
   * does for one: the distances of the two symbols add.
   */
  pushPair(xr: number, xi: number, yr: number, yi: number, present: boolean): number {
    const row = this.slot * this.b;
    const ring = this.ring;
    const sums = this.sums;
    const cosB = this.cosB;
    const sinB = this.sinB;
    const inv = this.inv;
    const h0 = this.fold[0];
    const h1 = this.fold[1];
    const h2 = this.fold[2];
    const h3 = this.fold[3];
    const b = this.b;
    const other = this.other;
    if (present && other !== null) {
      for (let k = 0; k < b; k++) {
        const c = cosB[k];
        const s = sinB[k];
        const d = pointDistance(other, xr * c - xi * s, xr * s + xi * c) + pointDistance(other, yr * c - yi * s, yr * s + yi * c);
        sums[k] += d - ring[row + k];
        ring[row + k] = d;
      }
    } else if (present) {
      for (let k = 0; k < b; k++) {
        const c = cosB[k];
        const s = sinB[k];
        const ax = Math.abs(Math.abs(Math.abs(Math.abs(Math.abs((xr * c - xi * s) * inv) - h0) - h1) - h2) - h3);
        const ay = Math.abs(Math.abs(Math.abs(Math.abs(Math.abs((xr * s + xi * c) * inv) - h0) - h1) - h2) - h3);
        const bx = Math.abs(Math.abs(Math.abs(Math.abs(Math.abs((yr * c - yi * s) * inv) - h0) - h1) - h2) - h3);
        const by = Math.abs(Math.abs(Math.abs(Math.abs(Math.abs((yr * s + yi * c) * inv) - h0) - h1) - h2) - h3);
        const d = ax * ax + ay * ay + bx * bx + by * by;
        sums[k] += d - ring[row + k];
        ring[row + k] = d;
      }
    } else {
      this.clearSlot(row);
    }
    return this.advance();
  }

  /** An absent symbol: the oldest distances leave the window and nothing enters. */
  private clearSlot(row: number): void {
    for (let k = 0; k < this.b; k++) {
      this.sums[k] -= this.ring[row + k];
      this.ring[row + k] = 0;
    }
  }

  /** Moves the window on one symbol and returns the unwrapped argmin phase of its centre (NaN while filling). */
  private advance(): number {
    this.slot = this.slot + 1 === this.len ? 0 : this.slot + 1;
    this.pushed++;
    if (this.pushed <= this.delay) return Number.NaN;
    const sums = this.sums;
    let best = 0;
    let least = sums[0];
    for (let k = 1; k < this.b; k++) {
      const v = sums[k];
      if (v < least) {
        least = v;
        best = k;
      }
    }
    this.last = unwrapPhase(this.phases[best], this.last, QUARTER_TURN);
    return this.last;
  }

  reset(): void {
    this.ring.fill(0);
    this.sums.fill(0);
    this.slot = 0;
    this.pushed = 0;
    this.last = Number.NaN;
  }
}

/**
 * Coarse-then-fine blind phase search. A coarse search with few test phases
 * (B₁, half window N₁) gives θ¹ᵢ and the decisions âᵢ = dec(rᵢ·e^(−jθ¹ᵢ));
 * the fine step then minimizes the same window distance over a continuous
 * phase with the decisions held:
 *
 *   Σᵢ |rᵢ·e^(−jφ) − âᵢ|² is least at φ = arg Σᵢ rᵢ·â*ᵢ,   i = k − N₂ … k + N₂
 *   θₖ = θ¹ₖ + wrap(arg(Σᵢ rᵢ·â*ᵢ) − θ¹ₖ)
 *
 * which is the limit of a fine search with infinitely many test phases
 * around the coarse one. Two-stage searches of this kind are common practice
 * (one published form: Zhou, IEEE PTL 22(14), 2010, BPS followed by a
 * maximum-likelihood step — *from memory*). The fine sum is a running
 * window sum too, so the cost per symbol is B₁ rotations and decisions plus
 * a constant, whatever N₁ and N₂; the look-ahead is N₁ + N₂.
 * @example const phase = runKernel(new CoarseFinePhaseKernel(constellation('64qam')), symbols.x);
 */
export class CoarseFinePhaseKernel implements PairPhaseKernel {
  readonly delay: number;
  private readonly coarse: BlindPhaseSearchKernel;
  private readonly n1: number;
  private readonly len2: number;
  /** Input symbols waiting for their coarse phase (N₁ + 1 slots): x, and y for pairs. */
  private readonly xRe: Float64Array;
  private readonly xIm: Float64Array;
  private readonly yRe: Float64Array;
  private readonly yIm: Float64Array;
  private readonly inPresent: Uint8Array;
  /** Coarse phases waiting for their fine window (N₂ + 1 slots). */
  private readonly coarsePhase: Float64Array;
  /** Products r·â* of the fine window (both polarizations' summed, for pairs). */
  private readonly uRe: Float64Array;
  private readonly uIm: Float64Array;
  private sumRe = 0;
  private sumIm = 0;
  /** The product of the last {@link product}, and its decision: fields, so that `push` does not allocate. */
  private readonly decision = new Float64Array(2);
  private productRe = 0;
  private productIm = 0;
  private pushed = 0;
  private centres = 0;
  private readonly n2: number;
  private readonly c: Constellation;

  constructor(c: Constellation, options: BlindPhaseSearchOptions = {}) {
    this.c = c;
    this.coarse = new BlindPhaseSearchKernel(c, options);
    this.n1 = this.coarse.delay;
    this.n2 = options.fineHalfWindow ?? this.n1;
    this.len2 = 2 * this.n2 + 1;
    this.delay = this.n1 + this.n2;
    this.xRe = new Float64Array(this.n1 + 1);
    this.xIm = new Float64Array(this.n1 + 1);
    this.yRe = new Float64Array(this.n1 + 1);
    this.yIm = new Float64Array(this.n1 + 1);
    this.inPresent = new Uint8Array(this.n1 + 1);
    this.coarsePhase = new Float64Array(this.n2 + 1);
    this.uRe = new Float64Array(this.len2);
    this.uIm = new Float64Array(this.len2);
  }

  push(re: number, im: number, present: boolean): number {
    this.hold(re, im, 0, 0, present);
    return this.fine(this.coarse.push(re, im, present), false);
  }

  /**
   * One phase from both polarizations, as {@link BlindPhaseSearchKernel.pushPair}
   * for the coarse step: the fine sum then holds both symbols' products.
   */
  pushPair(xr: number, xi: number, yr: number, yi: number, present: boolean): number {
    this.hold(xr, xi, yr, yi, present);
    return this.fine(this.coarse.pushPair(xr, xi, yr, yi, present), true);
  }

  private hold(xr: number, xi: number, yr: number, yi: number, present: boolean): void {
    const s = this.pushed % (this.n1 + 1);
    this.xRe[s] = xr;
    this.xIm[s] = xi;
    this.yRe[s] = yr;
    this.yIm[s] = yi;
    this.inPresent[s] = present ? 1 : 0;
    this.pushed++;
  }

  /** Takes the coarse phase of centre c = pushed − 1 − N₁ and returns the fine phase of c − N₂. */
  private fine(theta1: number, pair: boolean): number {
    if (Number.isNaN(theta1)) return Number.NaN;
    const c = this.centres++;
    const t = c % (this.n1 + 1);
    let ur = 0;
    let ui = 0;
    if (this.inPresent[t] === 1) {
      const cs = Math.cos(theta1);
      const sn = Math.sin(theta1);
      this.product(this.xRe[t], this.xIm[t], cs, sn);
      ur = this.productRe;
      ui = this.productIm;
      if (pair) {
        this.product(this.yRe[t], this.yIm[t], cs, sn);
        ur += this.productRe;
        ui += this.productIm;
      }
    }
    this.coarsePhase[c % (this.n2 + 1)] = theta1;
    const slot = c % this.len2;
    this.sumRe += ur - this.uRe[slot];
    this.sumIm += ui - this.uIm[slot];
    this.uRe[slot] = ur;
    this.uIm[slot] = ui;
    if (c < this.n2) return Number.NaN;
    // Fine centre f = c − N₂; its coarse phase is N₂ entries back.
    const coarseAt = this.coarsePhase[(c - this.n2) % (this.n2 + 1)];
    if (this.sumRe === 0 && this.sumIm === 0) return coarseAt;
    return coarseAt + wrapAngle(Math.atan2(this.sumIm, this.sumRe) - coarseAt);
  }

  /** u = r·â*, â the decision on r·e^(−jθ¹) (cs = cos θ¹, sn = sin θ¹), into productRe/productIm. */
  private product(rr: number, ri: number, cs: number, sn: number): void {
    nearestPoint(this.c, rr * cs + ri * sn, ri * cs - rr * sn, this.decision);
    const ar = this.decision[0];
    const ai = this.decision[1];
    this.productRe = rr * ar + ri * ai;
    this.productIm = ri * ar - rr * ai;
  }

  reset(): void {
    this.coarse.reset();
    this.xRe.fill(0);
    this.xIm.fill(0);
    this.yRe.fill(0);
    this.yIm.fill(0);
    this.inPresent.fill(0);
    this.coarsePhase.fill(0);
    this.uRe.fill(0);
    this.uIm.fill(0);
    this.sumRe = 0;
    this.sumIm = 0;
    this.pushed = 0;
    this.centres = 0;
  }
}

/**
 * Offsets [h0, h1, h2, h3] of the folds x ← |x − h| that map |v| to its
 * distance from the nearest odd level for `levels` levels per axis: L/2,
 * L/4 … 1, preceded by zeros (a fold by 0 leaves x ≥ 0 unchanged, bit for
 * bit). Up to 16 levels per axis (256QAM).
 */
function foldOffsets(levels: number): Float64Array {
  const fold = new Float64Array(4);
  let i = 3;
  for (let h = 1; h < levels; h *= 2) {
    if (i < 0) throw new RangeError(`blind phase search: at most 16 levels per axis are supported, ${levels} given`);
    fold[i--] = h;
  }
  return fold;
}

/** |u − a|² for the point a nearest to u = ur + j·ui (unit power). */
function pointDistance(c: Constellation, ur: number, ui: number): number {
  const k = nearestLabel(c, ur, ui);
  const dr = ur - c.points[2 * k];
  const di = ui - c.points[2 * k + 1];
  return dr * dr + di * di;
}

/**
 * The blind-phase-search phase track of a whole symbol array (one
 * polarization), single or coarse-fine per `options.variant`.
 * @param symbols N complex symbols at unit average power
 * @returns N unwrapped phases, rad
 * @example const theta = blindPhaseSearchPhase(constellation('16qam'), rx, { testPhases: 32, halfWindow: 8 });
 */
export function blindPhaseSearchPhase(
  c: Constellation,
  symbols: ComplexArray,
  options: BlindPhaseSearchOptions = {},
): Float64Array {
  const kernel =
    options.variant === 'coarse-fine' ? new CoarseFinePhaseKernel(c, options) : new BlindPhaseSearchKernel(c, options);
  return runKernel(kernel, symbols);
}

import {
  type Constellation,
  constellation,
  type ModulationName,
  nearestLabel,
  nearestLevel,
} from '../modulation/constellation.js';
import type { UpdateRule } from './update-rule.js';

/** Gains of the decision-directed carrier-phase loop of {@link ddLmsRule}. */
export interface PhaseLoopGains {
  /** Proportional gain kp (rad per rad of phase error, per symbol), in (0, 1). */
  readonly proportional: number;
  /** Integral gain ki (per symbol²), in [0, kp). */
  readonly integral: number;
}

/**
 * Default loop gains: kp = 0.05 and ki = kp²/4, a critically damped second-order loop (common
 * practice). A slower loop (kp = 0.02 was tried) leaves more of a carrier offset to the taps, which then
 * rotate z; at kp = 0.05 the loop takes it all (measured: 100 MHz at 32 GBd, 16QAM at 20 dB).
 */
export const DEFAULT_PHASE_LOOP: PhaseLoopGains = { proportional: 0.05, integral: 0.05 ** 2 / 4 };

/**
 * Decision-directed LMS with its own carrier-phase loop, for after blind
 * convergence.
 *
 * How it receives the carrier phase: the equalizer output z still carries
 * the carrier (frequency offset and laser phase noise). Each polarization
 * keeps a second-order decision-directed phase-locked loop whose phase θ is
 * fed back symbol by symbol; the decision is taken on the de-rotated output
 * and the error is rotated back into the equalizer's frame:
 *
 *   z' = z·e^{−jθ},   d = decide(z'),   e = (d − z')·e^{jθ}
 *   φ = Im(z'·d*) / |d|²,   θ ← θ + kp·φ + ν,   ν ← ν + ki·φ
 *
 * (LMS: Widrow & Hoff 1960; decision-directed carrier loop: common practice.)
 * The loop phase is acquired when the equalizer switches to this rule, from
 * the blind outputs observed just before, θ = arg(−Σλᵐ·z⁴)/4 (the
 * fourth-power estimate of Viterbi & Viterbi 1983, exponentially weighted
 * with λ = 15/16); ν starts at 0 and the integral path pulls in a carrier
 * frequency offset (100 MHz at 32 GBd is tested). The residual π/2
 * ambiguity does not matter to the decisions. The equalizer delivers z, not z': a slip of the
 * loop by π/2 rotates the decisions with it and leaves the error, hence the
 * taps and z, unchanged, so z stays continuous and carrier recovery
 * downstream works as without DD-LMS. The taps and the loop share the phase
 * tracking (only their combination is defined), so z may carry a slow extra
 * rotation besides the carrier. The loop's state is in the diagnostics.
 * @param stepSize μ > 0
 * @param loop phase-loop gains (default {@link DEFAULT_PHASE_LOOP})
 * @example const rule = ddLmsRule('16qam', 1e-3);
 */
export function ddLmsRule(
  modulation: ModulationName | Constellation,
  stepSize: number,
  loop: PhaseLoopGains = DEFAULT_PHASE_LOOP,
): DdLmsRule {
  const c = typeof modulation === 'string' ? constellation(modulation) : modulation;
  return new DdLmsRule(c, stepSize, loop);
}

/** Forgetting factor of the fourth-power phase average used for acquisition. */
const ACQUIRE_FORGET = 1 - 1 / 16;

/**
 * The DD-LMS rule; see {@link ddLmsRule}.
 * @example const rule: DdLmsRule = ddLmsRule('16qam', 3e-4); rule.loopState(0).phase;
 */
export class DdLmsRule implements UpdateRule {
  readonly name: string = 'dd-lms';
  private readonly levels: number;
  private readonly scale: number;
  /** The constellation when it is not square QAM (nearest point by {@link nearestLabel}), else null. */
  private readonly other: Constellation | null;
  /** Sign of E[a⁴]: where Σz⁴ points relative to 4θ (−1 for square QAM). */
  private readonly fourthSign: number;
  /** Proportional gain kp of the phase loop. */
  protected readonly kp: number;
  /** Integral gain ki of the phase loop. */
  protected readonly ki: number;
  /** Loop phase θ per polarization, rad. */
  protected readonly theta = new Float64Array(2);
  /** Loop frequency ν per polarization, rad per symbol. */
  protected readonly nu = new Float64Array(2);
  /** Acquisition sum: exponentially weighted Σz⁴ per polarization. */
  private readonly s4 = new Float64Array(4);

  constructor(
    c: Constellation,
    readonly stepSize: number,
    loop: PhaseLoopGains,
  ) {
    this.levels = c.levelsPerAxis;
    this.scale = c.scale;
    this.other = c.square ? null : c;
    this.fourthSign = c.fourthPowerMean < 0 ? -1 : 1;
    this.kp = loop.proportional;
    this.ki = loop.integral;
  }

  error(re: number, im: number, pol: 0 | 1, out: Float64Array): number {
    const th = this.theta[pol];
    const c = Math.cos(th);
    const s = Math.sin(th);
    // z' = z·e^{−jθ}
    const zr = re * c + im * s;
    const zi = im * c - re * s;
    const o = this.other;
    const l = o === null ? 0 : nearestLabel(o, zr, zi);
    const dr = o === null ? this.slice(zr) : o.points[2 * l];
    const di = o === null ? this.slice(zi) : o.points[2 * l + 1];
    const er = dr - zr;
    const ei = di - zi;
    // φ = Im(z'·d*) / |d|²
    const phi = (zi * dr - zr * di) / (dr * dr + di * di);
    this.theta[pol] = th + this.kp * phi + this.nu[pol];
    this.nu[pol] += this.ki * phi;
    // e = (d − z')·e^{+jθ}
    out[0] = er * c - ei * s;
    out[1] = er * s + ei * c;
    return er * er + ei * ei;
  }

  /** Accumulates a blind output for the acquisition of the loop phase (called before the switch). */
  observe(re: number, im: number, pol: 0 | 1): void {
    // z⁴
    const r2 = re * re - im * im;
    const i2 = 2 * re * im;
    const p = 2 * pol;
    this.s4[p] = ACQUIRE_FORGET * this.s4[p] + (r2 * r2 - i2 * i2);
    this.s4[p + 1] = ACQUIRE_FORGET * this.s4[p + 1] + 2 * r2 * i2;
  }

  /** Sets θ from what {@link observe} accumulated, and ν = 0. */
  acquire(): void {
    for (let pol = 0; pol < 2; pol++) {
      const p = 2 * pol;
      // Square QAM has E a⁴ < 0: arg(−Σz⁴)/4 is the phase, modulo π/2 (8QAM's star, E a⁴ > 0: arg(Σz⁴)/4).
      const sign = this.fourthSign;
      this.theta[pol] = Math.atan2(sign * this.s4[p + 1], sign * this.s4[p]) / 4;
      this.nu[pol] = 0;
    }
  }

  /**
   * Moves the loop back `symbols` symbols, θ ← θ − ν·symbols, when the
   * equalizer starts over from the beginning of the capture (a new pass, or
   * the output run after the passes): the carrier there is continued back at
   * the loop's frequency instead of jumping by whatever phase the carrier
   * turned through over the buffer.
   */
  rewind(symbols: number): void {
    for (let pol = 0; pol < 2; pol++) this.theta[pol] -= this.nu[pol] * symbols;
  }

  /** Loop phase θ (rad) and frequency ν (rad per symbol) of a polarization. */
  loopState(pol: 0 | 1): {
    /** Loop phase θ, rad. */
    phase: number;
    /** Loop frequency ν, rad per symbol. */
    frequency: number;
  } {
    return { phase: this.theta[pol], frequency: this.nu[pol] };
  }

  reset(): void {
    this.theta.fill(0);
    this.nu.fill(0);
    this.s4.fill(0);
  }

  /** Nearest level on one axis of square QAM. */
  private slice(v: number): number {
    return nearestLevel(v, this.scale, this.levels - 1);
  }
}

/**
 * Where the data-aided equalizer's target for each output comes from: output
 * symbol k of a polarization should be T(symbols[(k − delay) mod N]), T the
 * identity or conjugation (what the synchronization with the reference found).
 */
export interface TrainingTarget {
  /** The transmitted symbols this output carries, N (any scale: normalized to unit power). */
  readonly symbols: Float64Array;
  /** Output symbol k carries symbols[(k − delay) mod N]. */
  readonly delay: number;
  /** True when the output carries their conjugate. */
  readonly conjugated: boolean;
}

/** The targets of both outputs of the data-aided equalizer. */
export interface EqualizerTraining {
  /** What the x output should carry. */
  readonly x: TrainingTarget;
  /** What the y output should carry. */
  readonly y: TrainingTarget;
}

/**
 * Data-aided LMS: {@link ddLmsRule} with the transmitted symbol aₖ in place of
 * the decision, for an equalizer trained on the known pattern once the
 * synchronization has found which symbol each output carries:
 *
 *   z' = z·e^{−jθ},   e = (aₖ − z')·e^{jθ},   φ = Im(z'·a*ₖ)/|aₖ|²,   θ ← θ + kp·φ + ν,   ν ← ν + ki·φ
 *
 * The phase loop locks on the absolute phase of the known symbols from any
 * start (its detector is sin of the phase error), so no acquisition is
 * needed; the taps converge from any start as an LMS trained on a known
 * sequence does (Widrow & Hoff 1960; training sequences: Proakis, Digital
 * Communications, ch. 10 — *from memory*). It counts the symbols it is
 * called for per polarization; {@link DataAidedRule.rewind} moves that count back with the
 * loop, as the equalizer starts over from the capture's first symbol.
 * @example const rule = dataAidedRule('16qam', 3e-4, training);
 */
export function dataAidedRule(
  modulation: ModulationName | Constellation,
  stepSize: number,
  training: EqualizerTraining,
  loop: PhaseLoopGains = DEFAULT_PHASE_LOOP,
): DataAidedRule {
  const c = typeof modulation === 'string' ? constellation(modulation) : modulation;
  return new DataAidedRule(c, stepSize, loop, training);
}

/**
 * The data-aided rule; see {@link dataAidedRule}.
 * @example const rule: DataAidedRule = dataAidedRule('qpsk', 3e-4, training); rule.loopState(0).phase;
 */
export class DataAidedRule extends DdLmsRule {
  override readonly name = 'data-aided';
  private readonly targets: { re: Float64Array; im: Float64Array; delay: number }[];
  /** Symbols seen per polarization (the index k of the next target). */
  private readonly index = new Float64Array(2);

  constructor(c: Constellation, stepSize: number, loop: PhaseLoopGains, training: EqualizerTraining) {
    super(c, stepSize, loop);
    this.targets = [training.x, training.y].map((t) => {
      const n = t.symbols.length >> 1;
      let power = 0;
      for (let i = 0; i < 2 * n; i++) power += t.symbols[i] * t.symbols[i];
      const g = n > 0 && power > 0 ? 1 / Math.sqrt(power / n) : 0;
      const re = new Float64Array(n);
      const im = new Float64Array(n);
      for (let k = 0; k < n; k++) {
        re[k] = g * t.symbols[2 * k];
        im[k] = (t.conjugated ? -g : g) * t.symbols[2 * k + 1];
      }
      return { re, im, delay: t.delay };
    });
  }

  override error(re: number, im: number, pol: 0 | 1, out: Float64Array): number {
    const t = this.targets[pol];
    const n = t.re.length;
    const k = this.index[pol]++;
    const j = (((k - t.delay) % n) + n) % n;
    const ar = t.re[j];
    const ai = t.im[j];
    const th = this.theta[pol];
    const c = Math.cos(th);
    const s = Math.sin(th);
    // z' = z·e^{−jθ}
    const zr = re * c + im * s;
    const zi = im * c - re * s;
    const er = ar - zr;
    const ei = ai - zi;
    // φ = Im(z'·a*) / |a|²
    const a2 = ar * ar + ai * ai;
    const phi = a2 > 0 ? (zi * ar - zr * ai) / a2 : 0;
    this.theta[pol] = th + this.kp * phi + this.nu[pol];
    this.nu[pol] += this.ki * phi;
    out[0] = er * c - ei * s;
    out[1] = er * s + ei * c;
    return er * er + ei * ei;
  }

  /** The known symbols need no acquisition: the loop starts where it is. */
  override acquire(): void {}

  override rewind(symbols: number): void {
    super.rewind(symbols);
    this.index[0] -= symbols;
    this.index[1] -= symbols;
  }

  override reset(): void {
    super.reset();
    this.index.fill(0);
  }
}

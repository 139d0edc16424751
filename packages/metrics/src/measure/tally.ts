import { type ComplexArray, type Constellation, type CycleSlip, decide, ReferenceSlipDetector } from '@intradyne/core';
import { countErrors, type ErrorCount } from '../counting/error-count.js';
import { InformationAccumulator } from '../information/bit-metrics.js';
import { type EvmNormalization, errorPower } from '../quality/evm.js';
import type { AlignedSymbols } from './align.js';
import { figures, type QualityFigures } from './figures.js';
import type { PolFit } from './fit.js';
import type { Validated } from './options.js';
import { blockQuarterTurns, rotateQuarterTurns } from './quadrant-blocks.js';

/**
 * Running sums of one polarization's figures at a fixed gain and noise
 * variance. Symbols are taken in blocks of `slipBlockSymbols` counted from
 * the first measured one (whatever the sizes they are added in): each block
 * is counted at the first block's quarter turn (the uncorrected count, and
 * what the slip detector sees) and at its own best one (the per-block
 * count); the EVM, SNR and information sums follow the chosen mode.
 */
export class PolarizationTally {
  /** Error counts at the first block's quarter turn and at each block's own. */
  private readonly uncorrected = { bitErrors: 0, symbolErrors: 0 };
  private readonly corrected = { bitErrors: 0, symbolErrors: 0 };
  bits = 0;
  symbols = 0;
  errorEnergy = 0;
  signalEnergy = 0;
  /** Σ|z|² and Σ|z|⁴ of the normalized symbols, and Re Σ z·conj(a). */
  m2 = 0;
  m4 = 0;
  za = 0;
  /** Blocks whose best quarter turn differs from the first block's. */
  turnedBlocks = 0;
  /** True once symbols beyond the fitted ones were added. */
  private beyondFit = false;
  private firstTurn = -1;
  private readonly block: number;
  private readonly perBlock: boolean;
  private readonly z: Float64Array;
  private readonly a: Float64Array;
  private readonly labels: Uint8Array;
  private pending = 0;
  private readonly info: InformationAccumulator | null;
  private readonly slipDetector: ReferenceSlipDetector | null;

  constructor(
    /** The constellation counted against. */
    readonly c: Constellation,
    /** What was fitted for this polarization. */
    readonly fit: PolFit,
    o: Validated,
    slips: boolean,
  ) {
    // A noiseless stream: the information is the entropy (log2 M for a uniform format); the Gaussian fit needs σ² > 0.
    this.info = fit.noiseVariance > 0 ? new InformationAccumulator(c, fit.noiseVariance, o.bitMetric) : null;
    this.slipDetector = slips ? new ReferenceSlipDetector() : null;
    this.block = o.slipBlockSymbols;
    this.perBlock = o.slipCorrection === 'per-block';
    this.z = new Float64Array(2 * this.block);
    this.a = new Float64Array(2 * this.block);
    this.labels = new Uint8Array(this.block);
  }

  /**
   * Counts aligned, normalized symbols (in pieces of any sizes).
   * @param fitted true for symbols the gain and noise variance were fitted on
   */
  add(s: AlignedSymbols, fitted: boolean): void {
    const n = s.received.length >> 1;
    for (let at = 0; at < n; ) {
      const take = Math.min(n - at, this.block - this.pending);
      this.z.set(s.received.subarray(2 * at, 2 * (at + take)), 2 * this.pending);
      this.a.set(s.reference.subarray(2 * at, 2 * (at + take)), 2 * this.pending);
      this.labels.set(s.labels.subarray(at, at + take), this.pending);
      this.pending += take;
      at += take;
      if (this.pending === this.block) this.countBlock();
    }
    if (!fitted && n > 0) this.beyondFit = true;
  }

  /** Counts the last, partial block. */
  finish(): void {
    if (this.pending > 0) this.countBlock();
  }

  slips(): readonly CycleSlip[] {
    const d = this.slipDetector;
    if (!d) return [];
    d.finish();
    return d.slips().slice();
  }

  /** The counts of the mode in force. */
  counts(): ErrorCount {
    return this.countsOf(this.perBlock ? 'corrected' : 'uncorrected');
  }

  countsOf(which: 'corrected' | 'uncorrected'): ErrorCount {
    const c = this[which];
    return { bitErrors: c.bitErrors, bits: this.bits, symbolErrors: c.symbolErrors, symbols: this.symbols };
  }

  /**
   * Σ|z/γ − a|² at the least-squares gain γ of every symbol added: the
   * direct sum when all are the fitted ones (normalized by their own
   * gain), else from the running sums.
   */
  errorEnergyAtOwnGain(): number {
    if (!this.beyondFit) return this.errorEnergy;
    const gamma = this.za / this.signalEnergy;
    return Math.max(0, this.m2 / (gamma * gamma) - this.signalEnergy);
  }

  figures(evmNormalization: EvmNormalization): QualityFigures {
    const info = this.info ? this.info.estimate() : { gmi: this.c.entropy, mi: this.c.entropy };
    const e = this.errorEnergyAtOwnGain();
    return figures(
      this.c,
      this.counts(),
      { uncorrected: this.countsOf('uncorrected'), corrected: this.countsOf('corrected') },
      e,
      this.signalEnergy,
      info.gmi,
      info.mi,
      evmNormalization,
    );
  }

  private countBlock(): void {
    const n = this.pending;
    const z = this.z.subarray(0, 2 * n) as ComplexArray;
    const a = this.a.subarray(0, 2 * n) as ComplexArray;
    const labels = this.labels.subarray(0, n);
    const turn = blockQuarterTurns(z, a, 0, n);
    if (this.firstTurn < 0) this.firstTurn = turn;
    const first = this.symbols;
    // The uncorrected view first: the stream at the first block's quarter turn.
    rotateQuarterTurns(z, this.firstTurn, 0, n);
    const d = this.slipDetector;
    if (d) for (let k = 0; k < n; k++) d.push(a[2 * k], a[2 * k + 1], z[2 * k], z[2 * k + 1], first + k);
    const uncorrected = countErrors(this.c, decide(this.c, z), labels);
    if (!this.perBlock) this.sum(z, a, labels);
    let corrected = uncorrected;
    if (turn !== this.firstTurn) {
      this.turnedBlocks++;
      rotateQuarterTurns(z, turn - this.firstTurn, 0, n);
      corrected = countErrors(this.c, decide(this.c, z), labels);
    }
    if (this.perBlock) this.sum(z, a, labels);
    this.uncorrected.bitErrors += uncorrected.bitErrors;
    this.uncorrected.symbolErrors += uncorrected.symbolErrors;
    this.corrected.bitErrors += corrected.bitErrors;
    this.corrected.symbolErrors += corrected.symbolErrors;
    this.bits += uncorrected.bits;
    this.symbols += n;
    this.pending = 0;
  }

  /** Adds a block's share of the EVM, SNR, moment and information sums. */
  private sum(z: ComplexArray, ref: ComplexArray, labels: Uint8Array): void {
    this.errorEnergy += errorPower(z, ref);
    let signal = 0;
    let m2 = 0;
    let m4 = 0;
    let za = 0;
    for (let i = 0; i < z.length; i += 2) {
      signal += ref[i] * ref[i] + ref[i + 1] * ref[i + 1];
      const r2 = z[i] * z[i] + z[i + 1] * z[i + 1];
      m2 += r2;
      m4 += r2 * r2;
      za += z[i] * ref[i] + z[i + 1] * ref[i + 1];
    }
    this.signalEnergy += signal;
    this.m2 += m2;
    this.m4 += m4;
    this.za += za;
    this.info?.add(z, labels);
  }
}

import {
  type ComplexArray,
  type Constellation,
  type CycleSlip,
  complexArray,
  constellation,
  type DualPol,
  decide,
  MODULATIONS,
  type ModulationName,
  OptionError,
  ReferenceSlipDetector,
} from '@intradyne/core';
import type { Interval } from '../counting/clopper-pearson.js';
import { countErrors, type ErrorCount, errorRatio } from '../counting/error-count.js';
import { referenceLabels } from '../counting/reference-labels.js';
import { airBitsPerSecond } from '../information/air.js';
import { type BitMetric, InformationAccumulator } from '../information/bit-metrics.js';
import { constellationPower, type EvmNormalization, errorPower } from '../quality/evm.js';
import { qFactorDb, toDb } from '../quality/snr.js';
import { type PolAlignment, type PolName, type SyncOptions, type SyncResult, synchronize } from '../sync/synchronize.js';
import { blockQuarterTurns, quadrantResolvedSums, rotateQuarterTurns } from './quadrant-blocks.js';

/** Options of {@link measure}; the synchronization options apply too. */
export interface MeasureOptions extends SyncOptions {
  /** EVM normalized to the average (default) or peak constellation power. */
  readonly evmNormalization?: EvmNormalization;
  /** Bit metrics of the GMI: exact log-sum-exp (default) or max-log. */
  readonly bitMetric?: BitMetric;
  /** Symbol rate, Bd: when given, the AIR in bit/s is reported. */
  readonly symbolRate?: number;
  /** Keep the aligned, normalized symbols in the result (for constellation plots), default false. */
  readonly keepAligned?: boolean;
  /**
   * How the π/2 ambiguity is resolved along the stream. 'per-block' (the
   * default): each block of `slipBlockSymbols` measured symbols is turned by
   * the quarter turn that best fits the reference there, so that a cycle
   * slip costs the symbols of one block instead of every symbol after it;
   * 'none': the quarter turn of the first block holds for the whole stream
   * (every symbol after a slip counts as wrong). Both counts are always
   * reported too ({@link QualityFigures.uncorrected} and
   * {@link QualityFigures.blockCorrected}).
   */
  readonly slipCorrection?: SlipCorrection;
  /** Measured symbols per block of the 'per-block' slip correction (integer ≥ 16, default 512). */
  readonly slipBlockSymbols?: number;
}

/** How the measurement resolves the π/2 ambiguity along the stream (see {@link MeasureOptions.slipCorrection}). */
export type SlipCorrection = 'per-block' | 'none';

/** Default {@link MeasureOptions.slipBlockSymbols}: a slip costs at most this many symbols. */
export const DEFAULT_SLIP_BLOCK_SYMBOLS = 512;

/** Bit and symbol error figures, as counted one way (see {@link QualityFigures.uncorrected}). */
export interface ErrorFigures {
  /** Bit error ratio; with zero errors the upper end of `berCi95` (see `berIsUpperBound`). */
  readonly ber: number;
  /** Clopper–Pearson 95 % interval of the BER. */
  readonly berCi95: Interval;
  /** True when no bit error was seen and `ber` is an upper bound. */
  readonly berIsUpperBound: boolean;
  /** Bit errors counted. */
  readonly bitErrors: number;
  /** Symbol error ratio; with zero errors the upper end of `serCi95`. */
  readonly ser: number;
  /** Clopper–Pearson 95 % interval of the SER. */
  readonly serCi95: Interval;
  /** Symbol errors counted. */
  readonly symbolErrors: number;
}

/** One polarization's symbols as measured, from `skipSymbols` on: N = Nr − skipSymbols of each. */
export interface AlignedSymbols {
  /** Received symbols with rotation and conjugation undone, divided by the gain (unit constellation scale). */
  readonly received: ComplexArray;
  /** The transmitted points they are compared with. */
  readonly reference: ComplexArray;
  /** The transmitted labels. */
  readonly labels: Uint8Array;
}

/** The figures reported per polarization and in total. */
export interface QualityFigures {
  /** Bit error ratio; with zero errors the upper end of `berCi95` (see `berIsUpperBound`). */
  readonly ber: number;
  /** Clopper–Pearson 95 % interval of the BER. */
  readonly berCi95: Interval;
  /** True when no bit error was seen and `ber` is an upper bound. */
  readonly berIsUpperBound: boolean;
  /** Bit errors counted. */
  readonly bitErrors: number;
  /** Bits compared. */
  readonly bits: number;
  /** Symbol error ratio; with zero errors the upper end of `serCi95`. */
  readonly ser: number;
  /** Clopper–Pearson 95 % interval of the SER. */
  readonly serCi95: Interval;
  /** Symbol errors counted. */
  readonly symbolErrors: number;
  /** Symbols compared. */
  readonly symbols: number;
  /** Data-aided rms EVM, a fraction, normalized as `evmNormalization`. */
  readonly evmRms: number;
  /** Data-aided SNR (Es/N0), dB: Σ|a|² / Σ|z − a|² (Infinity for a noiseless stream). */
  readonly snrDb: number;
  /** SNR from the EVM against the average constellation power, 1/EVM², dB. */
  readonly snrFromEvmDb: number;
  /** Q-factor from `ber`, dB (a lower bound when `berIsUpperBound`); null when the BER is 0.5 or more. */
  readonly qDb: number | null;
  /** Bit-wise GMI, bits per symbol per polarization (log2 M for a noiseless stream). */
  readonly gmi: number;
  /** GMI / log2 M. */
  readonly ngmi: number;
  /** Symbol-wise MI, bits per symbol per polarization. */
  readonly mi: number;
  /**
   * The errors counted with the first block's quarter turn for the whole
   * stream: what a receiver without slip correction would see. The
   * headline figures are these with {@link MeasureOptions.slipCorrection}
   * 'none'.
   */
  readonly uncorrected: ErrorFigures;
  /**
   * The errors counted with each block at its own best quarter turn. The
   * headline figures are these with 'per-block' slip correction (the
   * default); equal to `uncorrected` when no block needed another turn.
   */
  readonly blockCorrected: ErrorFigures;
}

/** One polarization's figures with what was fitted. */
export interface PolMeasurement extends QualityFigures {
  /** Least-squares gain ĝ the received symbols were divided by. */
  readonly gain: number;
  /** Noise variance per complex symbol of the fitted Gaussian channel, at unit constellation power. */
  readonly noiseVariance: number;
  /** Synchronization findings of this polarization. */
  readonly alignment: PolAlignment;
  /**
   * Normalized fourth moment E|z|⁴/(E|z|²)² of the aligned, normalized
   * received symbols (1 for QPSK, 1.32 for 16QAM without noise; Gaussian
   * noise pulls it towards 2).
   */
  readonly fourthMoment: number;
}

/** The result of {@link measure}: totals over both polarizations, and each polarization. */
export interface Measurement extends QualityFigures {
  /** The modulation measured against. */
  readonly modulation: ModulationName;
  /** The same figures for each polarization. */
  readonly perPol: {
    /** Received x polarization. */
    readonly x: PolMeasurement;
    /** Received y polarization. */
    readonly y: PolMeasurement;
  };
  /** Synchronization findings: delay, swap, rotation per polarization, conjugation. */
  readonly sync: SyncResult;
  /** How the π/2 ambiguity was resolved along the stream, and how often it changed. */
  readonly slipCorrection: {
    /** 'per-block' or 'none' (the headline figures; `uncorrected` holds the other count). */
    readonly mode: SlipCorrection;
    /** Measured symbols per block. */
    readonly blockSymbols: number;
    /** Blocks whose best quarter turn differed from the first block's, per polarization. */
    readonly turnedBlocks: {
      /** Of the x polarization. */
      readonly x: number;
      /** Of the y polarization. */
      readonly y: number;
    };
  };
  /** (GMIₓ + GMIᵧ)·Rs, bit/s, when `symbolRate` was given; otherwise null. */
  readonly airBitsPerSecond: number | null;
  /** How `evmRms` was normalized. */
  readonly evmNormalization: EvmNormalization;
  /** How the GMI's bit metrics were computed (exact or max-log). */
  readonly bitMetric: BitMetric;
  /** The aligned symbols per polarization when `keepAligned` was set; otherwise null. */
  readonly aligned: {
    /** Received x with its reference. */
    readonly x: AlignedSymbols;
    /** Received y with its reference. */
    readonly y: AlignedSymbols;
  } | null;
}

/**
 * Thrown by {@link measure} when the reference was not found in the received
 * symbols: no figure is valid then. `sync` holds what was found.
 * @example try { measure(rx, ref, 'qpsk'); } catch (e) { if (e instanceof ReferenceNotFoundError) console.log(e.sync.reason); }
 */
export class ReferenceNotFoundError extends Error {
  /** Always 'ReferenceNotFoundError'. */
  override readonly name = 'ReferenceNotFoundError';
  constructor(
    /** What the synchronization found, with its reason. */
    readonly sync: SyncResult,
  ) {
    super(`measure: the reference was not found: ${sync.reason}`);
  }
}

const NAME = 'measure';

/**
 * Measures received symbols against the transmitted reference: the one call
 * a receiver makes after its decisions stage.
 *
 * Steps, per polarization: {@link synchronize} (delay, swap, k·π/2, conjugation;
 * the first `skipSymbols` are left out of everything); undo the rotation and
 * conjugation; normalize by the real least-squares gain against the aligned
 * reference points, ĝ = Re Σ r·conj(a) / Σ|a|² (the received symbols may
 * have any scale; a residual phase stays in the error); then hard decisions
 * (BER, SER, exact 95 % intervals), data-aided EVM and SNR, Q from the BER,
 * and GMI/MI under a Gaussian channel fitted to the data (noise variance
 * σ̂² = mean |z − a|² per polarization). Totals pool the counts and error
 * powers of both polarizations; total GMI and MI are the mean per
 * polarization (bits per symbol per polarization).
 *
 * Cycle slips: by default each block of 512 measured symbols is turned by
 * the quarter turn that best fits the reference there before anything is
 * counted or fitted (see {@link MeasureOptions.slipCorrection}); the counts
 * with the first block's turn for the whole stream are in `uncorrected`.
 * @param received received symbols, Nr per polarization (e.g. after carrier recovery)
 * @param reference transmitted symbols, Nt per polarization, any scale; periodic when Nt < Nr
 * @throws ReferenceNotFoundError when synchronization fails; OptionError for bad options;
 *   RangeError for non-finite symbols, too few symbols, or a reference not made of the modulation's points
 * @example const m = measure(rx, cap.reference, '16qam', { skipSymbols: 2000, symbolRate: 32e9 }); m.ber; m.perPol.y.gmi;
 */
export function measure(
  received: DualPol,
  reference: DualPol,
  modulation: ModulationName,
  options: MeasureOptions = {},
): Measurement {
  const o = validate(modulation, options);
  for (const p of ['x', 'y'] as const) {
    requireFinite(received[p], `received ${p}`, 0);
    requireFinite(reference[p], `reference ${p}`, 0);
  }
  const fit = fitChannel(received, reference, modulation, o);
  const tally = {
    x: new PolarizationTally(fit.c, fit.x, o, false),
    y: new PolarizationTally(fit.c, fit.y, o, false),
  };
  tally.x.add(fit.x.aligned);
  tally.y.add(fit.y.aligned);
  const m = assemble(fit, tally, modulation, o);
  if (!options.keepAligned) return m;
  // The kept symbols as they were counted: each block turned as the tally turned it.
  for (const p of ['x', 'y'] as const) {
    const { received: z, reference: a } = fit[p].aligned;
    const n = z.length >> 1;
    const block = o.slipCorrection === 'per-block' ? o.slipBlockSymbols : n;
    const first = blockQuarterTurns(z, a, 0, Math.min(n, block));
    for (let from = 0; from < n; from += block) {
      const to = Math.min(n, from + block);
      rotateQuarterTurns(z, o.slipCorrection === 'per-block' ? blockQuarterTurns(z, a, from, to) : first, from, to);
    }
  }
  return { ...m, aligned: { x: fit.x.aligned, y: fit.y.aligned } };
}

/** Options of {@link MeasurementStream}: those of {@link measure} but `keepAligned`, and the fitting span. */
export interface StreamMeasureOptions extends Omit<MeasureOptions, 'keepAligned'> {
  /**
   * Received symbols, after the `skipSymbols`, on which the synchronization,
   * the gain and the noise variance are fitted (default 262,144, about
   * 8 MB; at least the reference's length is used); the symbols after them
   * are measured with these as they arrive. A stream no longer than that
   * buffer is fitted on all of its symbols, exactly as {@link measure} does.
   */
  readonly fitSymbols?: number;
}

/** Default {@link StreamMeasureOptions.fitSymbols}: 2^18 symbols. */
export const DEFAULT_FIT_SYMBOLS = 2 ** 18;

/**
 * {@link measure} on a stream of received symbols in bounded memory: the
 * first `skipSymbols + fitSymbols` symbols are buffered; on them the
 * stream is synchronized with the reference and each polarization's gain ĝ
 * and Gaussian noise variance σ̂² are fitted as {@link measure} does; then
 * every symbol from `skipSymbols` on (the buffered ones, then each block
 * as it is added) is aligned, divided by ĝ, decided and counted, and its
 * share of the EVM, SNR, GMI and MI sums is added. Memory stays that of
 * the buffer whatever the stream's length.
 *
 * Against {@link measure} on the whole stream at once: identical for a
 * stream no longer than the buffer. For a longer one, the EVM and SNR are
 * still those at the least-squares gain of every symbol, from running sums
 * (Σ|z|², Re Σ z·conj(a), Σ|a|² give Σ|z/γ − a|² = Σ|z|²/γ² − Σ|a|² at
 * γ = Re Σ z·conj(a) / Σ|a|²), equal within rounding; the decisions (BER, SER)
 * and the GMI and MI use ĝ and σ̂² of the buffer. With N fitted symbols at
 * an SNR s their relative sampling errors are about √(1/(2Ns)) and √(2/N);
 * the GMI of the Gaussian auxiliary channel is stationary at the matched
 * gain and variance, so it moves by their squares (below 1e-4 bit at the
 * default N), and a decision flips only within ĝ's error of a threshold.
 *
 * It also detects cycle slips against the reference on the aligned,
 * normalized symbols ({@link ReferenceSlipDetector}, Taylor 2009), as
 * `cycleSlipsAgainstReference` would on the whole stream.
 * @throws OptionError for bad options
 * @example
 * const s = new MeasurementStream(ref, '16qam', { skipSymbols: 2048 });
 * for (const b of blocks) s.add(b);
 * const m = s.finish(); // ReferenceNotFoundError or RangeError as measure() throws them
 */
export class MeasurementStream {
  private readonly reference: DualPol;
  private readonly modulation: ModulationName;
  private readonly o: Validated;
  private readonly leadLength: number;
  private leadX = new Float64Array(1 << 12);
  private leadY = new Float64Array(1 << 12);
  private leadUsed = 0;
  /** Symbols received so far, per polarization. */
  private received = 0;
  private fit: ChannelFit | null = null;
  private tally: { x: PolarizationTally; y: PolarizationTally } | null = null;
  private finished = false;

  constructor(reference: DualPol, modulation: ModulationName, options: StreamMeasureOptions = {}) {
    this.o = validate(modulation, options);
    const fitSymbols = options.fitSymbols ?? DEFAULT_FIT_SYMBOLS;
    if (!Number.isInteger(fitSymbols) || fitSymbols < 1) throw new OptionError(NAME, 'fitSymbols', 'an integer ≥ 1', fitSymbols);
    const skip = options.skipSymbols ?? 0;
    if (!Number.isInteger(skip) || skip < 0) throw new OptionError(NAME, 'skipSymbols', 'an integer ≥ 0', skip);
    for (const p of ['x', 'y'] as const) requireFinite(reference[p], `reference ${p}`, 0);
    this.reference = reference;
    this.modulation = modulation;
    // At least one reference period: the lead's correlation then spans the reference's wrap, so a
    // reference holding a shorter pattern several times (a looped PRBS cut at any length) cannot
    // align the lead at a copy of the pattern that is wrong past the wrap.
    this.leadLength = skip + Math.max(fitSymbols, reference.x.length >> 1);
  }

  /**
   * Adds the next received symbols (both polarizations, equal lengths).
   * @throws RangeError for a non-finite symbol or unequal lengths; once the
   *   buffer is full, what {@link measure} throws when the reference is not found
   */
  add(block: DualPol): void {
    if (this.finished) throw new RangeError(`${NAME}: symbols added after finish()`);
    const n = block.x.length >> 1;
    if (block.y.length >> 1 !== n) throw new RangeError(`${NAME}: received x has ${n} symbols, y has ${block.y.length >> 1}`);
    requireFinite(block.x, 'received x', this.received);
    requireFinite(block.y, 'received y', this.received);
    let from = 0;
    if (this.fit === null) {
      from = Math.min(n, this.leadLength - this.leadUsed);
      this.buffer(block, from);
      this.received += from;
      if (this.leadUsed === this.leadLength) this.fitLead();
    }
    if (from === n) return;
    const tally = this.tally as { x: PolarizationTally; y: PolarizationTally };
    const fit = this.fit as ChannelFit;
    const first = this.received;
    for (const p of ['x', 'y'] as const) {
      const rx = block[p].subarray(2 * from) as ComplexArray;
      const aligned = alignSymbols(fit.c, rx, first, 0, fit.labels, fit[p].alignment, fit[p].gain);
      tally[p].add(aligned);
    }
    this.received += n - from;
  }

  /**
   * The measurement over every symbol added.
   * @throws ReferenceNotFoundError when synchronization fails; RangeError for too few symbols,
   *   or a reference not made of the modulation's points
   */
  finish(): Measurement {
    if (this.fit === null) this.fitLead();
    this.finished = true;
    const tally = this.tally as { x: PolarizationTally; y: PolarizationTally };
    return assemble(this.fit as ChannelFit, tally, this.modulation, this.o);
  }

  /** Cycle slips found per polarization (complete after {@link finish}); positions count from the first measured symbol. */
  slips(): {
    /** Slips of the x polarization. */
    readonly x: readonly CycleSlip[];
    /** Slips of the y polarization. */
    readonly y: readonly CycleSlip[];
  } {
    const t = this.tally;
    return { x: t ? t.x.slips() : [], y: t ? t.y.slips() : [] };
  }

  private buffer(block: DualPol, n: number): void {
    const need = 2 * (this.leadUsed + n);
    if (need > this.leadX.length) {
      let size = this.leadX.length;
      while (size < need) size *= 2;
      size = Math.min(size, 2 * this.leadLength);
      const nx = new Float64Array(size);
      const ny = new Float64Array(size);
      nx.set(this.leadX.subarray(0, 2 * this.leadUsed));
      ny.set(this.leadY.subarray(0, 2 * this.leadUsed));
      this.leadX = nx;
      this.leadY = ny;
    }
    this.leadX.set(block.x.subarray(0, 2 * n), 2 * this.leadUsed);
    this.leadY.set(block.y.subarray(0, 2 * n), 2 * this.leadUsed);
    this.leadUsed += n;
  }

  private fitLead(): void {
    const lead = {
      x: this.leadX.subarray(0, 2 * this.leadUsed) as ComplexArray,
      y: this.leadY.subarray(0, 2 * this.leadUsed) as ComplexArray,
    };
    const fit = fitChannel(lead, this.reference, this.modulation, this.o);
    const tally = {
      x: new PolarizationTally(fit.c, fit.x, this.o, true),
      y: new PolarizationTally(fit.c, fit.y, this.o, true),
    };
    tally.x.add(fit.x.aligned);
    tally.y.add(fit.y.aligned);
    this.fit = fit;
    this.tally = tally;
    this.leadX = new Float64Array(0);
    this.leadY = new Float64Array(0);
  }
}

interface Validated extends SyncOptions {
  evmNormalization: EvmNormalization;
  bitMetric: BitMetric;
  symbolRate: number | undefined;
  slipCorrection: SlipCorrection;
  slipBlockSymbols: number;
}

function validate(modulation: ModulationName, options: MeasureOptions): Validated {
  if (!MODULATIONS.includes(modulation))
    throw new OptionError(NAME, 'modulation', `one of ${MODULATIONS.join(', ')}`, modulation);
  const evmNormalization = options.evmNormalization ?? 'average';
  if (evmNormalization !== 'average' && evmNormalization !== 'peak') {
    throw new OptionError(NAME, 'evmNormalization', "'average' or 'peak'", evmNormalization);
  }
  const bitMetric = options.bitMetric ?? 'exact';
  if (bitMetric !== 'exact' && bitMetric !== 'max-log')
    throw new OptionError(NAME, 'bitMetric', "'exact' or 'max-log'", bitMetric);
  const symbolRate = options.symbolRate;
  if (symbolRate !== undefined && !(symbolRate > 0 && Number.isFinite(symbolRate))) {
    throw new OptionError(NAME, 'symbolRate', 'a positive symbol rate in Bd', symbolRate);
  }
  const slipCorrection = options.slipCorrection ?? 'per-block';
  if (slipCorrection !== 'per-block' && slipCorrection !== 'none')
    throw new OptionError(NAME, 'slipCorrection', "'per-block' or 'none'", slipCorrection);
  const slipBlockSymbols = options.slipBlockSymbols ?? DEFAULT_SLIP_BLOCK_SYMBOLS;
  if (!Number.isInteger(slipBlockSymbols) || slipBlockSymbols < 16)
    throw new OptionError(NAME, 'slipBlockSymbols', 'an integer ≥ 16', slipBlockSymbols);
  return {
    skipSymbols: options.skipSymbols,
    minCorrelation: options.minCorrelation,
    minPeakToFloor: options.minPeakToFloor,
    evmNormalization,
    bitMetric,
    symbolRate,
    slipCorrection,
    slipBlockSymbols,
  };
}

/** One polarization's fit: alignment, gain, noise variance, and its symbols aligned and normalized. */
interface PolFit {
  alignment: PolAlignment;
  gain: number;
  noiseVariance: number;
  aligned: AlignedSymbols;
}

interface ChannelFit {
  c: Constellation;
  sync: SyncResult;
  labels: Record<PolName, Uint8Array>;
  x: PolFit;
  y: PolFit;
}

/**
 * Synchronizes `received` with the reference and fits each polarization:
 * ĝ = Re Σ r·conj(a) / Σ|a|² over the aligned symbols, then σ̂² = mean |r/ĝ − a|²,
 * with each block of `slipBlockSymbols` turned by its best quarter turn
 * first, whatever the slip correction (the gain is a scale, which a slip
 * must not spoil): ĝ = Σ_b max_k Re(e^(−jkπ/2)·Σ_b r·a*) / Σ|a|² and
 * σ̂² = (Σ|r|²/ĝ² − Σ|a|²)/N (the plain sums for a stream without slips).
 */
function fitChannel(received: DualPol, reference: DualPol, modulation: ModulationName, o: Validated): ChannelFit {
  const c = constellation(modulation);
  const sync = synchronize(received, reference, o);
  if (!sync.found) throw new ReferenceNotFoundError(sync);
  const labels = { x: referenceLabels(c, reference.x), y: referenceLabels(c, reference.y) };
  const pol = (rx: ComplexArray, a: PolAlignment): PolFit => {
    const aligned = alignSymbols(c, rx, 0, sync.skipSymbols, labels, a, 1);
    const z = aligned.received;
    const ref = aligned.reference;
    const { zz, aa, za } = quadrantResolvedSums(z, ref, o.slipBlockSymbols);
    const gain = za / aa;
    if (!(gain > 0)) throw new RangeError(`${NAME}: the least-squares gain of the aligned symbols is ${gain}, not positive`);
    for (let i = 0; i < z.length; i++) z[i] /= gain;
    const noiseVariance = Math.max(0, zz / (gain * gain) - aa) / (z.length >> 1);
    return { alignment: a, gain, noiseVariance, aligned };
  };
  return { c, sync, labels, x: pol(received.x, sync.perPol.x), y: pol(received.y, sync.perPol.y) };
}

/**
 * Aligns received symbols rx[from …] with the reference: undoes the
 * rotation and conjugation, divides by `gain`, and pairs each with its
 * transmitted point and label. rx[i] is received symbol `first + i` of the
 * stream, which carries reference symbol (first + i − delay) mod Nt.
 */
function alignSymbols(
  c: Constellation,
  rx: ComplexArray,
  first: number,
  from: number,
  labels: Record<PolName, Uint8Array>,
  a: PolAlignment,
  gain: number,
): AlignedSymbols {
  const n = (rx.length >> 1) - from;
  const refLabels = labels[a.source];
  const nt = refLabels.length;
  const z = complexArray(n);
  const ref = complexArray(n);
  const sent = new Uint8Array(n);
  const k = a.quarterTurns;
  const conj = a.conjugated ? -1 : 1;
  let j = (((first + from - a.delay) % nt) + nt) % nt;
  for (let i = 0; i < n; i++) {
    const re = rx[2 * (from + i)];
    const im = rx[2 * (from + i) + 1];
    // Undo e^(jkπ/2), then the conjugation: r' = conj?(e^(−jkπ/2)·r).
    let ur = re;
    let ui = im;
    if (k === 1) {
      ur = im;
      ui = -re;
    } else if (k === 2) {
      ur = -re;
      ui = -im;
    } else if (k === 3) {
      ur = -im;
      ui = re;
    }
    z[2 * i] = ur;
    z[2 * i + 1] = conj * ui;
    const label = refLabels[j];
    sent[i] = label;
    ref[2 * i] = c.points[2 * label];
    ref[2 * i + 1] = c.points[2 * label + 1];
    if (++j === nt) j = 0;
  }
  if (gain !== 1) for (let i = 0; i < z.length; i++) z[i] /= gain;
  return { received: z, reference: ref, labels: sent };
}

/**
 * Running sums of one polarization's figures at a fixed gain and noise
 * variance. Symbols are taken in blocks of `slipBlockSymbols` counted from
 * the first measured one (whatever the sizes they are added in): each block
 * is counted at the first block's quarter turn (the uncorrected count, and
 * what the slip detector sees) and at its own best one (the per-block
 * count); the EVM, SNR and information sums follow the chosen mode.
 */
class PolarizationTally {
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
  /** Calls of add(): more than one when symbols were measured beyond the fitted ones. */
  private adds = 0;
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
    private readonly c: Constellation,
    readonly fit: PolFit,
    o: Validated,
    slips: boolean,
  ) {
    // A noiseless stream: the information is log2 M; the Gaussian fit needs σ² > 0.
    this.info = fit.noiseVariance > 0 ? new InformationAccumulator(c, fit.noiseVariance, o.bitMetric) : null;
    this.slipDetector = slips ? new ReferenceSlipDetector() : null;
    this.block = o.slipBlockSymbols;
    this.perBlock = o.slipCorrection === 'per-block';
    this.z = new Float64Array(2 * this.block);
    this.a = new Float64Array(2 * this.block);
    this.labels = new Uint8Array(this.block);
  }

  add(s: AlignedSymbols): void {
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
    this.adds++;
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
   * direct sum when all came in one piece (the fitted ones, normalized by
   * their own gain), else from the running sums.
   */
  errorEnergyAtOwnGain(): number {
    if (this.adds <= 1) return this.errorEnergy;
    const gamma = this.za / this.signalEnergy;
    return Math.max(0, this.m2 / (gamma * gamma) - this.signalEnergy);
  }

  figures(evmNormalization: EvmNormalization): QualityFigures {
    const info = this.info ? this.info.estimate() : { gmi: this.c.bitsPerSymbol, mi: this.c.bitsPerSymbol };
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

function assemble(
  fit: ChannelFit,
  tally: { x: PolarizationTally; y: PolarizationTally },
  modulation: ModulationName,
  o: Validated,
): Measurement {
  tally.x.finish();
  tally.y.finish();
  const { c } = fit;
  const fx = tally.x.figures(o.evmNormalization);
  const fy = tally.y.figures(o.evmNormalization);
  const pol = (t: PolarizationTally, f: QualityFigures): PolMeasurement => {
    const n = t.symbols;
    return {
      ...f,
      gain: t.fit.gain,
      noiseVariance: t.fit.noiseVariance,
      alignment: t.fit.alignment,
      fourthMoment: t.m4 / n / (t.m2 / n) ** 2,
    };
  };
  const pooled = (a: ErrorCount, b: ErrorCount): ErrorCount => ({
    bitErrors: a.bitErrors + b.bitErrors,
    bits: a.bits + b.bits,
    symbolErrors: a.symbolErrors + b.symbolErrors,
    symbols: a.symbols + b.symbols,
  });
  const total = figures(
    c,
    pooled(tally.x.counts(), tally.y.counts()),
    {
      uncorrected: pooled(tally.x.countsOf('uncorrected'), tally.y.countsOf('uncorrected')),
      corrected: pooled(tally.x.countsOf('corrected'), tally.y.countsOf('corrected')),
    },
    tally.x.errorEnergyAtOwnGain() + tally.y.errorEnergyAtOwnGain(),
    tally.x.signalEnergy + tally.y.signalEnergy,
    0.5 * (fx.gmi + fy.gmi),
    0.5 * (fx.mi + fy.mi),
    o.evmNormalization,
  );
  return {
    ...total,
    modulation,
    perPol: { x: pol(tally.x, fx), y: pol(tally.y, fy) },
    sync: fit.sync,
    slipCorrection: {
      mode: o.slipCorrection,
      blockSymbols: o.slipBlockSymbols,
      turnedBlocks: { x: tally.x.turnedBlocks, y: tally.y.turnedBlocks },
    },
    airBitsPerSecond: o.symbolRate === undefined ? null : airBitsPerSecond(fx.gmi, fy.gmi, o.symbolRate),
    evmNormalization: o.evmNormalization,
    bitMetric: o.bitMetric,
    aligned: null,
  };
}

function figures(
  c: Constellation,
  counts: ErrorCount,
  both: { uncorrected: ErrorCount; corrected: ErrorCount },
  errorEnergy: number,
  signalEnergy: number,
  gmi: number,
  mi: number,
  evmNormalization: EvmNormalization,
): QualityFigures {
  const ber = errorRatio(counts.bitErrors, counts.bits);
  const ser = errorRatio(counts.symbolErrors, counts.symbols);
  const meanError = errorEnergy / counts.symbols;
  const evmAverage = Math.sqrt(meanError / constellationPower(c, 'average'));
  return {
    ber: ber.ratio,
    berCi95: ber.ci95,
    berIsUpperBound: ber.isUpperBound,
    bitErrors: counts.bitErrors,
    bits: counts.bits,
    ser: ser.ratio,
    serCi95: ser.ci95,
    symbolErrors: counts.symbolErrors,
    symbols: counts.symbols,
    evmRms: evmNormalization === 'average' ? evmAverage : Math.sqrt(meanError / constellationPower(c, 'peak')),
    snrDb: toDb(signalEnergy / errorEnergy),
    snrFromEvmDb: toDb(1 / (evmAverage * evmAverage)),
    qDb: ber.ratio < 0.5 ? qFactorDb(ber.ratio) : null,
    gmi,
    ngmi: gmi / c.bitsPerSymbol,
    mi,
    uncorrected: errorFigures(both.uncorrected),
    blockCorrected: errorFigures(both.corrected),
  };
}

function errorFigures(counts: ErrorCount): ErrorFigures {
  const ber = errorRatio(counts.bitErrors, counts.bits);
  const ser = errorRatio(counts.symbolErrors, counts.symbols);
  return {
    ber: ber.ratio,
    berCi95: ber.ci95,
    berIsUpperBound: ber.isUpperBound,
    bitErrors: counts.bitErrors,
    ser: ser.ratio,
    serCi95: ser.ci95,
    symbolErrors: counts.symbolErrors,
  };
}

/** @param first index of a[0] in its stream, in symbols (for the message) */
function requireFinite(a: ComplexArray, what: string, first: number): void {
  for (let i = 0; i < a.length; i++) {
    if (!Number.isFinite(a[i])) throw new RangeError(`${NAME}: ${what} symbol ${first + (i >> 1)} is not finite (${a[i]})`);
  }
}

import { type ComplexArray, type CycleSlip, type DualPol, type ModulationName, OptionError } from '@intradyne/core';
import { type CompactReference, isCompactReference } from '../counting/compact-reference.js';
import { ReferenceMismatchError } from '../counting/reference-mismatch.js';
import { FULL_PERIOD_SYMBOLS } from '../sync/constants.js';
import { type ReferenceSource, referenceSource } from '../sync/reference-source.js';
import type { SyncOutcome } from '../sync/search.js';
import type { PolName } from '../sync/synchronize.js';
import { type AlignedSymbols, alignedArrays } from './align.js';
import { assemble, type Measurement } from './figures.js';
import { type ChannelFit, fitChannel, forEachAligned, synchronizeWith } from './fit.js';
import { type MeasureOptions, NAME, requireFinite, type Validated, validate } from './options.js';
import { PolarizationTally } from './tally.js';

/** Options of {@link MeasurementStream}: those of {@link measure} but `keepAligned`, and the fitting span. */
export interface StreamMeasureOptions extends Omit<MeasureOptions, 'keepAligned'> {
  /**
   * Received symbols, after the `skipSymbols`, on which the synchronization,
   * the gain and the noise variance are fitted (default 262,144, about
   * 8 MB; at least the reference's length for a reference of up to
   * {@link FULL_PERIOD_SYMBOLS}, and more for a longer one while a repeated
   * pattern leaves its delay open: see {@link MeasurementStream}); the symbols after them
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
 * The reference may be given as its labels ({@link CompactReference}, 2
 * bytes per symbol for both polarizations), which is what keeps a reference
 * as long as the capture cheap. The buffer spans at least one reference
 * period when the reference has at most {@link FULL_PERIOD_SYMBOLS}
 * symbols, so that a reference holding a shorter pattern several times
 * (a looped PRBS cut at any length) cannot align the buffer at a copy of
 * the pattern that is wrong past the reference's wrap. A longer reference
 * is searched with a leading segment against every delay (see
 * {@link synchronize}); when another delay fits as well and names the same
 * symbols for all but fewer than {@link SYNC_BLOCK_SYMBOLS} of the buffered
 * ones, the buffer grows (doubling, up to one reference period) until the
 * symbols tell the delays apart: memory then grows only for such a
 * reference, and only as far as that takes.
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
 * normalized symbols ({@link @intradyne/core!ReferenceSlipDetector}, Taylor 2009), as
 * `cycleSlipsAgainstReference` would on the whole stream.
 * @throws OptionError for bad options
 * @example
 * const s = new MeasurementStream(ref, '16qam', { skipSymbols: 2048 });
 * for (const b of blocks) s.add(b);
 * const m = s.finish(); // ReferenceNotFoundError or RangeError as measure() throws them
 */
export class MeasurementStream {
  private readonly reference: DualPol | CompactReference;
  private readonly source: ReferenceSource;
  private readonly modulation: ModulationName;
  private readonly o: Validated;
  private readonly skip: number;
  /** Symbols the lead may grow to while a repeated pattern leaves the delay open. */
  private readonly leadLimit: number;
  private leadLength: number;
  private leadX = new Float64Array(1 << 12);
  private leadY = new Float64Array(1 << 12);
  private leadUsed = 0;
  /** Symbols received so far, per polarization. */
  private received = 0;
  private fit: ChannelFit | null = null;
  private tally: Record<PolName, PolarizationTally> | null = null;
  private scratch: AlignedSymbols | null = null;
  private finished = false;

  constructor(reference: DualPol | CompactReference, modulation: ModulationName, options: StreamMeasureOptions = {}) {
    this.o = validate(modulation, options);
    const fitSymbols = options.fitSymbols ?? DEFAULT_FIT_SYMBOLS;
    if (!Number.isInteger(fitSymbols) || fitSymbols < 1) throw new OptionError(NAME, 'fitSymbols', 'an integer ≥ 1', fitSymbols);
    const skip = options.skipSymbols ?? 0;
    if (!Number.isInteger(skip) || skip < 0) throw new OptionError(NAME, 'skipSymbols', 'an integer ≥ 0', skip);
    requireReference(reference, modulation);
    this.reference = reference;
    this.source = referenceSource(reference);
    this.modulation = modulation;
    this.skip = skip;
    const nt = this.source.length;
    // At least one reference period for a reference searched over its whole period: the lead's correlation then
    // spans the reference's wrap, so that a reference holding a shorter pattern several times (a looped PRBS cut at
    // any length) cannot align the lead at a copy of the pattern that is wrong past the wrap. A longer reference is
    // searched with a segment; its copies are told apart by growing the lead only when they tie (see the class).
    this.leadLimit = skip + Math.max(fitSymbols, nt);
    this.leadLength = nt <= FULL_PERIOD_SYMBOLS ? this.leadLimit : skip + fitSymbols;
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
    while (this.fit === null && from < n) {
      const take = Math.min(n - from, this.leadLength - this.leadUsed);
      this.buffer(block, from, take);
      from += take;
      this.received += take;
      if (this.leadUsed === this.leadLength) this.fitLead(false);
    }
    if (from === n) return;
    const first = this.received;
    for (const p of ['x', 'y'] as const) {
      const rx = block[p].subarray(2 * from) as ComplexArray;
      this.count(p, rx, first, 0, false);
    }
    this.received += n - from;
  }

  /**
   * The measurement over every symbol added.
   * @throws ReferenceNotFoundError when synchronization fails; RangeError for too few symbols,
   *   or a reference not made of the modulation's points
   */
  finish(): Measurement {
    if (this.fit === null) this.fitLead(true);
    this.finished = true;
    return assemble((this.fit as ChannelFit).sync, this.tally as Record<PolName, PolarizationTally>, this.modulation, this.o);
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

  private buffer(block: DualPol, from: number, n: number): void {
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
    this.leadX.set(block.x.subarray(2 * from, 2 * (from + n)), 2 * this.leadUsed);
    this.leadY.set(block.y.subarray(2 * from, 2 * (from + n)), 2 * this.leadUsed);
    this.leadUsed += n;
  }

  /**
   * Synchronizes and fits on the lead, then counts it; or, when the stream goes on and the
   * delay is still open between copies of a repeated pattern, lets the lead grow.
   */
  private fitLead(atEnd: boolean): void {
    const lead = {
      x: this.leadX.subarray(0, 2 * this.leadUsed) as ComplexArray,
      y: this.leadY.subarray(0, 2 * this.leadUsed) as ComplexArray,
    };
    const outcome: SyncOutcome = synchronizeWith(lead, this.source, this.o);
    if (!atEnd && !outcome.settled && this.leadLength < this.leadLimit) {
      this.leadLength = Math.min(this.leadLimit, this.skip + 2 * (this.leadLength - this.skip));
      return;
    }
    const fit = fitChannel(lead, this.reference, this.modulation, outcome.result, this.o);
    this.fit = fit;
    this.tally = {
      x: new PolarizationTally(fit.c, fit.x, this.o, true),
      y: new PolarizationTally(fit.c, fit.y, this.o, true),
    };
    for (const p of ['x', 'y'] as const) this.count(p, lead[p], 0, fit.sync.skipSymbols, true);
    this.leadX = new Float64Array(0);
    this.leadY = new Float64Array(0);
  }

  /** Aligns rx[from …] (received symbols first + from …), normalizes and counts them. */
  private count(p: PolName, rx: ComplexArray, first: number, from: number, fitted: boolean): void {
    const block = this.o.slipBlockSymbols;
    this.scratch ??= alignedArrays(block);
    const tally = (this.tally as Record<PolName, PolarizationTally>)[p];
    forEachAligned(this.fit as ChannelFit, p, rx, first, from, block, this.scratch, (b) => tally.add(b, fitted));
  }
}

/**
 * Checks a reference before it is used: polarizations of equal lengths, and finite symbols or labels
 * of the modulation measured.
 * @throws RangeError for unequal lengths or a non-finite symbol; OptionError for labels of another modulation
 */
export function requireReference(reference: DualPol | CompactReference, modulation: ModulationName): void {
  const compact = isCompactReference(reference);
  const [nx, ny] = compact
    ? [reference.labels.x.length, reference.labels.y.length]
    : [reference.x.length >> 1, reference.y.length >> 1];
  if (nx !== ny || (compact && nx !== reference.symbols))
    throw new ReferenceMismatchError(
      `${NAME}: reference x has ${nx} symbols, y has ${ny}${compact ? `, ${reference.symbols} stated` : ''}`,
    );
  if (compact) {
    if (reference.modulation !== modulation)
      throw new OptionError(NAME, 'modulation', `the reference's modulation (${reference.modulation})`, modulation);
    return;
  }
  for (const p of ['x', 'y'] as const) requireFinite(reference[p], `reference ${p}`, 0);
}

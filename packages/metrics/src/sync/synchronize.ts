import type { DualPol } from '@intradyne/core';
import { type CompactReference, isCompactReference } from '../counting/compact-reference.js';
import { ReferenceMismatchError } from '../counting/reference-mismatch.js';
import { referenceSource } from './reference-source.js';
import { synchronizeSource, validateSyncOptions } from './search.js';

export { FULL_PERIOD_SYMBOLS, MAX_TIED_DELAYS, MIN_SYNC_SYMBOLS, SEGMENT_SYMBOLS, SYNC_BLOCK_SYMBOLS } from './constants.js';

/** A polarization name. */
export type PolName = 'x' | 'y';

/** Options of {@link synchronize}. */
export interface SyncOptions {
  /** Leading received symbols left out (equalizer convergence), default 0. */
  readonly skipSymbols?: number;
  /**
   * Smallest normalized correlation peak ρ (see {@link PolAlignment.correlation})
   * accepted as the reference, in (0, 1); default 0.2. A matched stream at an
   * SNR of 0 dB still gives ρ ≈ 0.7.
   */
  readonly minCorrelation?: number;
  /**
   * Smallest ratio of the peak to the rms of the correlation at all other
   * delays, > 1; default 6. For unrelated data the magnitudes are Rayleigh,
   * so a chance peak exceeds 6 rms with probability about Nt·e^(−36)
   * (below 1e-9 for references up to 10⁶ symbols).
   */
  readonly minPeakToFloor?: number;
}

/** What synchronization found for one received polarization. */
export interface PolAlignment {
  /** The reference polarization this received polarization carries. */
  readonly source: PolName;
  /**
   * Delay in symbols, in [0, Nt): received symbol n carries reference symbol
   * (n − delay) mod Nt (Nt the reference length; the reference is periodic).
   */
  readonly delay: number;
  /** k in received ≈ g·e^(jkπ/2)·(reference or its conjugate). */
  readonly quarterTurns: 0 | 1 | 2 | 3;
  /** k·π/2, rad. */
  readonly rotationRad: number;
  /** True when the received stream carries the conjugate of the reference (I and Q swapped). */
  readonly conjugated: boolean;
  /**
   * Normalized correlation peak ρ = |c[D]| / √(Σ|F|²·Σ|t|²) over the symbols
   * used, in [0, 1]; 1/√(1 + 1/SNR) for a matched stream in AWGN. For a
   * reference longer than {@link FULL_PERIOD_SYMBOLS}, ρ = |Σ r·t*| / √(Σ|r|²·Σ|t|²)
   * over the used symbols at the delay found (the same when the capture is
   * no longer than the reference). With the
   * 'differential' method: Σ_b |c_b| / √(Σ|r|²·Σ|t|²) at the delay found,
   * c_b the correlation of block b of {@link SYNC_BLOCK_SYMBOLS} symbols
   * (the same value for a stream without slips).
   */
  readonly correlation: number;
  /**
   * Peak over the rms of the correlation magnitude at all other delays (of
   * the method's correlation; for a reference longer than
   * {@link FULL_PERIOD_SYMBOLS}, of the correlation of the first
   * {@link SEGMENT_SYMBOLS} used symbols).
   */
  readonly peakToFloor: number;
  /**
   * Phase of the peak left after the quarter turns, rad, in [−π/4, π/4]: a
   * static carrier phase error (with the 'differential' method, that of the
   * first block, as are the quarter turns).
   */
  readonly residualPhaseRad: number;
  /** True when the peak passes both thresholds. */
  readonly found: boolean;
}

/**
 * How the delays were found: 'coherent', the plain cross-correlation of the
 * symbols; 'differential', the cross-correlation of adjacent-symbol products
 * zₙ·z*ₙ₋₁, which a cycle slip or a slow phase drift does not disturb (tried
 * when the coherent search does not find the reference).
 */
export type SyncMethod = 'coherent' | 'differential';

/** The outcome of {@link synchronize}. */
export interface SyncResult {
  /** True when the reference was found in both polarizations; when false, no metric may be reported. */
  readonly found: boolean;
  /** How the delays were found (the coherent search first; the differential one when it failed). */
  readonly method: SyncMethod;
  /** Why the reference was not found (null when found). */
  readonly reason: string | null;
  /** True when received x carries reference y and received y carries reference x. */
  readonly swapped: boolean;
  /** Delay, rotation and conjugation found for each received polarization. */
  readonly perPol: {
    /** Received x. */
    readonly x: PolAlignment;
    /** Received y. */
    readonly y: PolAlignment;
  };
  /** Nt, reference symbols per polarization. */
  readonly referenceLength: number;
  /** Received symbols per polarization used (after the skipped ones). */
  readonly symbolsUsed: number;
  /** Leading received symbols left out. */
  readonly skipSymbols: number;
  /** Least normalized correlation accepted at the peak, 0…1. */
  readonly minCorrelation: number;
  /** Least ratio of the correlation peak to the floor of the other delays. */
  readonly minPeakToFloor: number;
}
/**
 * Synchronizes received symbols with the transmitted reference: finds, for
 * each received polarization, which reference polarization it carries, the
 * delay, the k·π/2 rotation and whether it is conjugated — the ambiguities a
 * blind receiver leaves (polarization swap, phase ambiguity of the carrier
 * recovery, swapped I and Q).
 *
 * The reference repeats (an arbitrary waveform generator loops it), so the
 * received stream, from `skipSymbols` on, is folded onto one period of Nt
 * symbols (this holds whether the capture is longer than the reference or
 * shorter), and circularly cross-correlated with each reference polarization
 * and its conjugate by FFT: c[D] = Σₘ F[m]·conj(t[(m − D) mod Nt]), eight
 * correlations in all. The peak gives the delay; its phase θ gives
 * k = round(2θ/π) mod 4. The two consistent assignments (straight or
 * swapped) are scored by the sum of their peaks ρ; ties (a reference whose y
 * is a delayed copy of x, as a short repeating PRBS makes) resolve to
 * straight, which measures the same.
 *
 * Delays are found per polarization: a 2×2 equalizer may leave x and y a few
 * symbols apart.
 *
 * A reference longer than {@link FULL_PERIOD_SYMBOLS} is not correlated
 * over its whole period at once (arrays as long as the reference): the first
 * {@link SEGMENT_SYMBOLS} used symbols are correlated with it at every delay,
 * block by block (overlap-save, memory independent of Nt), keeping the peak,
 * the floor and every delay whose magnitude is at least half the peak's
 * (a reference holding a shorter pattern several times fits the segment at
 * each copy); each such delay is then checked over every used symbol, and
 * the best ρ wins (equal ρ: the smallest delay, as the delays then name the
 * same symbols everywhere in the capture). More than {@link MAX_TIED_DELAYS}
 * such delays: not found, with the reason.
 *
 * Cycle slips of the carrier recovery rotate parts of the stream by
 * multiples of π/2, so that their contributions to c[D] cancel: with enough
 * of them no peak stands out. When the coherent search does not find the
 * reference, the same search runs on the adjacent-symbol products
 * dₙ = zₙ·z*ₙ₋₁ against tⱼ·t*ⱼ₋₁ (a constant rotation cancels in each
 * product, so a slip spoils one product, not the rest of the stream; the
 * conjugate of a stream has conjugate products): the peak gives the delay,
 * the source and the conjugation, and the first block of
 * {@link SYNC_BLOCK_SYMBOLS} symbols the quarter turns. `method` says which
 * search found it.
 * @param received received symbols, Nr per polarization, any scale
 * @param reference transmitted symbols, Nt per polarization, any scale, or their labels
 * @returns the findings; `found` is false (with a `reason`) when a peak fails a threshold
 * @throws OptionError for bad options; RangeError when x and y differ in length or fewer than
 *   {@link MIN_SYNC_SYMBOLS} symbols remain after the skip or in the reference
 * @example const s = synchronize(rx, ref, { skipSymbols: 1000 }); if (!s.found) throw new Error(s.reason);
 */
export function synchronize(received: DualPol, reference: DualPol | CompactReference, options: SyncOptions = {}): SyncResult {
  const o = validateSyncOptions(options);
  const nt = isCompactReference(reference) ? reference.symbols : reference.x.length >> 1;
  const nty = isCompactReference(reference) ? reference.labels.y.length : reference.y.length >> 1;
  if (nty !== nt) throw new ReferenceMismatchError(`synchronize: reference x has ${nt} symbols, y has ${nty}`);
  return synchronizeSource(received, referenceSource(reference), o).result;
}

import {
  type ChannelBlock,
  type ComplexArray,
  complexArray,
  type DualPol,
  defaultReceiver,
  type FieldBlock,
  fft,
  pipe,
  type ReceiverSettings,
  type ReplacedStages,
  type Stage,
  strongestTone,
  type WeightedSequence,
} from '@intradyne/core';
import { type CompactReference, isCompactReference, referencePoints } from '../counting/compact-reference.js';
import { circularCorrelation, foldOntoPeriod } from '../sync/correlation.js';

/** What {@link acquireWithReference} found on the start of a capture. */
export interface ReferenceAcquisition {
  /** The carrier offset, Hz (x rotating as exp(+j2π·f·t)). */
  readonly freqOffsetHz: number;
  /**
   * Per reference polarization, the delay D in symbols, in [0, Nt): symbol
   * n of the clock-recovered stream (and of the equalizer's output) carries
   * reference symbol (n − D) mod Nt.
   */
  readonly delays: Readonly<Record<'x' | 'y', number>>;
  /** Per reference polarization, the power correlation's peak over its rms at all other delays. */
  readonly peakToRms: Readonly<Record<'x' | 'y', number>>;
  /** True when the capture carries the conjugate of the reference (I and Q swapped at the receiver). */
  readonly conjugated: boolean;
  /** Symbols the acquisition was made on. */
  readonly symbols: number;
}

/** Symbols of the start of the capture the acquisition is made on. */
export const ACQUISITION_SYMBOLS = 16384;

/** Fewest symbols the acquisition is tried on. */
export const MIN_ACQUISITION_SYMBOLS = 1024;

/**
 * The least peak-to-rms of the power correlation trusted: the rms of a
 * correlation of noise is its typical size, and the largest of Nt of them
 * reaches about √(2·ln Nt) (5.3 for 2^20 delays) times it.
 */
export const MIN_ACQUISITION_PEAK = 8;

/**
 * Why {@link acquireWithReference} could not place the reference.
 * @example try { acquireWithReference(blocks, settings, ref); } catch (e) { if (e instanceof AcquisitionError) console.log(e.message); }
 */
export class AcquisitionError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'AcquisitionError';
  }
}

/**
 * Places the reference in a capture and finds its carrier offset before
 * any equalizer, for constellations a blind receiver cannot start on: a
 * shaped QAM is nearly Gaussian, so CMA and RDE have little to hold on
 * (its fourth-order cumulants are small) and its fourth power has no
 * carrier tone (E a⁴ ≈ 0).
 *
 * The front of the default chain (normalize, orthogonalize, deskew,
 * combine, resample, dispersion, matched filter, clock recovery; no
 * frequency shift) runs over the start of the capture, and the symbol
 * instants r(k) = (x(2k), y(2k)) are taken, k < K.
 *
 * Delay: the total power |x|² + |y|² does not depend on the polarization
 * state (the fiber's Jones matrix is unitary), nor on the carrier; it
 * follows |sₓ|² + |s_y|² of the transmitted symbols, and each polarization's
 * share of it. Each reference polarization's delay is the peak of the
 * circular correlation, over every delay of the periodic reference, of the
 * received power folded onto one period with that polarization's power,
 * means removed (the synchronization's `circularCorrelation`).
 *
 * Offset: with the delays known, the four products rₐ(k)·s_b*(k − D_b)
 * (a, b ∈ {x, y}) each hold J_ab·|s_b|²·e^(jωk) plus terms of zero mean,
 * whatever the polarization state J; the offset is the peak of the sum of
 * their periodograms (`strongestTone` of core), data-aided and polarization
 * independent. Range ±Rs/2. A capture with I and Q
 * swapped carries the conjugate of the field (times j): its products with
 * s_b instead of s_b* hold the tone, so both are formed and the stronger
 * peak says which, and at what frequency the capture's field turns.
 *
 * The clock recovery of a second run places its symbol instants from the
 * same samples, with the offset then removed; the delays are taken again on
 * that run, so that they count the symbols exactly as the analysis will.
 * @param blocks the capture's channel blocks (read from the start, as far as needed, twice)
 * @param settings the receiver's settings (its own `replace` is not used here)
 * @param reference the transmitted symbols or labels, periodic
 * @throws AcquisitionError when the capture gives too few symbols, or the power correlation shows no clear peak (the reference is not in the capture)
 * @example const a = acquireWithReference(blocks, settings, reference); a.freqOffsetHz
 */
export function acquireWithReference(
  blocks: Iterable<ChannelBlock>,
  settings: ReceiverSettings<ReplacedStages>,
  reference: DualPol | CompactReference,
): ReferenceAcquisition {
  const points = {
    x: isCompactReference(reference) ? referencePoints(reference, 'x') : reference.x,
    y: isCompactReference(reference) ? referencePoints(reference, 'y') : reference.y,
  };
  const first = symbolInstants(blocks, settings, null);
  if (first.count < MIN_ACQUISITION_SYMBOLS)
    throw new AcquisitionError(
      `the capture gave ${first.count} symbols to place the reference on (at least ${MIN_ACQUISITION_SYMBOLS} needed)`,
    );
  const firstDelays = {
    x: powerDelay(first, points.x),
    y: powerDelay(first, points.y),
  };
  const firstOffset = offsetAgainstReference(first, points, { x: firstDelays.x.delay, y: firstDelays.y.delay });
  const freqOffsetHz = firstOffset.cyclesPerSymbol * settings.symbolRate;
  const second = symbolInstants(blocks, settings, freqOffsetHz);
  const x = powerDelay(second, points.x);
  const y = powerDelay(second, points.y);
  for (const [p, d] of [
    ['x', x],
    ['y', y],
  ] as const) {
    if (!(d.peakToRms >= MIN_ACQUISITION_PEAK))
      throw new AcquisitionError(
        `the reference's ${p} polarization was not found in the capture's power: correlation peak ${d.peakToRms.toFixed(1)} times its rms (at least ${MIN_ACQUISITION_PEAK} expected)`,
      );
  }
  return {
    freqOffsetHz,
    delays: { x: x.delay, y: y.delay },
    peakToRms: { x: x.peakToRms, y: y.peakToRms },
    conjugated: firstOffset.conjugated,
    symbols: second.count,
  };
}

/** Symbol instants of the start of the capture, both polarizations. */
interface Instants {
  readonly x: ComplexArray;
  readonly y: ComplexArray;
  readonly count: number;
}

/** Runs the chain's front over the start of the capture (with a known offset removed, or none) and keeps the symbol instants. */
function symbolInstants(
  blocks: Iterable<ChannelBlock>,
  settings: ReceiverSettings<ReplacedStages>,
  freqOffsetHz: number | null,
): Instants {
  const rx = defaultReceiver({
    ...settings,
    replace: undefined,
    options: { ...settings.options, coarseFrequency: { freqOffsetHz: freqOffsetHz ?? 0 } },
  });
  const s = rx.stages;
  const frontEnd: Stage<'channels', 'field', unknown> = s.deskew
    ? pipe(s.normalize, s.orthogonalize, s.deskew, s.combine)
    : pipe(s.normalize, s.orthogonalize, s.combine);
  const front = pipe(frontEnd, pipe(s.resample, s.dispersion, s.coarseFrequency, s.matchedFilter, s.timing));
  const x = complexArray(ACQUISITION_SYMBOLS);
  const y = complexArray(ACQUISITION_SYMBOLS);
  let count = 0;
  const take = (b: FieldBlock | null) => {
    if (b === null) return;
    // Even samples are the symbol instants (the clock recovery's output convention).
    for (let i = 0; 4 * i < b.x.length && count < ACQUISITION_SYMBOLS; i++, count++) {
      x[2 * count] = b.x[4 * i];
      x[2 * count + 1] = b.x[4 * i + 1];
      y[2 * count] = b.y[4 * i];
      y[2 * count + 1] = b.y[4 * i + 1];
    }
  };
  for (const block of blocks) {
    take(front.process(block) as FieldBlock);
    if (count >= ACQUISITION_SYMBOLS) break;
  }
  if (count < ACQUISITION_SYMBOLS) take(front.flush() as FieldBlock | null);
  return { x, y, count };
}

/** The delay of one reference polarization by power correlation, and its peak over the rms of the others. */
function powerDelay(r: Instants, ref: ComplexArray): { delay: number; peakToRms: number } {
  const k = r.count;
  const nt = ref.length >> 1;
  const received = complexArray(k);
  let mean = 0;
  for (let i = 0; i < k; i++) mean += power(r.x, i) + power(r.y, i);
  mean /= Math.max(1, k);
  for (let i = 0; i < k; i++) received[2 * i] = power(r.x, i) + power(r.y, i) - mean;
  const transmitted = complexArray(nt);
  let refMean = 0;
  for (let n = 0; n < nt; n++) refMean += power(ref, n);
  refMean /= nt;
  for (let n = 0; n < nt; n++) transmitted[2 * n] = power(ref, n) - refMean;
  // c[D] = Σₘ F[m]·t[m − D] over one period: received symbol n carries reference symbol n − D.
  const c = circularCorrelation(fft(foldOntoPeriod(received, 0, nt)), fft(transmitted), false);
  let best = 0;
  let sum2 = 0;
  for (let d = 0; d < nt; d++) {
    sum2 += c[2 * d] * c[2 * d];
    if (c[2 * d] > c[2 * best]) best = d;
  }
  const peak = c[2 * best];
  const others = nt > 1 ? (sum2 - peak * peak) / (nt - 1) : 0;
  // A correlation that is zero everywhere else (a reference of one symbol) tells nothing: 0.
  return { delay: best, peakToRms: others > 0 ? peak / Math.sqrt(others) : 0 };
}

/**
 * The carrier offset in cycles per symbol from the four data-aided products
 * (see {@link acquireWithReference}), with the reference as sent or
 * conjugated, whichever shows the stronger tone.
 */
function offsetAgainstReference(
  r: Instants,
  ref: Readonly<Record<'x' | 'y', ComplexArray>>,
  delays: Record<'x' | 'y', number>,
): { cyclesPerSymbol: number; conjugated: boolean } {
  const straight = strongestTone(products(r, ref, delays, false), 4);
  const conjugate = strongestTone(products(r, ref, delays, true), 4);
  const conjugated = conjugate.power > straight.power;
  return { cyclesPerSymbol: (conjugated ? conjugate : straight).frequency, conjugated };
}

/** The four sequences rₐ(k)·s_b*(k − D_b) (rₐ(k)·s_b(k − D_b) when `conjugate`), a, b ∈ {x, y}. */
function products(
  r: Instants,
  ref: Readonly<Record<'x' | 'y', ComplexArray>>,
  delays: Record<'x' | 'y', number>,
  conjugate: boolean,
): WeightedSequence[] {
  const k = r.count;
  const sign = conjugate ? -1 : 1;
  const out: WeightedSequence[] = [];
  for (const received of [r.x, r.y]) {
    for (const p of ['x', 'y'] as const) {
      const s = ref[p];
      const nt = s.length >> 1;
      const u = complexArray(k);
      for (let i = 0; i < k; i++) {
        const m = (((i - delays[p]) % nt) + nt) % nt;
        // s* as sent, or s itself for a conjugated capture: (sr − j·sign·si)
        const sr = s[2 * m];
        const si = sign * s[2 * m + 1];
        u[2 * i] = received[2 * i] * sr + received[2 * i + 1] * si;
        u[2 * i + 1] = received[2 * i + 1] * sr - received[2 * i] * si;
      }
      out.push({ z: u, weight: 1 });
    }
  }
  return out;
}

function power(z: ComplexArray, i: number): number {
  return z[2 * i] * z[2 * i] + z[2 * i + 1] * z[2 * i + 1];
}

import { type ComplexArray, complexArray, type DualPol, fft, OptionError } from '@intradyne/core';
import { circularCorrelation, foldOntoPeriod } from './correlation.js';

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
   * used, in [0, 1]; 1/√(1 + 1/SNR) for a matched stream in AWGN. With the
   * 'differential' method: Σ_b |c_b| / √(Σ|r|²·Σ|t|²) at the delay found,
   * c_b the correlation of block b of {@link SYNC_BLOCK_SYMBOLS} symbols
   * (the same value for a stream without slips).
   */
  readonly correlation: number;
  /** Peak over the rms of the correlation magnitude at all other delays (of the method's correlation). */
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

/** Fewest symbols (used, and in the reference) for which the correlation statistics above hold. */
export const MIN_SYNC_SYMBOLS = 128;

/**
 * Symbols per block of the differential method's block correlation, and of
 * its first block, which sets the quarter turns: a cycle slip is at most one
 * per few thousand symbols where a receiver works at all, and 512 symbols
 * set a quadrant without doubt down to an SNR of 0 dB (the block sum is 512
 * against a noise of about √512 ≈ 23).
 */
export const SYNC_BLOCK_SYMBOLS = 512;

const NAME = 'synchronize';

interface Candidate {
  delay: number;
  re: number;
  im: number;
  correlation: number;
  peakToFloor: number;
  conjugated: boolean;
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
 * @param reference transmitted symbols, Nt per polarization, any scale
 * @returns the findings; `found` is false (with a `reason`) when a peak fails a threshold
 * @throws OptionError for bad options; RangeError when x and y differ in length or fewer than
 *   {@link MIN_SYNC_SYMBOLS} symbols remain after the skip or in the reference
 * @example const s = synchronize(rx, ref, { skipSymbols: 1000 }); if (!s.found) throw new Error(s.reason);
 */
export function synchronize(received: DualPol, reference: DualPol, options: SyncOptions = {}): SyncResult {
  const o = validate(options);
  const nr = received.x.length >> 1;
  const nt = reference.x.length >> 1;
  if (received.y.length >> 1 !== nr)
    throw new RangeError(`${NAME}: received x has ${nr} symbols, y has ${received.y.length >> 1}`);
  if (reference.y.length >> 1 !== nt)
    throw new RangeError(`${NAME}: reference x has ${nt} symbols, y has ${reference.y.length >> 1}`);
  if (nt < MIN_SYNC_SYMBOLS)
    throw new RangeError(`${NAME}: the reference needs at least ${MIN_SYNC_SYMBOLS} symbols, it has ${nt}`);
  const used = nr - o.skipSymbols;
  if (used < MIN_SYNC_SYMBOLS) {
    throw new RangeError(
      `${NAME}: ${MIN_SYNC_SYMBOLS} received symbols are needed after skipping ${o.skipSymbols}, ${Math.max(used, 0)} remain`,
    );
  }
  const coherent = assign(search(received, reference, o, used, 'coherent'), o);
  if (coherent.reasons.length === 0) return result(coherent, 'coherent', nt, used, o);
  const differential = assign(search(received, reference, o, used, 'differential'), o);
  if (differential.reasons.length === 0) return result(differential, 'differential', nt, used, o);
  return result(coherent, 'coherent', nt, used, o);
}

type Candidates = Record<PolName, Record<PolName, Candidate>>;

/** The best candidate for every pair (received polarization, reference polarization), by one method. */
function search(received: DualPol, reference: DualPol, o: Required<SyncOptions>, used: number, method: SyncMethod): Candidates {
  const nt = reference.x.length >> 1;
  const refs =
    method === 'coherent' ? reference : { x: adjacentProducts(reference.x, true), y: adjacentProducts(reference.y, true) };
  const refSpectra = { x: fft(refs.x), y: fft(refs.y) };
  const best = { x: {}, y: {} } as Candidates;
  // Every array below is as long as the reference: one set serves all eight correlations.
  const folded = complexArray(nt);
  const foldedSpectrum = complexArray(nt);
  const scratch = { prod: complexArray(nt), out: complexArray(nt) };
  for (const p of ['x', 'y'] as const) {
    // The products start one symbol later: the first has no predecessor among the used symbols.
    const stream = method === 'coherent' ? received[p] : adjacentProducts(received[p], false);
    const start = method === 'coherent' ? o.skipSymbols : o.skipSymbols + 1;
    const count = method === 'coherent' ? used : used - 1;
    foldOntoPeriod(stream, start, nt, folded);
    fft(folded, foldedSpectrum);
    const foldedEnergy = energy(folded);
    for (const q of ['x', 'y'] as const) {
      const correlate = (conjugate: boolean) => circularCorrelation(foldedSpectrum, refSpectra[q], conjugate, scratch);
      const plain = peak(correlate(false), start, count, foldedEnergy, refs[q], false);
      const conj = peak(correlate(true), start, count, foldedEnergy, refs[q], true);
      const c = conj.correlation > plain.correlation ? conj : plain;
      best[p][q] = method === 'coherent' ? c : blockCorrelation(c, received[p], reference[q], o.skipSymbols);
    }
  }
  return best;
}

interface Assignment {
  swapped: boolean;
  perPol: Record<PolName, PolAlignment>;
  reasons: string[];
}

/** The consistent assignment (straight or swapped) with the larger peaks, and why a polarization was not found. */
function assign(best: Candidates, o: Required<SyncOptions>): Assignment {
  const straight = best.x.x.correlation + best.y.y.correlation;
  const crossed = best.x.y.correlation + best.y.x.correlation;
  // Swap only on a clear margin: a tie means both assignments measure the same.
  const swapped = crossed > straight + 0.05;
  const align = (p: PolName): PolAlignment => {
    const q: PolName = swapped ? (p === 'x' ? 'y' : 'x') : p;
    return alignment(q, best[p][q], o);
  };
  const perPol = { x: align('x'), y: align('y') };
  const reasons: string[] = [];
  for (const p of ['x', 'y'] as const) {
    const a = perPol[p];
    if (a.found) continue;
    let why =
      `received ${p}: reference ${a.source} not found (correlation peak ${a.correlation.toFixed(3)}, ` +
      `threshold ${o.minCorrelation}; peak-to-floor ${a.peakToFloor.toFixed(1)}, threshold ${o.minPeakToFloor})`;
    const other = p === 'x' ? 'y' : 'x';
    const alt = alignment(a.source === 'x' ? 'y' : 'x', best[p][a.source === 'x' ? 'y' : 'x'], o);
    if (alt.found && perPol[other].source === alt.source) {
      why += `; it carries reference ${alt.source}, as received ${other} does: both outputs converged to one source (singularity)`;
    }
    reasons.push(why);
  }
  return { swapped, perPol, reasons };
}

function result(a: Assignment, method: SyncMethod, nt: number, used: number, o: Required<SyncOptions>): SyncResult {
  return {
    found: a.reasons.length === 0,
    method,
    reason: a.reasons.length === 0 ? null : a.reasons.join('; '),
    swapped: a.swapped,
    perPol: a.perPol,
    referenceLength: nt,
    symbolsUsed: used,
    skipSymbols: o.skipSymbols,
    minCorrelation: o.minCorrelation,
    minPeakToFloor: o.minPeakToFloor,
  };
}

/**
 * dₙ = zₙ·z*ₙ₋₁ for every n (d₀ = 0 for a stream; z₀·z*_{N−1} for a
 * periodic reference, `circular`).
 */
function adjacentProducts(z: ComplexArray, circular: boolean): ComplexArray {
  const n = z.length >> 1;
  const d = complexArray(n);
  for (let k = circular ? 0 : 1; k < n; k++) {
    const j = k === 0 ? n - 1 : k - 1;
    const ar = z[2 * k];
    const ai = z[2 * k + 1];
    const br = z[2 * j];
    const bi = z[2 * j + 1];
    d[2 * k] = ar * br + ai * bi;
    d[2 * k + 1] = ai * br - ar * bi;
  }
  return d;
}

/**
 * A differential candidate made usable: at its delay, the block correlation
 * Σ_b |c_b| / √(Σ|r|²·Σ|t|²) (blocks of {@link SYNC_BLOCK_SYMBOLS} from the
 * first used symbol) as its correlation, and the first block's c₀ as its
 * phase (the quarter turns and residual phase).
 */
function blockCorrelation(c: Candidate, rx: ComplexArray, ref: ComplexArray, start: number): Candidate {
  const n = rx.length >> 1;
  const nt = ref.length >> 1;
  const sign = c.conjugated ? -1 : 1;
  let j = (((start - c.delay) % nt) + nt) % nt;
  let blockRe = 0;
  let blockIm = 0;
  let firstRe = 0;
  let firstIm = 0;
  let magnitudes = 0;
  let rxEnergy = 0;
  let refEnergy = 0;
  for (let k = start, inBlock = 0; k < n; k++) {
    const zr = rx[2 * k];
    const zi = rx[2 * k + 1];
    const tr = ref[2 * j];
    const ti = sign * ref[2 * j + 1];
    // z·conj(t)
    blockRe += zr * tr + zi * ti;
    blockIm += zi * tr - zr * ti;
    rxEnergy += zr * zr + zi * zi;
    refEnergy += tr * tr + ti * ti;
    if (++j === nt) j = 0;
    if (++inBlock === SYNC_BLOCK_SYMBOLS || k === n - 1) {
      if (k - start < SYNC_BLOCK_SYMBOLS) {
        firstRe = blockRe;
        firstIm = blockIm;
      }
      magnitudes += Math.hypot(blockRe, blockIm);
      blockRe = 0;
      blockIm = 0;
      inBlock = 0;
    }
  }
  const norm = Math.sqrt(rxEnergy * refEnergy);
  return { ...c, re: firstRe, im: firstIm, correlation: norm > 0 ? Math.min(1, magnitudes / norm) : 0 };
}

function alignment(source: PolName, c: Candidate, o: Required<SyncOptions>): PolAlignment {
  const theta = Math.atan2(c.im, c.re);
  const k = ((Math.round(theta / (Math.PI / 2)) % 4) + 4) % 4;
  let residual = theta - (k * Math.PI) / 2;
  if (residual > Math.PI) residual -= 2 * Math.PI;
  if (residual < -Math.PI) residual += 2 * Math.PI;
  return {
    source,
    delay: c.delay,
    quarterTurns: k as 0 | 1 | 2 | 3,
    rotationRad: (k * Math.PI) / 2,
    conjugated: c.conjugated,
    correlation: c.correlation,
    peakToFloor: c.peakToFloor,
    residualPhaseRad: residual,
    found: c.correlation >= o.minCorrelation && c.peakToFloor >= o.minPeakToFloor,
  };
}

// The largest |c[D]|, normalized by Cauchy–Schwarz over the occupied bins, and its ratio to the rms of the others.
function peak(
  c: ComplexArray,
  start: number,
  used: number,
  foldedEnergy: number,
  ref: ComplexArray,
  conjugated: boolean,
): Candidate {
  const n = c.length >> 1;
  let bestD = 0;
  let best2 = -1;
  let total2 = 0;
  for (let d = 0; d < n; d++) {
    const m2 = c[2 * d] ** 2 + c[2 * d + 1] ** 2;
    total2 += m2;
    if (m2 > best2) {
      best2 = m2;
      bestD = d;
    }
  }
  // Reference energy over the bins the received stream occupies (all of them, or the
  // `used` bins from start mod Nt on), at the peak delay.
  let refEnergy = 0;
  const occupied = Math.min(used, n);
  for (let i = 0, m = start % n; i < occupied; i++, m = m + 1 === n ? 0 : m + 1) {
    const j = (m - bestD + n) % n;
    refEnergy += ref[2 * j] ** 2 + ref[2 * j + 1] ** 2;
  }
  const norm = Math.sqrt(foldedEnergy * refEnergy);
  const floor = Math.sqrt(Math.max(total2 - best2, 0) / (n - 1));
  const mag = Math.sqrt(best2);
  return {
    delay: bestD,
    re: c[2 * bestD],
    im: c[2 * bestD + 1],
    correlation: norm > 0 ? Math.min(1, mag / norm) : 0,
    peakToFloor: floor > 0 ? mag / floor : mag > 0 ? Number.POSITIVE_INFINITY : 0,
    conjugated,
  };
}

function energy(a: ComplexArray): number {
  let e = 0;
  for (let i = 0; i < a.length; i++) e += a[i] * a[i];
  return e;
}

function validate(options: SyncOptions): Required<SyncOptions> {
  const skipSymbols = options.skipSymbols ?? 0;
  if (!Number.isSafeInteger(skipSymbols) || skipSymbols < 0) {
    throw new OptionError(NAME, 'skipSymbols', 'a non-negative integer', skipSymbols);
  }
  const minCorrelation = options.minCorrelation ?? 0.2;
  if (!(minCorrelation > 0 && minCorrelation < 1))
    throw new OptionError(NAME, 'minCorrelation', 'a number in (0, 1)', minCorrelation);
  const minPeakToFloor = options.minPeakToFloor ?? 6;
  if (!(minPeakToFloor > 1) || !Number.isFinite(minPeakToFloor)) {
    throw new OptionError(NAME, 'minPeakToFloor', 'a finite number > 1', minPeakToFloor);
  }
  return { skipSymbols, minCorrelation, minPeakToFloor };
}

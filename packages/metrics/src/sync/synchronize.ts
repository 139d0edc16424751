import { type ComplexArray, type DualPol, fft, OptionError } from '@intradyne/core';
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
   * used, in [0, 1]; 1/√(1 + 1/SNR) for a matched stream in AWGN.
   */
  readonly correlation: number;
  /** Peak over the rms of the correlation magnitude at all other delays. */
  readonly peakToFloor: number;
  /** Phase of the peak left after the quarter turns, rad, in [−π/4, π/4]: a static carrier phase error. */
  readonly residualPhaseRad: number;
  /** True when the peak passes both thresholds. */
  readonly found: boolean;
}

/** The outcome of {@link synchronize}. */
export interface SyncResult {
  /** True when the reference was found in both polarizations; when false, no metric may be reported. */
  readonly found: boolean;
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
  const refSpectra = { x: fft(reference.x), y: fft(reference.y) };
  const refs = { x: reference.x, y: reference.y };
  const best: Record<PolName, Record<PolName, Candidate>> = {
    x: {} as Record<PolName, Candidate>,
    y: {} as Record<PolName, Candidate>,
  };
  for (const p of ['x', 'y'] as const) {
    const folded = foldOntoPeriod(received[p], o.skipSymbols, nt);
    const foldedSpectrum = fft(folded);
    const foldedEnergy = energy(folded);
    for (const q of ['x', 'y'] as const) {
      const plain = peak(
        circularCorrelation(foldedSpectrum, refSpectra[q], false),
        o.skipSymbols,
        used,
        foldedEnergy,
        refs[q],
        false,
      );
      const conj = peak(
        circularCorrelation(foldedSpectrum, refSpectra[q], true),
        o.skipSymbols,
        used,
        foldedEnergy,
        refs[q],
        true,
      );
      best[p][q] = conj.correlation > plain.correlation ? conj : plain;
    }
  }
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
  return {
    found: reasons.length === 0,
    reason: reasons.length === 0 ? null : reasons.join('; '),
    swapped,
    perPol,
    referenceLength: nt,
    symbolsUsed: used,
    skipSymbols: o.skipSymbols,
    minCorrelation: o.minCorrelation,
    minPeakToFloor: o.minPeakToFloor,
  };
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
